"""tracescreen.yaml: options kept in a file, the command line overriding them (README "Configuration file").

Precedence checked: command line > the command's own section > the file's top level > the
parser's defaults; a repeated option given on the command line replaces the file's list.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from conftest import ROOT, SCENARIO

from tracescreen.cli import build_parser, main
from tracescreen.cli.config import CONFIG_NAME, apply


@pytest.fixture
def folder(tmp_path, monkeypatch):
    """A working folder with the demo scenario reachable by relative paths, and config lookup on."""
    (tmp_path / "scenario_data").symlink_to(SCENARIO)
    (tmp_path / "limits").symlink_to(ROOT / "limits")
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("TRACESCREEN_NO_CONFIG", raising=False)
    return tmp_path


def _parse(argv: list[str], cwd: Path):
    argv, config = apply(argv, build_parser, cwd)
    return build_parser().parse_args(argv), config


def _write(folder: Path, text: str, name: str = CONFIG_NAME) -> Path:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


CONFIG = """\
limits: [scenario_data/limits]
sites: scenario_data/sites.csv
columns: scenario_data/columns_eastbank.yaml
near-limit: 0.7
network: scenario_data/network.csv   # an option of wells, report and dashboard only: screen ignores it
screen:
  out: out/screen
  near_limit: 0.75
  decimal-comma: true
"""


def test_precedence_command_line_over_section_over_top_level_over_defaults(folder):
    _write(folder, CONFIG)
    args, config = _parse(["screen", "scenario_data/lab_results_eastbank.xlsx"], folder)
    assert args.near_limit == 0.75  # the screen section beats the top level
    assert args.limits == ["scenario_data/limits"] and args.out == "out/screen" and args.decimal_comma
    assert args.outlier_z == 3.5  # not in the file: the parser's default
    assert not hasattr(args, "network")
    assert config.applied and "near-limit" in config.applied and config.overridden == []

    args, config = _parse(["screen", "scenario_data/lab_results_eastbank.xlsx", "--near-limit", "0.9",
                           "--limits", "limits/who_gdwq_2022.yaml", "--out", "elsewhere"], folder)
    assert args.near_limit == 0.9 and args.out == "elsewhere"
    assert args.limits == ["limits/who_gdwq_2022.yaml"]  # replaced as a whole, not appended to
    assert set(config.overridden) == {"near-limit", "limits", "out"}
    assert args.sites == "scenario_data/sites.csv"


def test_top_level_options_reach_every_command_that_has_them(folder):
    _write(folder, CONFIG)
    args, _ = _parse(["wells", "scenario_data/lab_results_eastbank.xlsx", "--out", "w"], folder)
    assert args.network == "scenario_data/network.csv" and args.limits == ["scenario_data/limits"]
    assert args.decimal_comma is False  # the flag was set for screen only


def test_results_and_abbreviated_options_on_the_command_line(folder):
    _write(folder, "results: [scenario_data/lab_results_eastbank.xlsx]\nscreen: {out: o}\nlimits: [x]\n")
    args, _ = _parse(["screen"], folder)
    assert args.results == ["scenario_data/lab_results_eastbank.xlsx"]
    args, config = _parse(["screen", "a.csv", "--lim", "y"], folder)  # argparse's abbreviation counts as given
    assert args.results == ["a.csv"] and args.limits == ["y"] and {"results", "limits"} <= set(config.overridden)


def test_config_option_no_config_and_no_file(folder, tmp_path_factory):
    other = _write(tmp_path_factory.mktemp("elsewhere"), "screen:\n  out: from-other\n", "team.yaml")
    _write(folder, CONFIG)
    args, config = _parse(["screen", "--config", str(other), "--limits", "l"], folder)
    assert args.out == "from-other" and config.path == other
    argv, config = apply(["screen", "--no-config", "--limits", "l", "--out", "o"], build_parser, folder)
    assert config is None and argv == ["screen", "--no-config", "--limits", "l", "--out", "o"]
    (folder / CONFIG_NAME).unlink()
    assert apply(["screen", "--limits", "l", "--out", "o"], build_parser, folder)[1] is None


def test_screen_runs_from_the_file_and_says_which_file_it_used(folder, capsys):
    _write(folder, CONFIG)
    assert main(["screen", "scenario_data/lab_results_eastbank.xlsx", "--out", "cli-out"]) == 0
    err = capsys.readouterr().err
    assert f"configuration {folder / CONFIG_NAME}" in err and "command line overrides out" in err
    assert (folder / "cli-out" / "screening.csv").is_file() and not (folder / "out").exists()


@pytest.mark.parametrize("text, message", [
    ("near-limt: 0.7\n", "'near-limt' is not an option of any command (did you mean 'near-limit'?)"),
    ("screen:\n  network: n.csv\n", "'network' is not an option of 'tracescreen screen'"),
    ("screen: [a, b]\n", "'screen' is a command: give its options under it"),
    ("- a\n- b\n", "give options as 'name: value' lines"),
    ("screen:\n  out: [a, b]\n", "screen: out: give one value, not list"),
    ("decimal-comma: yes please\n", "decimal-comma: is a flag: write true or false"),
    ("limits: [a\n", "not valid YAML"),
])
def test_a_bad_file_is_one_line_naming_the_file_and_key(folder, capsys, text, message):
    _write(folder, text)
    assert main(["screen", "x.csv", "--limits", "l", "--out", "o"]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and str(folder / CONFIG_NAME) in err and message in err
    assert "Traceback" not in err


def test_a_missing_config_file_is_a_user_error(folder, capsys):
    assert main(["screen", "--config", "nowhere.yaml", "--limits", "l", "--out", "o"]) == 2
    assert "--config nowhere.yaml: file not found" in capsys.readouterr().err


def test_help_is_not_affected_by_a_broken_file(folder, capsys):
    _write(folder, "no-such-option: 1\n")
    with pytest.raises(SystemExit) as exc:
        main(["screen", "--help"])
    assert exc.value.code == 0 and "usage:" in capsys.readouterr().out


def test_the_readme_example_file_runs_screen_on_one_file(folder, capsys):
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    section = readme.split("### Configuration file", 1)[1]
    example = section.split("```yaml\n", 1)[1].split("```", 1)[0]
    _write(folder, example)
    assert main(["screen", "scenario_data/lab_results_eastbank.xlsx"]) == 0
    assert (folder / "out" / "demo" / "screening.csv").is_file()
    assert "configuration" in capsys.readouterr().err
    args, _ = _parse(["wells", "scenario_data/lab_results_eastbank.xlsx", "--out", "w"], folder)
    assert args.design == "scenario_data/design.yaml"
