"""How every command's ``--help`` looks: option groups in the order people use them, each default
said once, and an example command line at the end.

A command module adds its options to the named groups of :data:`GROUPS` with :func:`group`
(``group(p, "output").add_argument("--out", ...)``) and lists its example command lines in a
module-level ``EXAMPLES``; :func:`tracescreen.cli.build_parser` gives every command's parser the
formatter, the examples, the caution and the general options (:func:`add_general_options`).
Groups a module makes itself with ``add_argument_group`` are shown too, before ``output``.

Light to import: ``tracescreen --help`` builds every parser without pandas.
"""

from __future__ import annotations

import argparse
import re
import textwrap

#: Option groups by key -> title, in the order ``--help`` shows them.
GROUPS = {
    "inputs": "inputs",
    "reading": "reading lab files",
    "limits": "limits",
    "statistics": "statistics (summary.csv, exceedances.csv, trends.csv)",
    "wells": "wells against background and standards (US EPA Unified Guidance 2009)",
    "design": "design (each overrides the --design file)",
    "labqc": "laboratory QC and calibration (see 'tracescreen labqc')",
    "retest": "retest flags and QC checks (retest.csv)",
    "contents": "report contents",
    "cover": "report cover (first page)",
    "server": "server",
    "other": "other options",
    "output": "output",
    "general": "general",
}

_OTHER = list(GROUPS).index("other")


def group(p: argparse.ArgumentParser, key: str):
    """The argument group ``key`` of :data:`GROUPS` on parser ``p`` (made on first use)."""
    made = p.__dict__.setdefault("_tracescreen_groups", {})
    if key not in made:
        made[key] = p.add_argument_group(GROUPS[key])
    return made[key]


def _rank(title: str | None) -> int:
    """Where a group of this title goes in ``--help``: by its :data:`GROUPS` title (or the title's
    first word), groups of unknown titles just before ``output``."""
    title = (title or "").lower()
    for k, (key, known) in enumerate(GROUPS.items()):
        if title == known.lower() or title.split(" ")[0] == known.split(" ")[0] == key:
            return k
    if title.startswith("positional"):  # argparse's group of positionals not put in a group
        return 0
    return _OTHER


class Parser(argparse.ArgumentParser):
    """An argument parser whose help lists the option groups in :data:`GROUPS` order."""

    def format_help(self) -> str:
        """The help text, groups sorted by :func:`_rank` (stable: same-rank groups keep their order)."""
        groups = self._action_groups
        self._action_groups = sorted(groups, key=lambda g: _rank(g.title))
        try:
            return super().format_help()
        finally:
            self._action_groups = groups


class HelpFormatter(argparse.HelpFormatter):
    """Help text that says each default once and keeps example lines as written.

    A default is added as ``(default: X)`` only to an option whose help does not speak of its
    default already, that takes a value, and whose default is a value (not None, not empty);
    positional arguments never get one. Paragraphs of the description and epilog are wrapped,
    except lines indented by two spaces (command lines), which are kept as they are.
    """

    def _get_help_string(self, action: argparse.Action) -> str:
        text = action.help or ""
        default = action.default
        if (not action.option_strings or action.nargs == 0 or "default" in text.lower()
                or default is None or default is argparse.SUPPRESS or default in ([], (), "")):
            return text
        return f"{text} (default: %(default)s)"

    def _fill_text(self, text: str, width: int, indent: str) -> str:
        out = []
        for para in re.split(r"\n\s*\n", text.strip("\n")):
            if para.startswith("  "):
                out.append("\n".join(indent + line for line in para.splitlines()))
            else:
                out.append(textwrap.fill(" ".join(para.split()), width, initial_indent=indent,
                                         subsequent_indent=indent))
        return "\n\n".join(out)


def _chunks(line: str) -> list[str]:
    """The words of a command line, each option kept with its value."""
    chunks: list[str] = []
    for word in line.split(" "):
        if chunks and not word.startswith("-") and chunks[-1].startswith("-") and " " not in chunks[-1]:
            chunks[-1] += " " + word
        else:
            chunks.append(word)
    return chunks


def format_examples(examples: list[str], width: int = 86) -> str:
    """The ``example:`` paragraph of an epilog: each command line on lines of at most ``width``
    characters where it can, broken between options and continued with `` \\`` (so it can be
    pasted into a shell as it is)."""
    if not examples:
        return ""
    blocks = []
    for line in examples:
        rows, row = [], "  "
        for chunk in _chunks(line):
            if row.strip() and len(row) + len(chunk) + 3 > width:
                rows.append(row + " \\")
                row = "     "
            row += " " + chunk if row.strip() else chunk
        rows.append(row)
        blocks.append("\n".join(rows))
    return "example" + ("s" if len(examples) > 1 else "") + " (from the project folder, on the demo scenario):\n\n" \
        + "\n\n".join(blocks)


def short_usage(p: argparse.ArgumentParser) -> str:
    """``prog INPUTS --required X ... [options]``: the usage line without every optional option."""
    words = []
    for a in p._actions:
        if not a.option_strings:
            if a.help is not argparse.SUPPRESS:
                name = a.metavar or a.dest
                words.append(f"{name} ..." if a.nargs == "+" else f"[{name} ...]" if a.nargs == "*" else name)
        elif a.required:
            words.append(f"{max(a.option_strings, key=len)} {a.metavar or a.dest.upper()}")
    return " ".join(["%(prog)s", *words, "[options]"])


def examples_of(help_text: str) -> list[str]:
    """The example command lines in a ``--help`` text, continuation lines joined (for tests)."""
    _, _, tail = help_text.partition(" (from the project folder, on the demo scenario):")
    lines, out = tail.splitlines(), []
    current = ""
    for line in lines:
        if not line.startswith("  "):
            if current:
                out.append(current)
                current = ""
            continue
        current += " " + line.strip().rstrip("\\").strip()
        if not line.rstrip().endswith("\\"):
            out.append(current.strip())
            current = ""
    return [c for c in out if c.startswith("tracescreen ")]


def add_general_options(p: argparse.ArgumentParser) -> None:
    """``--config``, ``--no-config`` and ``--quiet``, on every command (see :mod:`tracescreen.cli.config`)."""
    g = group(p, "general")
    p._optionals.title = GROUPS["other"]  # options not put in a group (argparse calls them "options")
    help_action = next((a for a in p._actions if isinstance(a, argparse._HelpAction)), None)
    if help_action is not None and help_action in p._optionals._group_actions:  # -h, --help with the others
        p._optionals._group_actions.remove(help_action)
        g._group_actions.insert(0, help_action)
    g.add_argument("--config", metavar="FILE",
                   help="options from this YAML file (default: tracescreen.yaml in the working folder, if there is "
                        "one); options given on the command line override it")
    g.add_argument("--no-config", action="store_true", help="ignore tracescreen.yaml")
    g.add_argument("--quiet", "-q", action="store_true",
                   help="no progress display (it shows on a terminal only, for work that takes over 2 s)")
