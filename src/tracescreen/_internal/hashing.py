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


class HashingWriter:
    """A binary file opened for writing that hashes (SHA-256) every byte written through it.

    A table written part by part gets its checksum as it is written, so the run's manifest need not
    read the file again (:meth:`hexdigest` equals :func:`file_sha256` of the closed file). Writers that
    take a file object (pyarrow's ``ParquetWriter``) can be given one; they do not close it.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "t.txt"
    >>> with HashingWriter(path) as f:
    ...     _ = f.write(b"abc")
    >>> f.hexdigest() == file_sha256(path) == sha256_hex(b"abc")
    True
    """

    def __init__(self, path: str | Path):
        self._file = open(path, "wb")
        self._digest = hashlib.sha256()

    @property
    def closed(self) -> bool:
        return self._file.closed

    def write(self, data) -> int:
        self._digest.update(data)
        return self._file.write(data)

    def tell(self) -> int:
        return self._file.tell()

    def flush(self) -> None:
        self._file.flush()

    def close(self) -> None:
        self._file.close()

    def hexdigest(self) -> str:
        """SHA-256 of everything written so far, as hex."""
        return self._digest.hexdigest()

    def __enter__(self) -> "HashingWriter":
        return self

    def __exit__(self, *exc) -> None:
        self.close()
