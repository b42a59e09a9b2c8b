"""How tracescreen reads its YAML files (limit tables, column mappings, designs, the shipped data).

Always with a *safe* loader, which builds only plain data (mappings, lists, text, numbers, dates)
and never Python objects, so a YAML file cannot run code. libyaml's C implementation of the safe
loader is used when PyYAML was built with it (several times faster); the pure-Python one otherwise.

:func:`parse_yaml` (and :func:`read_yaml`) add what a file written by a person needs on top of the
safe loader, so that a mistake is a message and never a silently different value:

* a key given twice in one mapping is an error naming both lines (YAML's last-one-wins would
  silently keep the second value; YAML 1.2.2 section 3.2.1.1 says keys are unique);
* aliases (``*name``) are refused: limit tables and mappings never need them, and an alias of an
  alias expands exponentially when built ("billion laughs");
* a number with an exponent and no dot (``1e-2``) is a number, as in YAML 1.2's core schema (section
  10.3.2; YAML 1.1 reads it as text);
* a date that does not exist (``2021-02-30``) is kept as its text, so the reader that expects a
  date names the file, entry and key;
* nesting deeper than :data:`MAX_DEPTH`, tags that build objects, and unreadable YAML are
  :class:`YamlError` with the line.

References
----------
[PyYAML]_, [YAML122]_ (docs/references.md)
"""

from __future__ import annotations

import re
from pathlib import Path

import yaml

#: The safe YAML loader (C implementation when available).
SAFE_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

#: Deepest nesting of mappings and lists a file may have (limit tables need about 5).
MAX_DEPTH = 50

_FLOAT_EXPONENT = re.compile(r"^[-+]?(?:[0-9][0-9_]*)(?:\.[0-9_]*)?[eE][-+]?[0-9]+$")


class YamlError(ValueError):
    """A YAML file that cannot be used: the message names the file, the line and the problem."""


class _Loader(SAFE_LOADER):
    """The safe loader with YAML 1.2 exponent numbers and impossible dates kept as text."""

    def construct_yaml_timestamp(self, node):
        try:
            return super().construct_yaml_timestamp(node)
        except ValueError:  # 2021-02-30: the reader that wants a date says which key
            return str(node.value)


_Loader.add_constructor("tag:yaml.org,2002:timestamp", _Loader.construct_yaml_timestamp)
_Loader.add_implicit_resolver("tag:yaml.org,2002:float", _FLOAT_EXPONENT, list("-+0123456789"))


def _where(path: tuple, item_names: dict[str, str]) -> str:
    """``entries[2] > value`` as words: ``entry 3 > value`` when ``item_names`` names the list's items."""
    words: list[str] = []
    for part in path:
        if isinstance(part, int):
            prev = words.pop() if words else ""
            item = item_names.get(prev)
            words.append(f"{item} {part + 1}" if item else f"{prev} item {part + 1}".strip())
        else:
            words.append(str(part))
    return " > ".join(words)


def _check_nodes(root: yaml.Node, name: str, item_names: dict[str, str]) -> None:
    """Refuse aliases, repeated keys and deep nesting, walking the composed nodes once (no recursion)."""
    seen: set[int] = set()
    stack: list[tuple[yaml.Node, tuple, int]] = [(root, (), 0)]
    while stack:
        node, path, depth = stack.pop()
        if id(node) in seen:  # the composer hands out the anchored node again for each alias
            raise YamlError(f"{name}: line {node.start_mark.line + 1}: the value anchored here is repeated through an "
                            "alias (*name); aliases are not allowed, write the value out")
        seen.add(id(node))
        if depth > MAX_DEPTH:
            raise YamlError(f"{name}: line {node.start_mark.line + 1}: nested more than {MAX_DEPTH} levels deep")
        if isinstance(node, yaml.MappingNode):
            first_line: dict[str, int] = {}
            for k, v in node.value:
                key = k.value if isinstance(k, yaml.ScalarNode) else None
                if key is not None:
                    if key in first_line:
                        where = _where(path, item_names)
                        raise YamlError(f"{name}: line {k.start_mark.line + 1}"
                                        + (f" ({where})" if where else "")
                                        + f": key '{key}' is given twice (first at line {first_line[key]}); "
                                          "keep one")
                    first_line[key] = k.start_mark.line + 1
                stack.append((k, path, depth + 1))
                stack.append((v, path + (key if key is not None else "?",), depth + 1))
        elif isinstance(node, yaml.SequenceNode):
            stack.extend((v, path + (i,), depth + 1) for i, v in enumerate(node.value))


def parse_yaml(text: str, name: str, item_names: dict[str, str] | None = None):
    """The data of one YAML document (``None`` for an empty one), read safely.

    Parameters
    ----------
    text : str
        The file's text.
    name : str
        How messages name the file.
    item_names : dict, optional
        Words for the items of a list under a key in messages (``{"entries": "entry"}`` makes
        ``entries[2]`` read "entry 3").

    Raises
    ------
    YamlError
        Unreadable YAML, a repeated key, an alias, an object tag or too deep a nesting (file and
        line named).

    Examples
    --------
    >>> parse_yaml("value: 1e-2", "t.yaml")
    {'value': 0.01}
    >>> parse_yaml("entries:\\n  - value: 1\\n    value: 2\\n", "t.yaml", {"entries": "entry"})
    Traceback (most recent call last):
    ...
    tracescreen._internal.yamlfiles.YamlError: t.yaml: line 3 (entry 1): key 'value' is given twice (first at line 2); keep one
    """
    loader = _Loader(text)
    try:
        node = loader.get_single_node()
        if node is None:
            return None
        _check_nodes(node, name, item_names or {})
        return loader.construct_document(node)
    except YamlError:
        raise
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        where = f"line {mark.line + 1}: " if mark is not None else ""
        problem = " ".join(str(exc.problem or exc.context or "not valid YAML").split())
        raise YamlError(f"{name}: {where}not valid YAML ({problem})") from None
    except yaml.YAMLError as exc:
        raise YamlError(f"{name}: not valid YAML ({' '.join(str(exc).split())[:200]})") from None
    except (ValueError, RecursionError) as exc:  # e.g. an integer of thousands of digits
        raise YamlError(f"{name}: not usable YAML ({' '.join(str(exc).split())[:200]})") from None
    finally:
        loader.dispose()


def read_yaml(path: str | Path, item_names: dict[str, str] | None = None):
    """:func:`parse_yaml` of a UTF-8 file; a file that is not UTF-8 text is a :class:`YamlError`.

    ``FileNotFoundError`` is left to the caller, which says what kind of file was missing.
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise YamlError(f"{p.name}: not UTF-8 text (byte offset {exc.start})") from None
    return parse_yaml(text, p.name, item_names)
