"""``tracescreen completion SHELL``: a bash or zsh completion script made from the parser itself
(``shtab``), so every command and option, now or added later, completes; file and folder
arguments complete to paths.

Install it with one line (README "Shell completion"), e.g. in ``~/.bashrc``::

    eval "$(tracescreen completion bash)"
"""

from __future__ import annotations

import argparse

from .parser import group

EXAMPLES = ["tracescreen completion bash"]

#: Metavars of arguments that name a file (completed to paths) or a folder (completed to folders).
_FILE_METAVARS = {"FILE", "PATH", "RESULTS", "FILE.html", "FILE.csv", "FILE.xlsx", "ANALYTE=FILE"}
_DIR_METAVARS = {"DIR"}


def register(sub) -> None:
    p = sub.add_parser(
        "completion", help="print a bash or zsh completion script for tracescreen",
        description="Print a shell completion script for every tracescreen command and option. Load it in "
                    "each new shell with one line in ~/.bashrc: eval \"$(tracescreen completion bash)\"; "
                    "for zsh, write it to a folder of your fpath: tracescreen completion zsh > "
                    "~/.zfunc/_tracescreen (with fpath+=~/.zfunc before compinit in ~/.zshrc).")
    group(p, "inputs").add_argument("shell", choices=("bash", "zsh", "tcsh"), help="the shell")
    p.set_defaults(func=run)


def _mark_paths(parser: argparse.ArgumentParser, file_spec, dir_spec) -> None:
    """Tell shtab which arguments are files or folders (by their metavar or name)."""
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for p in action.choices.values():
                _mark_paths(p, file_spec, dir_spec)
            continue
        metavar = action.metavar or ""
        if metavar in _DIR_METAVARS:
            action.complete = dir_spec
        elif metavar in _FILE_METAVARS or metavar.startswith("FILE") or action.dest in ("results", "files"):
            action.complete = file_spec


def run(args) -> int:
    import shtab

    from . import build_parser

    parser = build_parser()
    _mark_paths(parser, shtab.FILE, shtab.DIRECTORY)
    print(shtab.complete(parser, shell=args.shell))
    return 0
