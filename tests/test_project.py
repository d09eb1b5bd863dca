"""House rules that a test can check: layers, fast CLI start, README and CI in step."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    quick = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return [block.strip() for block in re.findall(r"```sh\n(.*?)```", quick, re.S)]


def test_quick_start_is_exactly_two_commands():
    commands = _readme_commands()
    assert len(commands) == 2
    assert all("\n" not in c for c in commands)


def test_ci_runs_the_readme_test_command_exactly():
    ci_lines = (ROOT / ".ci" / "run").read_text(encoding="utf-8").splitlines()
    assert _readme_commands()[1] in ci_lines


def test_readme_carries_the_caution():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    flat = " ".join(text.replace(">", " ").split())
    assert "not a certified navigation system" in flat
    assert "official charts" in flat and "regulations prevail" in flat


def test_import_layers_hold():
    """The import-linter contracts in pyproject.toml (layers, no toolkits in libraries)."""
    result = subprocess.run(
        [sys.executable, "-c", "from importlinter.cli import lint_imports_command; "
         "lint_imports_command()"],
        cwd=ROOT, capture_output=True, text=True,
    )
    assert result.returncode == 0, result.stdout + result.stderr


def test_cli_does_not_import_textual():
    code = (
        "import sys, passagelog.cli, passagelog.cli.calc; "
        "from passagelog.cli import cli; "
        "assert 'textual' not in sys.modules, 'textual imported'; print('ok')"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert result.stdout.strip() == "ok", result.stderr
