"""Text from users' files made safe to echo into messages, terminals and logs.

A cell of a lab file may hold control characters: ANSI escape sequences that recolour or clear a
terminal, carriage returns that overwrite a message, NULs. Wherever file content is echoed (error
messages, warnings, rejection reasons, ``history`` output) it goes through :func:`printable`,
which shows each control character as a visible escape (``\\x1b``) instead of sending it. The
control characters are the C0 and C1 sets of [ECMA-48]_.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

#: C0 controls except tab, DEL, the C1 controls, and the Unicode line and paragraph separators and bidi
#: overrides (which reorder what a reader sees).
CONTROL = re.compile("[\x00-\x08\x0a-\x1f\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069]")


def _escape(m: re.Match) -> str:
    c = m.group(0)
    return f"\\x{ord(c):02x}" if ord(c) < 0x100 else f"\\u{ord(c):04x}"


def printable(text) -> str:
    """``text`` with every control character shown as an escape.

    >>> printable("\\x1b[31mRED\\x1b[0m\\r\\nok\\ttab")
    '\\\\x1b[31mRED\\\\x1b[0m\\\\x0d\\\\x0aok\\ttab'
    """
    return CONTROL.sub(_escape, str(text))


def printable_array(texts) -> np.ndarray:
    """:func:`printable` of many texts (an object array), by a vectorised replace over the distinct texts."""
    s = pd.Series(np.asarray(texts, dtype=object), dtype=object).fillna("").astype(str)
    if not s.str.contains(CONTROL.pattern, regex=True).any():
        return s.to_numpy(dtype=object)
    codes, uniq = pd.factorize(s)
    fixed = np.array([printable(u) for u in uniq], dtype=object)
    return fixed[codes]
