"""Every command's help: grouped options, each default said once, and an example that really runs.

The examples are run exactly as ``--help`` prints them, from a folder that holds the project's
``scenario_data/`` and ``limits/`` (as the project folder does), on the invented demo scenario.
"""

from __future__ import annotations

import re
import shlex
from importlib import metadata

import pytest
from conftest import ROOT, SCENARIO

from tracescreen.cli import COMMANDS, build_parser, main
from tracescreen.cli.parser import GROUPS, examples_of

NAMES = [c.rstrip("_") for c in COMMANDS]
#: commands whose examples read what an earlier example wrote (the workspace of `import`)
ORDER = sorted(NAMES, key=lambda n: (n in ("history", "export", "dashboard"), n))


def _help(command: str) -> str:
    sub = build_parser()._subparsers._group_actions[0].choices[command]
    return sub.format_help()


@pytest.mark.parametrize("command", NAMES)
def test_help_says_each_default_once_and_never_none(command):
    text = _help(command)
    assert "(default: None)" not in text and "(default: [])" not in text and "(default: False)" not in text
    # one option's help: from its option string to the next option (or group title)
    for entry in re.split(r"\n  (?=-)", text):
        assert len(re.findall(r"\(default", entry)) <= 1, entry


@pytest.mark.parametrize("command", NAMES)
def test_help_groups_options_in_the_order_of_use(command):
    text = _help(command)
    titles = [t for t in GROUPS.values() if f"\n{t}:\n" in text]
    positions = [text.index(f"\n{t}:\n") for t in titles]
    assert positions == sorted(positions) and "general" in titles
    assert "\noptions:\n" not in text  # nothing left in argparse's catch-all group


@pytest.mark.parametrize("command", NAMES)
def test_every_command_shows_an_example_and_the_caution(command):
    text = _help(command)
    assert examples_of(text) and all(e.startswith(f"tracescreen {command}") for e in examples_of(text))
    assert "CAUTION:" in text


@pytest.fixture(scope="module")
def project_folder(tmp_path_factory):
    """A folder laid out as the project folder for the examples (their outputs land here)."""
    folder = tmp_path_factory.mktemp("project")
    (folder / "scenario_data").symlink_to(SCENARIO)
    (folder / "limits").symlink_to(ROOT / "limits")
    return folder


@pytest.mark.slow
@pytest.mark.parametrize("command", ORDER)
def test_each_help_example_runs(command, project_folder, monkeypatch, capsys):
    monkeypatch.chdir(project_folder)
    for line in examples_of(_help(command)):
        argv = shlex.split(line)[1:]
        if command == "dashboard":  # build the app the command would serve, without serving it
            from dashboard.__main__ import build_app

            app = build_app(build_parser().parse_args(argv))
            assert app.server.test_client().get("/").status_code == 200
            continue
        assert main(argv) == 0, (line, capsys.readouterr().err)
    out = capsys.readouterr().out
    if command in ("screen", "trends", "wells", "labqc", "report"):
        assert "CAUTION" in out


def test_version_names_the_versions_and_every_shipped_limit_table(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["--version"])
    out = capsys.readouterr().out
    assert exc.value.code == 0
    from tracescreen import __version__

    assert out.startswith(f"tracescreen {__version__}\n")
    for package in ("pandas", "dash"):
        assert metadata.version(package) in out
    import platform

    assert f"Python {platform.python_version()}" in out
    for path in (ROOT / "limits").rglob("*.yaml"):
        assert str(path.relative_to(ROOT / "limits")) in out
    assert "WHO Guidelines for Drinking-water Quality, 4th ed." in out  # the table's name, with its edition
