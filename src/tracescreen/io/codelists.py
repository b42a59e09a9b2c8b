"""Code lists kept as data (``data/<name>.yaml``): what a code written in a file means.

Reported-limit types (``limit_types``), review statuses (``result_status``) and sample media
(``media``) share one form: ``sources`` (full citations) and ``namespaces``, each a list of entries
``{code, class, source, checked, where, text, note}``. A column is read with the namespaces of its
layout, in order; the first namespace that knows a code decides its class. A code found in none is
left unclassified (``""``): reported, never guessed.

Each distinct text is looked up once (:func:`classify` works on distinct values).
"""

from __future__ import annotations

import functools
import re
from importlib import resources

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import parse_yaml

#: The classes each code list may use (checked when the file is read).
CLASSES = {
    "limit_types": ("detection", "quantitation", "censoring", "upper", "other"),
    "result_status": ("usable", "rejected"),
    "media": ("water", "water_qc", "not_water"),
}


def key(text) -> str:
    """Compare codes without case and with runs of white space as one space."""
    return re.sub(r"\s+", " ", str(text).strip().lower())


@functools.cache
def code_table(name: str) -> pd.DataFrame:
    """Every entry of ``data/<name>.yaml``: ``namespace, code, class, source, checked, text``.

    Raises ``ValueError`` naming the file and entry when an entry has an unknown class or source.
    """
    text = resources.files("tracescreen").joinpath(f"data/{name}.yaml").read_text("utf-8")
    data = parse_yaml(text, f"{name}.yaml")
    sources = set(data.get("sources") or {})
    rows = []
    for ns, entries in data["namespaces"].items():
        for e in entries:
            if e.get("class") not in CLASSES[name]:
                raise ValueError(f"{name}.yaml: {ns} code {e.get('code')!r}: class {e.get('class')!r} "
                                 f"is not one of {', '.join(CLASSES[name])}")
            if e.get("source") not in sources:
                raise ValueError(f"{name}.yaml: {ns} code {e.get('code')!r}: unknown source {e.get('source')!r}")
            rows.append({"namespace": ns, "code": str(e["code"]), "class": e["class"], "source": e["source"],
                         "checked": e.get("checked", ""), "text": e.get("text", "")})
    return pd.DataFrame(rows)


@functools.cache
def _lookup(name: str, namespaces: tuple[str, ...]) -> dict[str, str]:
    table = code_table(name)
    out: dict[str, str] = {}
    for ns in namespaces:
        part = table[table["namespace"] == ns]
        if part.empty:
            raise ValueError(f"{name}.yaml: no namespace {ns!r}")
        for code, cls in zip(part["code"], part["class"]):
            out.setdefault(key(code), cls)
    return out


def classify(values, name: str, namespaces: tuple[str, ...]) -> np.ndarray:
    """The class of each value (object array; ``""`` for empty or unknown codes).

    ``values`` are distinct texts (e.g. :attr:`CodedText.values`); a class name itself
    (``detection``) is accepted as its own class, so a column mapping can translate a lab's words
    straight into classes.
    """
    lookup = _lookup(name, namespaces)
    classes = set(CLASSES[name])
    keys = [key(v) for v in values]
    return np.array([lookup.get(k, k if k in classes else "") for k in keys], dtype=object)


def known_codes(name: str) -> set[str]:
    """Every code and class name of a code list, compared by :func:`key` (for mapping checks)."""
    return {key(c) for c in code_table(name)["code"]} | set(CLASSES[name])
