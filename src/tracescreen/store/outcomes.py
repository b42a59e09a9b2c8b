"""What an import reads and reports: a file ready to store, and per-file and per-import counts."""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd


@dataclass
class FileBatch:
    """One lab file read and normalised, ready to be stored (see :func:`read_file`)."""

    name: str
    path: str
    sha256: str
    size_bytes: int
    original: bytes                     # the file's bytes, zstd-compressed
    sheets: list[dict] = field(default_factory=list)
    accepted: pd.DataFrame | None = None
    rejected: pd.DataFrame | None = None


@dataclass
class FileOutcome:
    """What an import did with one file."""

    name: str
    sha256: str
    status: str                         # "stored" or "already imported"
    rows_read: int = 0
    new: int = 0
    unchanged: int = 0
    revised: int = 0
    superseded: int = 0
    rejected: int = 0
    set_aside: int = 0                  # not results to screen (lab QC, other analytes, unusable)
    note: str = ""


@dataclass
class ImportSummary:
    """Counts of one import; ``import_id`` is None when nothing was added."""

    import_id: int | None
    files: list[FileOutcome]

    def total(self, attr: str) -> int:
        """Sum of ``attr`` over the files of the import."""
        return sum(getattr(f, attr) for f in self.files)

    def lines(self) -> list[str]:
        """The import's outcome in lines of text, one per file and a total."""
        out = []
        for f in self.files:
            if f.status != "stored":
                out.append(f"{f.name}: {f.status} ({f.note}); nothing added")
            else:
                out.append(f"{f.name}: {f.rows_read} rows read: {f.new} new, {f.unchanged} unchanged, "
                           f"{f.revised} revised (superseding {f.superseded} earlier), "
                           f"{f.set_aside} set aside (not screened), {f.rejected} rejected")
        if self.import_id is None:
            out.append("Nothing imported: the workspace is unchanged.")
        else:
            out.append(f"Import {self.import_id}: {self.total('rows_read')} rows read: "
                       f"{self.total('new')} new, {self.total('unchanged')} unchanged, "
                       f"{self.total('revised')} revised, {self.total('set_aside')} set aside (not screened), "
                       f"{self.total('rejected')} rejected")
        return out
