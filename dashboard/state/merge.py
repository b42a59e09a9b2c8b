"""An upload joins the session's results as a workspace import does: new results are added, results
it repeats unchanged are not added again, and results it revises replace the earlier ones
(identity and values as :mod:`tracescreen.store.revisions` defines them)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from tracescreen.store.revisions import RESULT_KEY, VALUE_COLUMNS, classify, row_hashes


@dataclass(frozen=True)
class MergeCounts:
    """What an upload does to the results it joins."""

    new: int
    unchanged: int
    revised: int
    superseded: int  # earlier results replaced by the revised ones

    @property
    def added(self) -> int:
        """Results the upload adds (new and revised)."""
        return self.new + self.revised


def _hashes(frame: pd.DataFrame) -> pd.DataFrame:
    cols = {c: frame[c] if c in frame.columns else pd.Series([""] * len(frame), index=frame.index)
            for c in RESULT_KEY + VALUE_COLUMNS}
    k, v = row_hashes(pd.DataFrame(cols).reset_index(drop=True))
    return pd.DataFrame({"k": k, "v": v, "result_id": np.arange(len(frame), dtype=np.int64)})


def classify_upload(current: pd.DataFrame, incoming: pd.DataFrame,
                    current_hashes: pd.DataFrame | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Status of each incoming row (``new``, ``unchanged``, ``revised``) and the positions of the
    current rows the revised ones replace."""
    cur = _hashes(current) if current_hashes is None else current_hashes
    return classify(_hashes(incoming), cur)


def merge_upload(current: pd.DataFrame, incoming: pd.DataFrame,
                 current_hashes: pd.DataFrame | None = None) -> tuple[list[pd.DataFrame], MergeCounts]:
    """The parts of the merged results (current rows kept, then the incoming rows added) and the counts."""
    status, superseded = classify_upload(current, incoming, current_hashes)
    keep = np.ones(len(current), dtype=bool)
    keep[superseded] = False
    added = incoming.loc[status != "unchanged"]
    counts = MergeCounts(int((status == "new").sum()), int((status == "unchanged").sum()),
                         int((status == "revised").sum()), int(len(superseded)))
    return [current if keep.all() else current.loc[keep], added], counts
