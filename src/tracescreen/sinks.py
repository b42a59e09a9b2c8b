"""Sinks of a run in parts (:mod:`tracescreen.streaming`): where each part's tables go.

* :class:`MemorySink` joins the parts into whole tables (the pipeline's :class:`~tracescreen.pipeline.Results`);
* :class:`FileSink` streams each table to its file (:class:`tracescreen.report.streams.TableStream`), on a
  background thread while the run computes the next part (:class:`~tracescreen._internal.parallel.BackgroundWork`).

``sink.add(name, frame, position)`` takes one part of table ``name``; ``position`` (screening only) gives each
row's result as its position in the run's accepted results.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

#: The attributes of :class:`tracescreen.pipeline.Results` that hold part tables, and the tables.
RESULTS = {"screened": "screening", "periods": "periods", "summary": "summary", "exceedances": "exceedances",
           "trends": "trends", "retest": "retest"}


class MemorySink:
    """Collects the parts of each table and joins them (text stays categorical)."""

    def __init__(self):
        self.parts: dict[str, list[pd.DataFrame]] = {}
        self.positions: list[np.ndarray] = []

    def add(self, name: str, frame: pd.DataFrame, position: np.ndarray | None = None) -> None:
        """Keep one part of table ``name``."""
        if name == "screening":
            self.positions.append(np.arange(len(frame)) if position is None else position)
        self.parts.setdefault(name, []).append(frame)

    def table(self, name: str) -> pd.DataFrame | None:
        """Table ``name`` whole (None when no part had it); the screening rows in input order."""
        from tracescreen.screening.parts import join_frames

        parts = self.parts.pop(name, None)
        if parts is None:
            return None
        if len(parts) > 1:
            kept = [p for p in parts if len(p)] or parts[:1]
            joined = join_frames(kept, consume=True)
        else:
            joined = parts[0]
        if name == "screening" and len(self.positions) > 1:
            position = np.concatenate(self.positions)
            if not (np.diff(position) >= 0).all():
                joined = joined.iloc[np.argsort(position, kind="stable")].reset_index(drop=True)
        if name == "retest" and len(parts) > 1:
            from tracescreen.retest.listing import sort_retest

            joined = sort_retest(joined)
        return joined


class FileSink:
    """Streams each table to ``out/<table>.<fmt>`` as its parts come (:class:`~tracescreen.report.streams.TableStream`).

    Keeps only what the command prints: the status counts of the screening rows and the retest
    reasons' counts.

    Parameters
    ----------
    out : path
        Output folder.
    fmt : str
        ``csv``, ``parquet`` or ``xlsx``.
    days : set of str, optional
        Date columns written as days (the others with their time); default: decided per table from its first part.
    names : dict, optional
        File stem of each table (default: the table's name).
    path_for : callable, optional
        ``path_for(table, file_name)``: where a table's file is written (default: ``out/file_name``); an
        :class:`~tracescreen.report.output_folder.OutputFolder`'s ``reserve`` stages it with the run's other outputs.
    """

    def __init__(self, out, fmt: str, days: set[str] | None = None, names: dict | None = None, path_for=None):
        from pathlib import Path

        self.out, self.fmt, self.days = Path(out), fmt, days
        self.names = names or {}
        self.path_for = path_for or (lambda name, filename: self.out / filename)
        self.streams: dict[str, Any] = {}
        self.status_counts = pd.Series(dtype="int64")
        self.reason_counts = pd.Series(dtype="int64")

    #: Parts are written on a background thread while the next part is computed
    #: (:class:`~tracescreen._internal.parallel.BackgroundWork`).
    background = True

    def add(self, name: str, frame: pd.DataFrame, position: np.ndarray | None = None) -> None:
        """Append one part of table ``name`` to its file (``position`` is not needed: parts are written as they come)."""
        from tracescreen.report.formats import file_name
        from tracescreen.report.streams import TableStream

        if name not in self.streams:
            stem = self.names.get(name, name)
            self.streams[name] = TableStream(self.path_for(name, file_name(stem, self.fmt)), self.fmt, name=stem,
                                             days=self.days)
        self.streams[name].write(frame)
        if name == "screening":
            self.status_counts = self.status_counts.add(frame["status"].value_counts(), fill_value=0)
        elif name == "retest":
            self.reason_counts = self.reason_counts.add(frame["reason"].value_counts(sort=False), fill_value=0)

    def close(self) -> dict:
        """Finish every file; returns the closed streams by table (``path``, ``rows``, ``warning``)."""
        for s in self.streams.values():
            s.close()
        return self.streams

    def abort(self) -> None:
        """Remove every unfinished file (after an error)."""
        for s in self.streams.values():
            s.abort()
