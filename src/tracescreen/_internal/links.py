"""Links from users' files (a limit table's ``url``): only ``http``, ``https`` and ``mailto`` become links.

A ``javascript:`` (or ``data:``, ``vbscript:``, ``file:``) address in a limit table would run or open
something when clicked in the report or the dashboard. :func:`link_target` gives the address to link
to, or ``""`` when it must be shown as plain text only. Browsers ignore tabs, line breaks and leading
control characters inside a scheme (``java\\tscript:``) [WHATWG-URL]_, so those are removed before the
scheme is read.

>>> link_target("https://www.epa.gov/wqc"), link_target(" JaVa\\tScRiPt:alert(1)"), link_target("mailto:a@b.org")
('https://www.epa.gov/wqc', '', 'mailto:a@b.org')
"""

from __future__ import annotations

import re

#: The schemes a user-supplied address may have to become a link.
ALLOWED_SCHEMES = ("http", "https", "mailto")


def link_target(url) -> str:
    """``url`` if it is an absolute http, https or mailto address, else ``""`` (show it as text)."""
    text = re.sub(r"[\x00-\x20\x7f]+", "", str(url or "")) if url else ""
    scheme = re.match(r"^([A-Za-z][A-Za-z0-9+.\-]*):", text)
    if not scheme or scheme.group(1).lower() not in ALLOWED_SCHEMES:
        return ""
    return str(url).strip()
