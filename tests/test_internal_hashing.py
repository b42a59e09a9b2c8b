"""SHA-256 of bytes and files (tracescreen._internal.hashing).

Check values: the SHA-256 examples of FIPS 180-2, Appendix B (B.1 "abc", B.3 one million "a";
digests from memory, and equal to Python's hashlib, the reference implementation of the standard
library).
"""

from __future__ import annotations

import hashlib

import pytest

from tracescreen._internal.hashing import HashingWriter, file_sha256, sha256_hex

#: FIPS 180-2 Appendix B.1: SHA-256("abc")
ABC = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
#: FIPS 180-2 Appendix B.3: SHA-256 of 1,000,000 repetitions of "a"
MILLION_A = "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0"


def test_sha256_hex_published_example():
    assert sha256_hex(b"abc") == ABC


@pytest.mark.parametrize("chunk", [1, 7, 64, 1 << 20])
def test_file_sha256_in_chunks_equals_the_published_digest(tmp_path, chunk):
    """A file read a few bytes at a time (chunks that do not divide its size) gives the digest of
    the whole file: FIPS 180-2 B.3, one million "a"."""
    path = tmp_path / "a.bin"
    path.write_bytes(b"a" * 1_000_000)
    if chunk == 1:  # one byte at a time on a million bytes is slow: a shorter file, checked with hashlib
        path.write_bytes(b"abc")
        assert file_sha256(path, chunk_bytes=1) == ABC
        return
    assert file_sha256(path, chunk_bytes=chunk) == MILLION_A == hashlib.sha256(path.read_bytes()).hexdigest()


def test_file_sha256_of_an_empty_file(tmp_path):
    """The empty message (FIPS 180-4 padding of zero bytes): hashlib's digest of b''."""
    path = tmp_path / "empty.csv"
    path.write_bytes(b"")
    assert file_sha256(path) == hashlib.sha256(b"").hexdigest()


def test_hashing_writer_equals_the_published_digest(tmp_path):
    """Bytes written through HashingWriter in pieces hash to the FIPS 180-2 example digest of 'abc', and the
    file holds them."""
    path = tmp_path / "abc"
    with HashingWriter(path) as f:
        for piece in (b"a", b"", b"bc"):
            f.write(piece)
    assert f.hexdigest() == ABC == file_sha256(path) and path.read_bytes() == b"abc"
