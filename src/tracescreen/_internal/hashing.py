"""SHA-256 (FIPS 180-4) of bytes and files, as hex: one way to checksum inputs everywhere."""

from __future__ import annotations

import hashlib
from pathlib import Path

#: Bytes read at a time by :func:`file_sha256` (1 MiB): memory stays small whatever the file's size.
CHUNK_BYTES = 1 << 20


def sha256_hex(data: bytes) -> str:
    """SHA-256 of ``data`` as 64 hex digits.

    Examples
    --------
    >>> sha256_hex(b"abc")[:16]
    'ba7816bf8f01cfea'
    """
    return hashlib.sha256(data).hexdigest()


def file_sha256(path: str | Path, chunk_bytes: int = CHUNK_BYTES) -> str:
    """SHA-256 of a file's bytes, as hex; the file is read ``chunk_bytes`` at a time (never whole)."""
    digest = hashlib.sha256()
    buffer = bytearray(chunk_bytes)
    view = memoryview(buffer)
    with open(path, "rb", buffering=0) as f:
        while n := f.readinto(buffer):
            digest.update(view[:n])
    return digest.hexdigest()
