"""SHA-256 (FIPS 180-4) of bytes and files, as hex: one way to checksum inputs everywhere."""

from __future__ import annotations

import hashlib
from pathlib import Path


def sha256_hex(data: bytes) -> str:
    """SHA-256 of ``data`` as 64 hex digits.

    Examples
    --------
    >>> sha256_hex(b"abc")[:16]
    'ba7816bf8f01cfea'
    """
    return hashlib.sha256(data).hexdigest()


def file_sha256(path: str | Path) -> str:
    """SHA-256 of a file's bytes, as hex."""
    return sha256_hex(Path(path).read_bytes())
