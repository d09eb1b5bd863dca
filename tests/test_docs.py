"""The documentation says what the program does: the CLI reference is generated from the
commands and current, and every command printed in a ``sh`` block of the docs and of the
README's examples runs as printed (exit 0), in order, from a fresh directory that holds the
demo voyages."""

from __future__ import annotations

import os
import re
import shlex
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"
sys.path.insert(0, str(DOCS))


def test_cli_reference_is_current():
    # in a fresh process: other tests may have changed the environment of this one
    code = "import sys; sys.path.insert(0, 'docs'); import gen_cli_reference as g; " \
           "sys.stdout.write(g.render())"
    env = {k: v for k, v in os.environ.items() if k not in ("COLUMNS", "LINES")}
    rendered = subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=env, check=True,
                              capture_output=True, text=True, encoding="utf-8").stdout
    current = (DOCS / "cli-reference.md").read_text(encoding="utf-8")
    assert rendered == current, (
        "docs/cli-reference.md is stale: run python docs/gen_cli_reference.py")


def _sh_commands(path: Path) -> list[str]:
    text = path.read_text(encoding="utf-8")
    if path == ROOT / "README.md":  # the quick start installs; its commands run in .ci/run
        head, _, rest = text.partition("## Quick start")
        text = head + rest.partition("\n## ")[2]
    lines = []
    for block in re.findall(r"```sh\n(.*?)```", text, re.S):
        for line in block.splitlines():
            line = line.split("  #", 1)[0].strip()
            if line and not line.startswith("#"):
                lines.append(line)
    return lines


DOC_FILES = sorted(p for p in [ROOT / "README.md", *DOCS.glob("*.md")] if _sh_commands(p))


@pytest.mark.parametrize("doc", DOC_FILES, ids=lambda p: p.name)
def test_documented_commands_run_as_printed(doc, tmp_path):
    (tmp_path / "demo_voyages").symlink_to(ROOT / "demo_voyages")
    env = dict(os.environ, NO_COLOR="1", PASSAGELOG_DB=str(tmp_path / "default.sqlite"))
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    for line in _sh_commands(doc):
        words = shlex.split(line)
        if words[0] == "export":
            name, _, value = words[1].partition("=")
            env[name] = value
            continue
        assert words[0] == "passagelog", f"{doc.name}: not a passagelog command: {line}"
        result = subprocess.run([sys.executable, "-m", "passagelog", *words[1:]], cwd=tmp_path,
                                env=env, capture_output=True, text=True, timeout=120,
                                stdin=subprocess.DEVNULL)
        assert result.returncode == 0, (
            f"{doc.name}: `{line}` exited {result.returncode}\n{result.stderr[-2000:]}")
