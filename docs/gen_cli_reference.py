#!/usr/bin/env python3
"""Write docs/cli-reference.md from the commands themselves (their --help texts).

Run ``python docs/gen_cli_reference.py`` after changing a command; tests/test_docs.py fails
when the committed file is stale.
"""

from __future__ import annotations

import sys
from pathlib import Path

import click

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from passagelog.cli import cli  # noqa: E402

HEADER = """# passagelog command reference

Generated from the commands' own help by `python docs/gen_cli_reference.py`; do not edit by
hand. The stable scripting contract (JSON keys, CSV columns) is described in
[cli.md](cli.md).

> Caution: passagelog is a planning and record-keeping aid, not a certified navigation
> system. Verify against official charts and publications, the ship's or aircraft's approved
> systems and the judgement of the licensed officer; local regulations prevail.
"""


def _walk(cmd: click.Command, path: list[str], ctx: click.Context | None):
    sub_ctx = click.Context(cmd, info_name=path[-1], parent=ctx, terminal_width=100,
                            max_content_width=100)
    yield path, cmd, sub_ctx
    if isinstance(cmd, click.Group):
        for name in cmd.list_commands(sub_ctx):
            sub = cmd.get_command(sub_ctx, name)
            if sub is None or sub.hidden:
                continue
            yield from _walk(sub, path + [name], sub_ctx)


def render() -> str:
    parts = [HEADER]
    for path, cmd, ctx in _walk(cli, ["passagelog"], None):
        level = "#" * min(len(path) + 1, 4)
        parts.append(f"\n{level} `{' '.join(path)}`\n")
        help_text = cmd.get_help(ctx)
        parts.append("```text\n" + help_text.rstrip() + "\n```\n")
    return "".join(parts)


def main() -> None:
    (HERE / "cli-reference.md").write_text(render(), encoding="utf-8")


if __name__ == "__main__":
    main()
