"""``tracescreen.yaml``: the options a user gives every run, kept in a file.

The file is read from the working folder (or given with ``--config FILE``; ``--no-config`` ignores
it). Its keys are the long names of the commands' options, without the dashes (``near-limit`` or
``near_limit``), and ``results`` for the lab files of the commands that take them:

.. code-block:: yaml

    limits: [limits, scenario_data/limits]   # top level: for every command that has the option
    sites: scenario_data/sites.csv
    columns: scenario_data/columns_eastbank.yaml
    screen:                                   # a command's name: for that command only
      out: out/demo
      near-limit: 0.75

A command takes the top-level keys it has (others are for other commands) and then its own
section, which wins. An option given on the command line replaces the file's value of that
option (a repeated option such as ``--limits`` too, as a whole). A flag (``decimal-comma: true``)
is set by the file; it is turned off by removing it from the file or with ``--no-config``. Paths
are read from the working folder, as on the command line. ``TRACESCREEN_NO_CONFIG=1`` ignores the
working folder's file (the test suite sets it; ``--config FILE`` still works).

The keys come from the parsers themselves, so every option a command has, now or later, can be
written in the file; a key no command has is a one-line error naming the file and the key.
"""

from __future__ import annotations

import argparse
import datetime as dt
import difflib
import os
from dataclasses import dataclass, field
from pathlib import Path

from . import UserError

#: The configuration file a command reads from the working folder.
CONFIG_NAME = "tracescreen.yaml"

#: Options that cannot come from the configuration file.
_NOT_CONFIGURABLE = {"help", "config", "no-config"}


@dataclass
class Config:
    """What a command took from the configuration file."""

    path: Path
    applied: list[str] = field(default_factory=list)
    overridden: list[str] = field(default_factory=list)

    def describe(self) -> str:
        """One line: the file, the options taken from it and those the command line overrode."""
        text = f"configuration {self.path}: " + (", ".join(self.applied) or "no option for this command")
        if self.overridden:
            text += f" (command line overrides {', '.join(self.overridden)})"
        return text


def _key(name: str) -> str:
    return str(name).strip().lstrip("-").replace("_", "-")


def _options(p: argparse.ArgumentParser) -> dict[str, argparse.Action]:
    """The options of a command's parser by config key: long option names and positional dests."""
    out = {}
    for a in p._actions:
        names = [s for s in a.option_strings if s.startswith("--")] or ([] if a.option_strings else [a.dest])
        for n in names:
            if _key(n) not in _NOT_CONFIGURABLE:
                out[_key(n)] = a
    return out


def _given(sub: argparse.ArgumentParser, build, command: str, argv: list[str]) -> argparse.Namespace | None:
    """The options given on the command line (only those), from a parse with every default
    suppressed and nothing required; None when that parse fails (the real parse reports it)."""
    probe = build()._subparsers._group_actions[0].choices[command]

    def fail(message):
        raise ValueError(message)

    probe.error = fail
    for a in probe._actions:
        a.default, a.required = argparse.SUPPRESS, False
        if not a.option_strings and a.nargs == "+":
            a.nargs = "*"
    try:
        ns, _ = probe.parse_known_args(argv)
    except (ValueError, SystemExit):
        return None
    return ns


def _text(value, where: str) -> str:
    if isinstance(value, (dict, list, tuple)):
        raise UserError(f"{where}: give one value, not {type(value).__name__}")
    if value is None:
        raise UserError(f"{where}: no value")
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    return str(value)


def _tokens(action: argparse.Action, opt: str, value, where: str) -> tuple[list[str], bool]:
    """Command-line tokens for one config value, and whether they take several values (placed last)."""
    if action.nargs == 0:  # a flag
        if not isinstance(value, bool):
            raise UserError(f"{where}: is a flag: write true or false")
        return ([opt] if value else []), False
    items = list(value) if isinstance(value, (list, tuple)) else [value]
    if isinstance(action, argparse._AppendAction):
        return [t for v in items for t in (opt, _text(v, where))], False
    if action.nargs in ("+", "*") or isinstance(action.nargs, int):
        return [opt, *(_text(v, where) for v in items)], True
    return [opt, _text(value, where)], False


def _unknown(path, key: str, known, what: str) -> UserError:
    near = difflib.get_close_matches(key, list(known), n=1)
    return UserError(f"{path}: '{key}' is not {what}" + (f" (did you mean '{near[0]}'?)" if near else ""))


def _read(path: Path) -> dict:
    import yaml

    from tracescreen._internal.yamlfiles import SAFE_LOADER

    try:
        data = yaml.load(path.read_text(encoding="utf-8"), Loader=SAFE_LOADER)
    except OSError as exc:
        raise UserError(f"{path}: cannot read the configuration file ({exc.strerror or exc})") from None
    except UnicodeDecodeError:
        raise UserError(f"{path}: the configuration file is not UTF-8 text") from None
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" line {mark.line + 1}" if mark is not None else ""
        raise UserError(f"{path}:{where} not valid YAML ({getattr(exc, 'problem', None) or exc})") from None
    if data is None:
        return {}
    if not isinstance(data, dict):
        raise UserError(f"{path}: give options as 'name: value' lines (a mapping), not a {type(data).__name__}")
    return data


def _choose(ns, command: str, cwd: Path) -> Path | None:
    chosen = getattr(ns, "config", None) if ns is not None else None
    if chosen and getattr(ns, "no_config", False):
        raise UserError("give --config FILE or --no-config, not both")
    if chosen:
        path = Path(chosen)
        if not path.is_file():
            raise UserError(f"--config {chosen}: file not found")
        return path
    if (ns is not None and getattr(ns, "no_config", False)) or os.environ.get("TRACESCREEN_NO_CONFIG"):
        return None
    default = cwd / CONFIG_NAME
    return default if default.is_file() else None


def _values(path: Path, data: dict, command: str, commands: dict) -> dict[str, tuple[object, str]]:
    """The file's values for ``command`` (key -> (value, where)), every key of the file checked."""
    every = {k for p in commands.values() for k in _options(p)}
    values = {}
    for raw, value in data.items():
        key = _key(raw)
        if key in commands and (isinstance(value, dict) or key not in every):  # a command's section
            if not isinstance(value, dict):
                raise UserError(f"{path}: '{raw}' is a command: give its options under it as 'name: value' lines")
            known = _options(commands[key])
            for opt_raw in value:
                if _key(opt_raw) not in known:
                    raise _unknown(path, _key(opt_raw), known, f"an option of 'tracescreen {key}'")
            continue
        if key not in every:
            raise _unknown(path, key, every | set(commands), "an option of any command")
        if key in _options(commands[command]):
            values[key] = (value, f"{path}: {raw}")
    section = next((v for k, v in data.items() if _key(k) == command and isinstance(v, dict)), {})
    for raw, value in section.items():  # the command's own section wins
        values[_key(raw)] = (value, f"{path}: {command}: {raw}")
    return values


def apply(argv: list[str], build, cwd: Path | None = None) -> tuple[list[str], Config | None]:
    """``argv`` with the configuration file's options put in, and what was taken from where.

    Parameters
    ----------
    argv : list of str
        The command line after ``tracescreen``.
    build : callable
        Makes the full parser (:func:`tracescreen.cli.build_parser`); called for a throw-away copy.
    cwd : Path, optional
        The working folder (where ``tracescreen.yaml`` is looked for).

    Raises
    ------
    UserError
        An unreadable file, a key no command has, a value of the wrong form.
    """
    parser = build()
    commands = parser._subparsers._group_actions[0].choices
    command = argv[0] if argv and argv[0] in commands else None
    if command is None or any(a in ("-h", "--help") for a in argv):
        return argv, None
    given = _given(commands[command], build, command, argv[1:])
    path = _choose(given, command, cwd or Path.cwd())
    if path is None:
        return argv, None
    options = _options(commands[command])
    config = Config(path)
    front, back, positional = [], [], []
    for key, (value, where) in _values(path, _read(path), command, commands).items():
        action = options[key]
        if not action.option_strings:
            tokens, several = [_text(v, where) for v in (value if isinstance(value, (list, tuple)) else [value])], None
        else:
            tokens, several = _tokens(action, max(action.option_strings, key=len), value, where)
        if given is not None and hasattr(given, action.dest) and getattr(given, action.dest) not in (None, []):
            config.overridden.append(key)  # checked all the same: a mistake in the file shows at once
            continue
        config.applied.append(key)
        (positional if several is None else back if several else front).extend(tokens)
    tail = ["--", *positional] if positional else []
    return [command, *front, *argv[1:], *back, *tail], config
