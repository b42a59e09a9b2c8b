"""The column mapping (``--columns FILE``): how to read a layout the tool does not know.

One YAML file, every section optional (README, "Column mapping", has a worked example)::

    columns:        # file header -> tracescreen column; a mapped header always wins
      Point Ref: site_id
    ignore:         # headers never read, even where they look like a known column
      - DL
    defaults:       # a constant for a column the file lacks
      lab: Eastbank Analytical
    combine:        # one column from several, joined in order (date, time, time zone)
      sampled_at: [Sample Date, Sample Time, TZ]
    values:         # per tracescreen column: the file's word -> the tool's word
      fraction: {T: total, L: dissolved}
    derive:         # a column from another by a regular expression
      site_id: {from: Sample Name, pattern: '^(RM [0-9.]+)'}
    date_order: mdy # how this layout writes dates (iso, dmy, mdy)

A mapping written for the first version (``columns`` and ``defaults`` only) reads the same.
Everything except ``columns`` applies only to files that have at least one header the mapping
names, so one mapping can serve a run that mixes several laboratories' layouts.

:func:`load_column_map` checks the whole file and names the file, section, key and problem of any
mistake (:class:`ColumnMapError`). :func:`column_text` gives one tracescreen column of a raw table
as :class:`~tracescreen._internal.coded.CodedText`, with derivation, combination, defaults and
value translation applied, each on distinct values only.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen._internal.coded import CodedText, joint_codes
from tracescreen._internal.yamlfiles import YamlError, read_yaml
from tracescreen.io import codelists
from tracescreen.io.columns import CANONICAL, header_key

SECTIONS = ("columns", "ignore", "defaults", "combine", "values", "derive", "date_order")

#: The words ``values`` may translate into, for the columns whose words are a closed list
#: (other columns take any text).
VALUE_WORDS: dict[str, tuple[str, ...]] = {
    "fraction": ("total", "dissolved"),
    "sample_type": ("sample", "field_duplicate", "field_blank", "lab_blank", "equipment_blank", "trip_blank",
                    "lab_qc", "reference_material", "field_measurement"),
}
#: Columns whose translated words must be codes the tool's vocabularies know (or empty).
VALUE_CODE_LISTS = {"limit_type": "limit_types", "limit_type_2": "limit_types", "result_status": "result_status",
                    "review_status": "result_status", "medium": "media"}
DATE_COLUMNS = ("sampled_at", "analysed_at")


class ColumnMapError(ValueError):
    """A column-mapping file that cannot be used (the message names file, section, key and problem)."""


@dataclass(frozen=True)
class Derivation:
    """A column taken from another by a regular expression: the named group ``value``, else the
    first group, else the whole match; rows where the pattern does not match keep the column's own
    text (or ``otherwise``)."""

    source: str
    pattern: re.Pattern
    otherwise: str | None = None


@dataclass(frozen=True)
class ColumnMap:
    """A user's column mapping (see the module docstring for the file form)."""

    columns: dict[str, str] = field(default_factory=dict)
    defaults: dict[str, str] = field(default_factory=dict)
    path: str = ""
    ignore: tuple[str, ...] = ()
    combine: dict[str, tuple[str, ...]] = field(default_factory=dict)
    values: dict[str, dict[str, str]] = field(default_factory=dict)
    derive: dict[str, Derivation] = field(default_factory=dict)
    date_order: str | None = None

    def headers(self) -> set[str]:
        """Every file header the mapping names (compared by :func:`header_key`)."""
        named = list(self.columns) + list(self.ignore) + [d.source for d in self.derive.values()]
        named += [h for hs in self.combine.values() for h in hs]
        return {header_key(h) for h in named}


def _fail(path: Path, where: str, problem: str) -> ColumnMapError:
    return ColumnMapError(f"{path}: {where}: {problem}")


def _canonical(path: Path, where: str, name) -> str:
    if name not in CANONICAL:
        raise _fail(path, where, f"unknown tracescreen column '{name}'; known: {', '.join(CANONICAL)}")
    return str(name)


def _text(v) -> str:
    return "" if v is None else str(v)


def _mapping_of(path: Path, data: dict, section: str) -> dict:
    got = data.get(section) or {}
    if not isinstance(got, dict):
        raise _fail(path, section, "must be a mapping (key: value lines)")
    return got


def load_column_map(path: str | Path) -> ColumnMap:
    """Read and check a ``--columns`` YAML file (see the module docstring for its form)."""
    p = Path(path)
    try:
        data = read_yaml(p)  # repeated keys, aliases and object tags are refused
    except FileNotFoundError:
        raise ColumnMapError(f"{p}: column-mapping file not found") from None
    except YamlError as exc:
        raise ColumnMapError(str(exc)) from None
    if not isinstance(data, dict):
        raise ColumnMapError(f"{p}: expected a mapping with sections {', '.join(SECTIONS)}")
    unknown = sorted(set(map(str, data)) - set(SECTIONS))
    if unknown:
        raise ColumnMapError(f"{p}: unknown section(s) {', '.join(unknown)}; allowed: {', '.join(SECTIONS)}")

    columns = {str(h): _canonical(p, f"columns > {h}", c) for h, c in _mapping_of(p, data, "columns").items()}
    defaults = {_canonical(p, f"defaults > {c}", c): _text(v) for c, v in _mapping_of(p, data, "defaults").items()}

    ignore = data.get("ignore") or []
    if isinstance(ignore, str) or not isinstance(ignore, list):
        raise _fail(p, "ignore", "must be a list of file headers")
    clash = sorted({header_key(h) for h in ignore} & {header_key(h) for h in columns})
    if clash:
        raise _fail(p, "ignore", f"header(s) {', '.join(clash)} are both mapped and ignored")

    combine = {}
    for c, parts in _mapping_of(p, data, "combine").items():
        c = _canonical(p, f"combine > {c}", c)
        if not isinstance(parts, list) or len(parts) < 2 or not all(isinstance(x, str) for x in parts):
            raise _fail(p, f"combine > {c}", "must be a list of two or more file headers")
        combine[c] = tuple(parts)

    values = {}
    for c, table in _mapping_of(p, data, "values").items():
        c = _canonical(p, f"values > {c}", c)
        if not isinstance(table, dict):
            raise _fail(p, f"values > {c}", "must be a mapping of the file's words to the tool's words")
        values[c] = {_text(k): _text(v) for k, v in table.items()}
        for k, v in values[c].items():
            _check_word(p, c, k, v)

    derive = {}
    for c, spec in _mapping_of(p, data, "derive").items():
        c = _canonical(p, f"derive > {c}", c)
        derive[c] = _derivation(p, c, spec)

    order = data.get("date_order")
    if order is not None and order not in ("iso", "dmy", "mdy"):
        raise _fail(p, "date_order", f"'{order}' is not iso, dmy or mdy")
    return ColumnMap(columns, defaults, str(p), tuple(map(str, ignore)), combine, values, derive, order)


def _check_word(path: Path, column: str, word: str, target: str) -> None:
    where = f"values > {column} > {word}"
    if column in VALUE_WORDS and target not in VALUE_WORDS[column]:
        raise _fail(path, where, f"'{target}' is not one of {', '.join(VALUE_WORDS[column])}")
    if column in VALUE_CODE_LISTS and target and codelists.key(target) not in codelists.known_codes(
            VALUE_CODE_LISTS[column]):
        raise _fail(path, where, f"'{target}' is not a code or class of data/{VALUE_CODE_LISTS[column]}.yaml")
    if column in ("qualifier", "remark_code", "detection_condition") and target:
        from tracescreen.io import qualifiers

        if not qualifiers.knows(target, column):
            raise _fail(path, where, f"'{target}' is not a code of the qualifier vocabulary "
                                     "(data/qualifiers.yaml) for this column")


def _derivation(path: Path, column: str, spec) -> Derivation:
    where = f"derive > {column}"
    if not isinstance(spec, dict) or set(spec) - {"from", "pattern", "otherwise"} or not {"from", "pattern"} <= set(spec):
        raise _fail(path, where, "must give 'from' (a file header) and 'pattern' (a regular expression), "
                                 "and may give 'otherwise'")
    try:
        pattern = re.compile(str(spec["pattern"]))
    except re.error as exc:
        raise _fail(path, f"{where} > pattern", f"not a regular expression ({exc})") from None
    if pattern.groups and "value" not in pattern.groupindex and pattern.groups > 1:
        raise _fail(path, f"{where} > pattern", "has several groups: name the one to keep (?P<value>...)")
    other = spec.get("otherwise")
    return Derivation(str(spec["from"]), pattern, None if other is None else _text(other))


def mapping_applies(headers, column_map: ColumnMap | None) -> bool:
    """A mapping's sections other than ``columns`` apply only to files that have at least one
    header it names (or to every file, for a mapping that names none)."""
    if column_map is None:
        return False
    named = column_map.headers()
    return not named or any(header_key(h) in named for h in headers)


# --------------------------------------------------------------------------------------------
# applying a mapping to the cells of one table
# --------------------------------------------------------------------------------------------

def _header_in(cells: pd.DataFrame, header: str) -> str | None:
    keyed = {header_key(h): h for h in cells.columns}
    return keyed.get(header_key(header))


def coded_per_value(codes: np.ndarray, per_value) -> CodedText:
    """Coded text from a text per code (several codes may give the same text)."""
    texts = pd.Series(np.asarray(per_value, dtype=object), dtype=object).fillna("").astype(str).str.strip()
    recode, uniq = pd.factorize(texts)
    return CodedText(recode.astype(np.int64)[codes], pd.Index(uniq, dtype="str"))


MISSING_WORDS = frozenset({"na", "n/a", "nan", "null", "none", "-", "--"})


def missing_as_empty(text: CodedText) -> CodedText:
    """The same column with missing-value words (``NA``, ``N/A``, ``NaN``, ``null``, ``-``) as ""."""
    lower = pd.Index(text.values).str.lower()
    if not lower.isin(list(MISSING_WORDS)).any():
        return text
    return coded_per_value(text.codes, np.where(lower.isin(list(MISSING_WORDS)), "", text.values))


def _translate(text: CodedText, table: dict[str, str]) -> CodedText:
    """Each distinct value through ``table`` (exact text first, then without case)."""
    lower = {k.strip().lower(): v for k, v in table.items()}
    exact = {k.strip(): v for k, v in table.items()}
    return coded_per_value(text.codes, [exact.get(v, lower.get(v.lower(), v)) for v in text.values])


def _joined(parts: list[CodedText], dates: bool) -> CodedText:
    """Several columns joined with a space per distinct combination (empty parts skipped); for a
    date column the second part is read as a time of day (``1330`` -> ``13:30``)."""
    from tracescreen.io.cells import join_date_time

    combo, first = joint_codes(*[p.codes for p in parts])
    texts = [pd.Series(p.values.take(p.codes[first]), dtype=object) for p in parts]
    if dates:
        texts = [join_date_time(texts[0], texts[1])] + texts[2:]
    out = texts[0].astype(str)
    for t in texts[1:]:
        t = t.astype(str).str.strip()
        out = pd.Series(np.where(t == "", out, np.where(out == "", t, out + " " + t)), dtype=object)
    return coded_per_value(combo, out)


def _derived(base: CodedText, source: CodedText, d: Derivation) -> CodedText:
    """``d`` applied to the distinct values of ``source``; unmatched rows keep ``base``."""
    def pick(m: re.Match) -> str:
        if "value" in d.pattern.groupindex:
            return m.group("value") or ""
        return (m.group(1) if d.pattern.groups else m.group(0)) or ""

    found = [d.pattern.search(v) for v in source.values]
    got = np.array([pick(m).strip() if m else "" for m in found], dtype=object)
    hit = np.array([m is not None for m in found], dtype=bool)
    fallback = base if d.otherwise is None else CodedText.constant(d.otherwise, len(base))
    combo, first = joint_codes(source.codes, fallback.codes)
    per = np.where(hit[source.codes[first]], got[source.codes[first]],
                   np.asarray(fallback.values.take(fallback.codes[first]), dtype=object))
    return coded_per_value(combo, per)


def column_text(cells: pd.DataFrame, found: dict[str, str], name: str, column_map: ColumnMap | None,
                applies: bool) -> tuple[CodedText, bool]:
    """One tracescreen column of a table as coded text, and whether the file gives it at all.

    Order: a derivation (where its pattern matches), else the combined headers, else the header
    recognised or mapped for the column (``found``), else the mapping's default; then the mapping's
    value translation. Only ``found`` applies when the mapping does not apply to this file.
    """
    n = len(cells)
    m = column_map if applies else None
    given = True
    if m and name in m.combine and all(_header_in(cells, h) for h in m.combine[name]):
        text = _joined([CodedText.from_series(cells[_header_in(cells, h)]) for h in m.combine[name]],
                       name in DATE_COLUMNS)
    elif name in found:
        text = CodedText.from_series(cells[found[name]])
    else:
        given = m is not None and name in m.defaults
        text = CodedText.constant(m.defaults.get(name, "") if m else "", n)
    if m and name in m.derive and _header_in(cells, m.derive[name].source):
        d = m.derive[name]
        text = _derived(text, CodedText.from_series(cells[_header_in(cells, d.source)]), d)
        given = True
    if m and name in m.values:
        text = _translate(text, m.values[name])
    return text, given


def missing_required(cells: pd.DataFrame, found: dict[str, str], column_map: ColumnMap | None,
                     applies: bool) -> list[str]:
    """The required columns a table does not give (a parameter code or name gives analyte and
    unit; a site and a sampling time identify a sample)."""
    from tracescreen.io.columns import REQUIRED

    have = {c for c in REQUIRED if gives(cells, found, c, column_map, applies)}
    if {"parameter_code", "parameter_name"} & set(found):
        have |= {"analyte", "unit"}
    if {"site_id", "sampled_at"} <= have:
        have.add("sample_id")
    return [c for c in REQUIRED if c not in have]


def gives(cells: pd.DataFrame, found: dict[str, str], name: str, column_map: ColumnMap | None,
          applies: bool) -> bool:
    """Does the table give column ``name`` (a header, a combination, a derivation or a default)?"""
    if name in found:
        return True
    if not applies or column_map is None:
        return False
    if name in column_map.combine and all(_header_in(cells, h) for h in column_map.combine[name]):
        return True
    if name in column_map.derive and _header_in(cells, column_map.derive[name].source):
        return True
    return name in column_map.defaults
