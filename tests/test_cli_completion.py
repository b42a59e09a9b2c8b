"""Shell completion made from the parser (README "Shell completion"), tried in a real bash."""

from __future__ import annotations

import shutil
import subprocess

import pytest

from tracescreen.cli import main


def _script(shell: str, capsys) -> str:
    assert main(["completion", shell]) == 0
    return capsys.readouterr().out


@pytest.mark.skipif(shutil.which("bash") is None, reason="bash is not installed")
def test_bash_completes_commands_options_and_files(capsys, tmp_path):
    script = tmp_path / "tracescreen.bash"
    script.write_text(_script("bash", capsys))
    (tmp_path / "lab_2024.csv").write_text("x")

    def complete(*words: str) -> list[str]:
        line = " ".join(words)
        code = (f"source {script}; COMP_WORDS=({line}); COMP_CWORD={len(words) - 1}; "
                f"COMP_LINE='{line}'; COMP_POINT=${{#COMP_LINE}}; _shtab_tracescreen; printf '%s\\n' \"${{COMPREPLY[@]}}\"")
        out = subprocess.run(["bash", "-c", code], capture_output=True, text=True, cwd=tmp_path, timeout=30)
        return out.stdout.split()

    assert complete("tracescreen", "scr") == ["screen"]
    assert complete("tracescreen", "screen", "--near") == ["--near-limit"]
    assert "--limits" in complete("tracescreen", "screen", "--")
    assert complete("tracescreen", "screen", "--sites", "lab") == ["lab_2024.csv"]  # a FILE completes to paths


def test_zsh_script_is_a_completion_function(capsys):
    text = _script("zsh", capsys)
    assert text.startswith("#compdef tracescreen") and "--near-limit" in text and "screen" in text
