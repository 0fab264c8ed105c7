"""The skip check's cheap first test: a rewritten file is never taken as unchanged.

POSIX (IEEE Std 1003.1-2017, <sys/stat.h> and utimensat) lets a user set a
file's modification time but not its change time, which every write moves;
``touch -r`` and ``cp -p`` restore the modification time only.
"""

import os
import time

from dropkin.campaign._task import input_fingerprint


def test_a_rewrite_keeping_size_and_modification_time_changes_the_fingerprint(tmp_path):
    path = tmp_path / "shot.tif"
    path.write_bytes(b"a" * 4096)
    before = os.stat(path)
    first = input_fingerprint(path)
    assert input_fingerprint(path) == first  # nothing done: the hash is reused
    time.sleep(0.05)  # past the file system's clock tick, so the change time moves
    os.utime(path, ns=(before.st_atime_ns, before.st_mtime_ns + 10**9))  # ctime moves on
    with open(path, "r+b") as handle:  # same inode, same size, other bytes
        handle.write(b"b" * 4096)
    os.utime(path, ns=(before.st_atime_ns, before.st_mtime_ns))
    after = os.stat(path)
    assert (after.st_size, after.st_mtime_ns) == (before.st_size, before.st_mtime_ns)
    assert input_fingerprint(path) != first


def test_a_replaced_frame_file_in_a_folder_changes_the_fingerprint(tmp_path):
    folder = tmp_path / "frames"
    folder.mkdir()
    for k in range(3):
        (folder / f"f{k}.png").write_bytes(bytes([k]) * 100)
    first = input_fingerprint(folder)
    stat = os.stat(folder / "f1.png")
    replacement = tmp_path / "other.png"
    replacement.write_bytes(b"z" * 100)
    os.utime(replacement, ns=(stat.st_atime_ns, stat.st_mtime_ns))
    os.replace(replacement, folder / "f1.png")  # another inode, same name, size and mtime
    assert input_fingerprint(folder) != first
