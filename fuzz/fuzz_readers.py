"""A fuzzing campaign over dropkin's frame readers (not part of the test run).

Every reader gets the same number of inputs, each a file (or the one damaged
file of a folder) made by the fuzzer from seeds that reference writers
produce here (tifffile, OpenCV). The only outcomes allowed are a recording
read to the end or one ``DropkinError`` whose message is one line naming the
file. Anything else is a crash: another exception, a message of several
lines or without the file, the process killed (a native crash), an input
that takes longer than ``--timeout`` seconds (a hang) or a process that
grows past ``--memory`` MB (an allocation the header should have prevented).
Crashing inputs are saved under ``--crashes`` with what happened.

Engines: ``atheris`` (coverage-guided libFuzzer over dropkin's and tifffile's
Python code; ``pip install -e ".[fuzz]"``), used when it is installed, and
``random`` (seeded mutations: bit flips, truncations, splices, random bytes,
random 32-bit values), always available.

Each reader runs in its own child process; the parent prints, per reader, the
inputs tried, the number refused with a DropkinError, the number read, and the
crashes found::

    python fuzz/fuzz_readers.py --inputs 20000
    python fuzz/fuzz_readers.py --inputs 2000 --readers tiff-stack,png --engine random
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time
import traceback
from pathlib import Path

#: Readers and the name the fuzzed file gets (a folder reader's file sits in a folder).
READERS = {
    "tiff-stack": "input.tif",  # open_recording on a multi-page TIFF
    "tiff-frame": "frames/frame_1.tif",  # a TIFF frame in a folder, after a PNG frame
    "png": "frames/frame_1.png",  # a PNG frame in a folder, after a sound one
    "bmp": "frames/frame_1.bmp",
    "jpeg": "frames/frame_1.jpg",
    "video": "input.avi",  # OpenCV's FFmpeg back end
    "cine": "input.cine",  # dropkin's own .cine reader
    "cih": "input.cih",  # a .cih header, with a sound .mraw file beside it
}
SUMMARY_EVERY = 100  # inputs between two summaries written by a child


# -- seeds: sound files from reference writers --------------------------------


def write_seeds(reader: str, folder: Path) -> None:
    """Write a few sound files of `reader`'s kind into `folder` (the seed corpus)."""
    import cv2
    import numpy as np
    import tifffile

    rng = np.random.default_rng(7)
    folder.mkdir(parents=True, exist_ok=True)
    frames8 = rng.integers(0, 256, size=(3, 12, 10), dtype=np.uint8)
    frames12 = rng.integers(0, 4096, size=(3, 12, 10), dtype=np.uint16)
    scratch = folder / ".scratch"
    scratch.mkdir(exist_ok=True)

    def keep(name: str, path: Path) -> None:
        shutil.move(path, folder / name)

    if reader in ("tiff-stack", "tiff-frame"):
        stack = frames12 if reader == "tiff-stack" else frames12[:1]
        options = {
            "contiguous": {"photometric": "minisblack"},
            "zlib": {"photometric": "minisblack", "compression": "zlib"},
            "big-endian": {"photometric": "minisblack", "byteorder": ">"},
            "bigtiff": {"photometric": "minisblack", "bigtiff": True},
            "imagej": {"imagej": True, "metadata": {"finterval": 1e-4, "axes": "TYX"}},
            "ome": {"ome": True, "metadata": {"axes": "TYX", "TimeIncrement": 0.05}},
            "rgb": {"photometric": "rgb"},
        }
        for name, option in options.items():
            data = stack
            if name == "rgb":
                data = rng.integers(0, 256, size=(*stack.shape, 3), dtype=np.uint8)
            if name in ("imagej", "ome") and reader == "tiff-frame":
                continue
            tifffile.imwrite(scratch / "s.tif", data, **option)
            keep(f"{name}.tif", scratch / "s.tif")
        assert cv2.imwritemulti(str(scratch / "s.tif"), list(stack))  # LZW by libtiff
        keep("lzw.tif", scratch / "s.tif")
    elif reader in ("png", "bmp", "jpeg"):
        suffix = {"png": ".png", "bmp": ".bmp", "jpeg": ".jpg"}[reader]
        images = [frames8[0], np.dstack([frames8[0]] * 3)]
        if reader == "png":
            images.append(frames12[0])
        for k, image in enumerate(images):
            assert cv2.imwrite(str(scratch / f"s{suffix}"), image)
            keep(f"seed{k}{suffix}", scratch / f"s{suffix}")
    elif reader == "cine":
        for name, packed in (("u16", False), ("p12", True)):
            (folder / f"{name}.cine").write_bytes(_cine_seed(frames12, packed=packed))
    elif reader == "cih":
        (folder / "seed.cih").write_text(_CIH_SEED)
    elif reader == "video":
        writer = cv2.VideoWriter(
            str(scratch / "s.avi"), cv2.VideoWriter_fourcc(*"MJPG"), 30.0, (32, 24)
        )
        for k in range(4):
            writer.write(cv2.cvtColor(np.full((24, 32), 40 * k, np.uint8), cv2.COLOR_GRAY2BGR))
        writer.release()
        keep("mjpg.avi", scratch / "s.avi")
    shutil.rmtree(scratch)


_CIH_SEED = (
    "#Camera Information Header\nRecord Rate(fps) : 60000\nTotal Frame : 3\n"
    "Start Frame : -1\nCorrect Trigger Frame : 0\nSave Step : 36\nImage Width : 10\n"
    "Image Height : 12\nColor Type : Mono\nColor Bit : 12\nFile Format : MRaw\n"
    "EffectiveBit Depth : 12\nEffectiveBit Side : Lower\n"
)


def _cine_seed(frames, *, packed: bool) -> bytes:
    """A gray .cine file written by hand from the format's layout (no library writes one):
    file header, bitmap header, a setup block (mark, length, frame rate, bits), a
    time-stamp block, the image offsets, then each image behind its annotation."""
    import struct

    import numpy as np

    from dropkin.recording._camera import pack12

    count, rows, cols = frames.shape
    setup = bytearray(13484)
    setup[140:144] = b"ST" + struct.pack("<H", len(setup))
    struct.pack_into("<I", setup, 768, 60000)
    struct.pack_into("<I", setup, 896, 12)
    stamps = (np.arange(count, dtype=np.uint64) * 71583 + (1 << 40)).astype("<u8").tobytes()
    block = struct.pack("<IHH", 8 + len(stamps), 1002, 0) + stamps
    images = [pack12(f) if packed else f[::-1].astype("<u2").tobytes() for f in frames]
    table_at = 84 + len(setup) + len(block)
    first = table_at + 8 * count
    offsets = [first + k * (8 + len(images[0])) for k in range(count)]
    header = struct.pack(
        "<2sHHHiIiIIIIQ", b"CI", 44, 0, 1, -1, count, -1, count, 44, 84, table_at, 1 << 40
    )
    bitmap = struct.pack(
        "<IiiHHIIiiII", 40, cols, rows, 1, 16, 1024 if packed else 0, len(images[0]), 0, 0, 0, 0
    )
    body = b"".join(struct.pack("<II", 8, len(i)) + i for i in images)
    return header + bitmap + bytes(setup) + block + struct.pack(f"<{count}q", *offsets) + body


# -- one input --------------------------------------------------------------------


class Campaign:
    """Counts and saves what the inputs of one reader give (in the child process)."""

    def __init__(self, reader: str, work: Path, crashes: Path, inputs: int, summary: Path):
        self.reader, self.crashes, self.inputs, self.summary = reader, crashes, inputs, summary
        self.target = work / READERS[reader]
        self.target.parent.mkdir(parents=True, exist_ok=True)
        if reader == "cih":  # the header is fuzzed; the frames beside it are sound
            (work / "input.mraw").write_bytes(bytes(3 * 12 * 10 * 3 // 2))
        if self.target.parent != work:  # a folder: a sound PNG frame comes first
            import cv2
            import numpy as np

            first = np.zeros((12, 10), np.uint8)
            assert cv2.imwrite(str(self.target.parent / "frame_0.png"), first)
        self.source = self.target if self.target.parent == work else self.target.parent
        self.counts = {"tried": 0, "refused": 0, "read": 0, "crashes": 0}
        self.kinds: dict[str, str] = {}  # crash signature -> saved input
        self.started = time.perf_counter()

    def one(self, data: bytes) -> None:
        from dropkin.errors import DropkinError
        from dropkin.recording import open_recording

        self.target.write_bytes(data)
        crash = None
        try:
            with open_recording(self.source, frame_rate=1.0) as rec:
                for _ in rec.chunks(8):
                    pass
            self.counts["read"] += 1
        except DropkinError as exc:
            text = str(exc)
            if "\n" in text or str(self.target) not in text:
                crash = f"bad message: {text[:300]}"
            else:
                self.counts["refused"] += 1
        except Exception:  # anything else is what the campaign looks for
            crash = traceback.format_exc(limit=12)
        if crash is not None:
            self.save(data, crash)
        self.counts["tried"] += 1
        if self.counts["tried"] % SUMMARY_EVERY == 0 or self.counts["tried"] >= self.inputs:
            self.write_summary()
        if self.counts["tried"] >= self.inputs:
            os._exit(0)  # libFuzzer never returns; the summary is written

    def save(self, data: bytes, what: str) -> None:
        self.counts["crashes"] += 1
        last = what.strip().splitlines()[-1][:160]
        digest = hashlib.sha1(data).hexdigest()[:16]
        self.crashes.mkdir(parents=True, exist_ok=True)
        path = self.crashes / f"{self.reader}-{digest}{Path(READERS[self.reader]).suffix}"
        path.write_bytes(data)
        path.with_suffix(path.suffix + ".txt").write_text(what)
        self.kinds.setdefault(last, str(path))

    def write_summary(self) -> None:
        seconds = time.perf_counter() - self.started
        record = {**self.counts, "seconds": seconds, "kinds": self.kinds}
        self.summary.write_text(json.dumps(record))


# -- engines (in the child) ---------------------------------------------------------


def run_atheris(campaign: Campaign, corpus: Path, timeout: int, memory: int) -> None:
    import atheris

    with atheris.instrument_imports(include=["dropkin", "tifffile"]):
        import tifffile  # noqa: F401

        import dropkin.recording  # noqa: F401  (instrumented for coverage)
    argv = [
        sys.argv[0],
        str(corpus),
        f"-timeout={timeout}",
        f"-rss_limit_mb={memory}",
        f"-artifact_prefix={campaign.crashes}/{campaign.reader}-",
        "-print_final_stats=0",
    ]
    atheris.Setup(argv, campaign.one)
    atheris.Fuzz()


def run_random(campaign: Campaign, corpus: Path, timeout: int, seed: int) -> None:
    import numpy as np

    seeds = [p.read_bytes() for p in sorted(corpus.iterdir()) if p.is_file()]
    rng = np.random.default_rng(seed)

    def alarm(signum, frame):
        raise TimeoutError(f"an input took more than {timeout} s")

    signal.signal(signal.SIGALRM, alarm)
    while True:
        data = bytearray(seeds[rng.integers(len(seeds))])
        for _ in range(int(rng.integers(1, 4))):
            choice = rng.integers(6)
            if choice == 0 and data:  # flip a bit
                data[rng.integers(len(data))] ^= 1 << int(rng.integers(8))
            elif choice == 1 and data:  # cut
                del data[rng.integers(len(data)) :]
            elif choice == 2:  # random bytes somewhere
                at = int(rng.integers(len(data) + 1))
                data[at:at] = rng.bytes(int(rng.integers(1, 16)))
            elif choice == 3 and len(data) > 8:  # a random 32-bit value (a size, an offset)
                at = int(rng.integers(len(data) - 4))
                data[at : at + 4] = int(rng.integers(2**32)).to_bytes(4, "little")
            elif choice == 4:  # splice another seed's tail
                other = seeds[rng.integers(len(seeds))]
                at = int(rng.integers(len(data) + 1))
                data[at:] = other[rng.integers(len(other) + 1) :]
            else:  # bytes that mean something to the formats
                at = int(rng.integers(len(data) + 1))
                data[at:at] = bytes(rng.choice([0x00, 0xFF, 0x7F, 0x80], size=4))
        signal.alarm(timeout)  # a hang raises TimeoutError inside one(): a crash
        try:
            campaign.one(bytes(data))
        finally:
            signal.alarm(0)


def child(args) -> int:
    import resource

    # The work folder is the parent's (inside its temporary folder): a child
    # ends with os._exit or is killed by libFuzzer, and cleans up nothing.
    campaign = Campaign(args.child, args.work, args.crashes, args.inputs, args.summary)
    campaign.write_summary()
    if args.engine == "random":  # the limit libFuzzer's -rss_limit_mb gives atheris
        limit = args.memory * 2**20 + _vm_bytes()
        resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
        run_random(campaign, args.corpus, args.timeout, args.seed)
    else:
        run_atheris(campaign, args.corpus, args.timeout, args.memory)
    return 0


def _vm_bytes() -> int:
    with open("/proc/self/status") as status:
        for line in status:
            if line.startswith("VmSize:"):
                return int(line.split()[1]) * 1024
    return 0


# -- the parent -----------------------------------------------------------------------


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--inputs", type=int, default=20000, help="inputs per reader")
    parser.add_argument("--readers", default=",".join(READERS), help="comma-separated")
    parser.add_argument("--engine", choices=["auto", "atheris", "random"], default="auto")
    parser.add_argument("--crashes", type=Path, default=Path("fuzz/crashes"))
    parser.add_argument("--timeout", type=int, default=20, help="seconds per input (a hang)")
    parser.add_argument("--memory", type=int, default=2048, help="MB of growth allowed")
    parser.add_argument("--seed", type=int, default=1, help="for the random engine")
    parser.add_argument("--child", help=argparse.SUPPRESS)
    parser.add_argument("--corpus", type=Path, help=argparse.SUPPRESS)
    parser.add_argument("--summary", type=Path, help=argparse.SUPPRESS)
    parser.add_argument("--work", type=Path, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    args.crashes = args.crashes.resolve()
    if args.child:
        return child(args)

    engine = args.engine
    if engine == "auto":
        try:
            import atheris  # noqa: F401

            engine = "atheris"
        except ImportError:
            engine = "random"
    readers = [r for r in args.readers.split(",") if r]
    unknown = set(readers) - set(READERS)
    if unknown:
        parser.error(f"unknown readers {sorted(unknown)}; choose from {list(READERS)}")
    args.crashes.mkdir(parents=True, exist_ok=True)
    print(f"engine {engine}, {args.inputs} inputs per reader, crashes saved in {args.crashes}")
    found = 0
    with tempfile.TemporaryDirectory(prefix="dropkin-fuzz-") as scratch:
        for reader in readers:
            corpus = Path(scratch) / reader / "corpus"
            write_seeds(reader, corpus)
            summary = Path(scratch) / reader / "summary.json"
            command = [sys.executable, __file__, "--child", reader, "--corpus", str(corpus)]
            command += ["--summary", str(summary), "--inputs", str(args.inputs)]
            command += ["--crashes", str(args.crashes), "--timeout", str(args.timeout)]
            command += ["--memory", str(args.memory), "--engine", engine]
            command += ["--seed", str(args.seed), "--work", str(Path(scratch) / reader / "work")]
            done = subprocess.run(
                command, capture_output=True, text=True, errors="replace", check=False
            )
            found += report(reader, done, summary, args.inputs)
    print(f"{found} crash(es) in all" if found else "no crash found")
    return 1 if found else 0


def report(reader: str, done, summary: Path, inputs: int) -> int:
    """Print one reader's counts; return the number of crashes (a dead child counts one)."""
    record = json.loads(summary.read_text()) if summary.exists() else {}
    counts = {k: record.get(k, 0) for k in ("tried", "refused", "read", "crashes")}
    line = (
        f"{reader:11s} tried {counts['tried']:6d}  refused {counts['refused']:6d}  "
        f"read {counts['read']:6d}  crashes {counts['crashes']:3d}  "
        f"({record.get('seconds', 0):.0f} s)"
    )
    print(line)
    for what, path in record.get("kinds", {}).items():
        print(f"    {what}\n      input: {path}")
    crashes = counts["crashes"]
    if done.returncode != 0 or counts["tried"] < inputs:
        crashes += 1  # killed: a native crash, a hang or memory (libFuzzer says which)
        tail = [ln for ln in done.stderr.splitlines() if "==" in ln or "ERROR" in ln][-3:]
        print(f"    child ended early (exit {done.returncode}): " + " | ".join(tail)[-400:])
    return crashes


if __name__ == "__main__":
    sys.exit(main())
