"""Loading lab files (CSV, XLSX) into accepted, set-aside and rejected rows: the entry point.

:func:`load_results` reads each file (:mod:`tracescreen.io.files`), normalises each sheet
(:mod:`tracescreen.io.normalise`) and gathers the outcome (:mod:`tracescreen.io.results`).

Nothing is lost: every data row of every file ends up in ``accepted``, ``set_aside`` or
``rejected`` (with its reason), and rows read = accepted + set aside + rejected holds per file.
Rows whose every cell is empty are not data rows; they are counted in ``files.blank_rows``.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from tracescreen._internal.memory import release_unused
from tracescreen.io.files import LoadError, LoadOptions, RawTable, read_raw, sha256_of
from tracescreen.io.normalise import normalise
from tracescreen.io.results import (
    ACCEPTED_COLUMNS,
    SET_ASIDE_PREFIX,
    TEXT_COLUMNS,
    LoadResult,
    concat_accepted,
    empty_accepted,
    normalise_empty,
    split_set_aside,
)
from tracescreen.progress import report

__all__ = [
    "ACCEPTED_COLUMNS", "SET_ASIDE_PREFIX", "TEXT_COLUMNS", "LoadError", "LoadOptions", "LoadResult",
    "RawTable", "concat_accepted", "empty_accepted", "load_results", "normalise", "read_raw",
    "sha256_of", "split_set_aside",
]


def load_results(paths, options: LoadOptions | None = None, sites: pd.DataFrame | None = None,
                 sites_name: str = "the sites file") -> LoadResult:
    """Load lab files into accepted and rejected rows.

    Parameters
    ----------
    paths : iterable of str or Path
        CSV or XLSX files.
    options : LoadOptions
        Column mapping, date order, decimal comma, encoding, default fraction, sheet.
    sites : DataFrame, optional
        The sites table; when given, a result whose site is not in it is rejected.

    Returns
    -------
    LoadResult
    """
    opts = options or LoadOptions()
    site_ids = set(sites["site_id"]) if sites is not None else None
    accepted, rejected, files, warnings = [], [], [], []
    paths = list(paths)
    for k, path in enumerate(paths):
        report("read", k, len(paths), unit="files", detail=Path(path).name)
        raws, digest = read_raw(path, opts)
        for raw in raws:
            acc, rej = normalise(raw, opts, site_ids, sites_name)
            warnings.extend(raw.notes)
            accepted.append(acc)
            rejected.append(rej)
            files.append({"file": raw.file, "path": raw.path, "sheet": raw.sheet, "sha256": digest,
                          "header_row": raw.header_row, "rows_read": len(raw.cells),
                          "accepted": len(acc), "set_aside": int(rej["reason"].astype(str)
                                                                 .str.startswith(SET_ASIDE_PREFIX).sum()),
                          "rejected": int((~rej["reason"].astype(str).str.startswith(SET_ASIDE_PREFIX)).sum()),
                          "blank_rows": raw.blank_rows})
    report("read", len(paths), len(paths), unit="files", finished=True)
    acc = concat_accepted(accepted) if accepted else normalise_empty()
    rej = pd.concat(rejected, ignore_index=True) if rejected else pd.DataFrame(columns=["file", "sheet", "row", "reason"])
    rej, aside = split_set_aside(rej)
    release_unused()  # the files' text is gone; give its memory back before screening allocates
    return LoadResult(acc, rej, pd.DataFrame(files), warnings, aside)
