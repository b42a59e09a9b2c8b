"""Upload logic: decode a dropped lab file, cap its size, preview what the engine accepts."""

from __future__ import annotations

import base64
import binascii
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from dashboard.state.store import DataStore

RESULT_SUFFIXES = (".csv", ".xlsx")
MAPPING_SUFFIXES = (".yaml", ".yml")


class UploadError(ValueError):
    """An upload that cannot be used; the message is shown as is."""


@dataclass
class UploadPreview:
    """What the engine made of one uploaded file, before it joins the session."""

    token: str
    filename: str
    rows_read: int
    accepted: int
    rejected: pd.DataFrame
    set_aside: int = 0
    accepted_rows: pd.DataFrame | None = None  # the accepted rows as read, with their revision status
    new: int = 0
    unchanged: int = 0
    revised: int = 0
    warnings: tuple = ()

    @property
    def adds(self) -> int:
        """Results the upload would add to the session (new and revised)."""
        return self.new + self.revised


#: command-line options named in the engine's messages, in the words of the upload page
PAGE_WORDS = {
    "--columns": "a column-mapping file (the second box)",
    "--decimal-comma": "the 'Decimal comma' option",
    "--date-order": "the 'Date order' option",
    "--default-fraction": "the 'Fraction when the file does not say' option",
    "--sheet": "the 'Sheet' option",
    "--encoding": "the 'Text encoding' option",
    "--sites": "the sites file the dashboard was started with",
}


def page_words(message: str) -> str:
    """An engine message with its command-line options named as the page names them."""
    import re

    for flag, words in PAGE_WORDS.items():
        message = re.sub(re.escape(flag) + r"(\s+[A-Za-z0-9_.-]+)?", words, message) if flag == "--encoding" \
            else message.replace(flag, words)
    message = message.replace("give a column mapping with a column-mapping file", "add a column-mapping file")
    return message


def human_size(n: int) -> str:
    """Bytes as a short text (``20 MB``)."""
    for unit in ("bytes", "kB", "MB", "GB"):
        if n < 1000 or unit == "GB":
            return f"{n:.0f} {unit}" if unit == "bytes" else f"{n:.1f} {unit}"
        n /= 1000
    return f"{n} bytes"  # pragma: no cover


def decode_upload(contents: str | None, filename: str | None, max_bytes: int,
                  suffixes: tuple[str, ...] = RESULT_SUFFIXES) -> bytes:
    """Bytes of a ``dcc.Upload`` value (``data:<type>;base64,<data>``), checked and size-capped."""
    if not contents or not filename:
        raise UploadError("No file received.")
    if Path(filename).suffix.lower() not in suffixes:
        raise UploadError(f"{filename}: expected a {' or '.join(s[1:].upper() for s in suffixes)} file.")
    _, _, data = contents.partition(",")
    # the base64 text is 4/3 of the file: refuse before decoding anything too large
    if len(data) * 3 // 4 > max_bytes + 3:
        raise UploadError(
            f"{filename} is about {human_size(len(data) * 3 // 4)}; uploads are limited to "
            f"{human_size(max_bytes)}. Split the file, or start the dashboard on it with --results."
        )
    try:
        raw = base64.b64decode(data, validate=True)
    except (binascii.Error, ValueError) as exc:
        raise UploadError(f"{filename}: the upload could not be decoded ({exc}).") from exc
    if len(raw) > max_bytes:
        raise UploadError(f"{filename} is {human_size(len(raw))}; uploads are limited to {human_size(max_bytes)}.")
    if not raw:
        raise UploadError(f"{filename} is empty.")
    return raw


def preview_upload(store: DataStore, contents: str | None, filename: str | None,
                   mapping_contents: str | None = None, mapping_filename: str | None = None,
                   reading: dict | None = None, dataset_key: str | None = None) -> UploadPreview:
    """Keep the upload on disk and run the engine's loader on it (with the optional mapping and the
    page's reading options); compare its results with the session's (new, unchanged, revised).

    Raises :class:`UploadError` for a file that cannot be used at all (the loader's own message, in
    the page's words), or a file whose exact bytes are already in the data (by SHA-256).
    """
    from tracescreen._internal.hashing import sha256_hex

    raw = decode_upload(contents, filename, store.max_upload_bytes)
    name = Path(filename).name
    same = store.duplicate_of(sha256_hex(raw), dataset_key)
    if same:
        raise UploadError(f"{name} is already in the data: it has exactly the same content as {same} "
                          "(the same SHA-256). Nothing was added. A corrected file from the laboratory "
                          "(different content) is compared result by result instead.")
    mapping = None
    if mapping_contents:
        mapping = decode_upload(mapping_contents, mapping_filename, store.max_upload_bytes, MAPPING_SUFFIXES)
    token = store.save_upload(name, raw, mapping, reading)
    try:
        loaded = store.load_upload(token)
    except (ValueError, OSError, KeyError) as exc:
        raise UploadError(page_words(str(exc).strip()) or f"{filename}: could not be read.") from exc
    from dashboard.state.frames import accepted_from_session, engine_frame
    from dashboard.state.merge import classify_upload

    session = store.get(dataset_key)
    status, superseded = classify_upload(accepted_from_session(session), engine_frame(loaded.accepted))
    accepted, rejected = loaded.accepted.assign(revision=status), loaded.rejected
    n_aside = len(loaded.set_aside) if loaded.set_aside is not None else 0
    return UploadPreview(token, name, len(accepted) + len(rejected) + n_aside, len(accepted), rejected,
                         set_aside=n_aside, accepted_rows=accepted, new=int((status == "new").sum()),
                         unchanged=int((status == "unchanged").sum()), revised=int((status == "revised").sum()),
                         warnings=tuple(page_words(str(w)) for w in getattr(loaded, "warnings", ()) or ()))


def add_token(dataset_key: str | None, token: str) -> str:
    """The dataset key after adding an upload (adding the same upload twice is a no-op)."""
    key = dataset_key or "base"
    parts = key.split("+")
    return key if token in parts[1:] else "+".join([*parts, token])


