"""The report's first page: title, client, project, site, prepared by, checked by, version, date, notes.

Given as command options or a small YAML file (options win over the file)::

    title: Kestrel catchment metals screening, 2017-2025
    client: Kestrel Catchment Board
    project: Annual monitoring review
    site: Greywacke Hill and Ashby wellfield
    prepared_by: A. Analyst
    checked_by: B. Reviewer
    version: "1.0"
    date: 2026-01-15
    notes: Draft for the client's comments.

Every field is optional; an empty one is left off the page. The text is the user's and is shown
as text (escaped in HTML, plain runs in Word).
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from datetime import date
from pathlib import Path


class CoverError(ValueError):
    """A cover file that cannot be used (message names the file and the key)."""


@dataclass(frozen=True)
class Cover:
    """What the first page says about the report.

    Attributes
    ----------
    title, client, project, site, prepared_by, checked_by, version, date, notes : str
        As given; ``date`` defaults to today (ISO 8601) when the report is written.
    """

    title: str = ""
    client: str = ""
    project: str = ""
    site: str = ""
    prepared_by: str = ""
    checked_by: str = ""
    version: str = ""
    date: str = ""
    notes: str = ""

    def rows(self) -> list[tuple[str, str]]:
        """The filled fields in page order as (label, text), the title left out."""
        labels = {"client": "Client", "project": "Project", "site": "Site", "prepared_by": "Prepared by",
                  "checked_by": "Checked by", "version": "Version", "date": "Date", "notes": "Notes"}
        return [(label, getattr(self, key)) for key, label in labels.items() if getattr(self, key)]

    def with_defaults(self, title: str) -> Cover:
        """This cover with ``title`` where none was given and today's date where none was given."""
        return replace(self, title=self.title or title, date=self.date or date.today().isoformat())


FIELDS = tuple(f.name for f in fields(Cover))


def load_cover(path: str | Path | None = None, **options) -> Cover:
    """The cover from a YAML file (optional) and options (``None`` options are ignored; options win).

    Raises
    ------
    CoverError
        The file cannot be read, is not a mapping, or has a key that is not a cover field.
    """
    values: dict[str, str] = {}
    if path is not None:
        import yaml

        from tracescreen._internal.yamlfiles import SAFE_LOADER

        p = Path(path)
        try:
            data = yaml.load(p.read_text(encoding="utf-8"), Loader=SAFE_LOADER) or {}
        except OSError as exc:
            raise CoverError(f"{p}: cannot read the cover file ({exc.strerror or exc})") from None
        except yaml.YAMLError as exc:
            raise CoverError(f"{p}: not valid YAML ({str(exc).splitlines()[0]})") from None
        if not isinstance(data, dict):
            raise CoverError(f"{p}: expected keys such as title, client, project (a mapping), got {type(data).__name__}")
        unknown = sorted(str(k) for k in data if k not in FIELDS)
        if unknown:
            raise CoverError(f"{p}: unknown key(s) {', '.join(unknown)}; the cover's keys are {', '.join(FIELDS)}")
        values = {str(k): "" if v is None else str(v).strip() for k, v in data.items()}
    values.update({k: str(v).strip() for k, v in options.items() if v is not None and k in FIELDS})
    return Cover(**values)
