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


def _hashes(frame: pd.DataFrame, blank: set) -> pd.DataFrame:
    cols = {c: pd.Series([""] * len(frame), index=frame.index) if c in blank else frame[c]
            for c in RESULT_KEY + VALUE_COLUMNS}
    k, v = row_hashes(pd.DataFrame(cols).reset_index(drop=True))
    return pd.DataFrame({"k": k, "v": v, "result_id": np.arange(len(frame), dtype=np.int64)})


def classify_upload(current: pd.DataFrame, incoming: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
    """Status of each incoming row (``new``, ``unchanged``, ``revised``) and the positions of the
    current rows the revised ones replace (a column only one side has is left out of the comparison)."""
    blank = {c for c in RESULT_KEY + VALUE_COLUMNS if c not in current.columns or c not in incoming.columns}
    return classify(_hashes(incoming, blank), _hashes(current, blank))


def merge_upload(current: pd.DataFrame, incoming: pd.DataFrame) -> tuple[list[pd.DataFrame], MergeCounts]:
    """The parts of the merged results (current rows kept, then the incoming rows added) and the counts."""
    status, superseded = classify_upload(current, incoming)
    keep = np.ones(len(current), dtype=bool)
    keep[superseded] = False
    added = incoming.loc[status != "unchanged"]
    counts = MergeCounts(int((status == "new").sum()), int((status == "unchanged").sum()),
                         int((status == "revised").sum()), int(len(superseded)))
    return [current if keep.all() else current.loc[keep], added], counts
