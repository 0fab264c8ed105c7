"""The recording's fingerprint: SHA-256 of its bytes."""

from __future__ import annotations

import hashlib

__all__ = ["recording_sha256"]


def recording_sha256(recording) -> str:
    """SHA-256 of the recording's bytes (a folder: every frame file, in order)."""
    if recording.files is None:
        with open(recording.path, "rb") as handle:
            return hashlib.file_digest(handle, "sha256").hexdigest()
    digest = hashlib.sha256()
    for path in recording.files:
        with open(path, "rb") as handle:
            for block in iter(lambda h=handle: h.read(1 << 20), b""):
                digest.update(block)
    return digest.hexdigest()
