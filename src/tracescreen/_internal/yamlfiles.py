"""How tracescreen reads its YAML files (limit tables, column mappings, the analyte registry).

Always with a *safe* loader, which builds only plain data (mappings, lists, text, numbers, dates)
and never Python objects, so a YAML file cannot run code. libyaml's C implementation of the safe
loader is used when PyYAML was built with it (several times faster); the pure-Python one otherwise.

References
----------
[PyYAML]_ (docs/references.md)
"""

from __future__ import annotations

import yaml

#: The safe YAML loader (C implementation when available).
SAFE_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
