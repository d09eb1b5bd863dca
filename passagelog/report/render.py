"""Render tables (lists of records) as CSV, Markdown, JSON and self-contained HTML.

Rendering is separate from the figures: callers hand over records (dicts with stable keys)
and the column names to show. Every document meant for people (Markdown, HTML) carries the
safety caution and its provenance; CSV and JSON carry data only.
"""

from __future__ import annotations

import csv
import html
import io
import json
import math
from dataclasses import dataclass, field
from datetime import datetime, timezone
from typing import Any, Iterable, Sequence

from passagelog import CAUTION, __version__


@dataclass(frozen=True)
class Provenance:
    """Where a report's figures come from."""

    source: str = ""  # logbook file or input files
    voyage: str = ""
    plan: str = ""  # plan name and revision
    verify: str = ""  # result of the logbook's integrity check, if any
    generated_utc: datetime = field(default_factory=lambda: datetime.now(timezone.utc))
    version: str = __version__

    def items(self) -> list[tuple[str, str]]:
        out = [
            ("Source", self.source),
            ("Voyage", self.voyage),
            ("Plan", self.plan),
            ("Logbook check", self.verify),
            ("Generated (UTC)", self.generated_utc.strftime("%Y-%m-%dT%H:%M:%SZ")),
            ("passagelog", self.version),
        ]
        return [(k, v) for k, v in out if v]


def _cell(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        if not math.isfinite(value):
            return ""
        return f"{value:g}" if abs(value) < 1e15 else repr(value)
    return str(value)


def to_csv(records: Iterable[dict], columns: Sequence[str]) -> str:
    """CSV with a header row; empty cells for missing values."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(columns)
    for rec in records:
        writer.writerow([_cell(rec.get(c)) for c in columns])
    return buf.getvalue()


def to_json(records: Iterable[dict]) -> str:
    """A JSON array of the records (NaN refused)."""
    return json.dumps(list(records), ensure_ascii=False, allow_nan=False, indent=1)


def _md_escape(text: str) -> str:
    return text.replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ")


def to_markdown(records: Iterable[dict], columns: Sequence[str], *, title: str = "",
                provenance: Provenance | None = None) -> str:
    """A Markdown table with title, provenance and the caution."""
    lines = []
    if title:
        lines += [f"# {_md_escape(title)}", ""]
    if provenance:
        lines += [f"- {k}: {_md_escape(v)}" for k, v in provenance.items()] + [""]
    lines.append("| " + " | ".join(columns) + " |")
    lines.append("| " + " | ".join("---" for _ in columns) + " |")
    for rec in records:
        lines.append("| " + " | ".join(_md_escape(_cell(rec.get(c))) for c in columns) + " |")
    lines += ["", f"> Caution: {CAUTION}", ""]
    return "\n".join(lines)


_CSS = """
body { font-family: "DejaVu Sans", Arial, sans-serif; margin: 1.5em; color: #1b1b1b; }
h1 { font-size: 1.4em; margin-bottom: .2em; }
h2 { font-size: 1.1em; margin-top: 1.6em; border-bottom: 1px solid #999; }
table { border-collapse: collapse; font-size: .82em; margin: .5em 0; }
th, td { border: 1px solid #bbb; padding: .15em .45em; text-align: right; }
th { background: #e8eef2; }
td.text, th.text { text-align: left; }
.caution { border: 2px solid #8a5a00; background: #fff7e0; padding: .5em .8em; margin: 1em 0; }
.prov td { text-align: left; border: none; padding: 0 .8em 0 0; }
.figure { margin: .6em 0; page-break-inside: avoid; }
.empty { color: #555; font-style: italic; }
@page { size: A4 landscape; margin: 12mm; }
@media print { body { margin: 0; } h2 { page-break-after: avoid; } }
"""


def esc(value: Any) -> str:
    """User text made safe for HTML."""
    return html.escape(_cell(value), quote=True)


def html_table(records: Sequence[dict], columns: Sequence[str], *,
               headers: dict[str, str] | None = None, text_columns: Iterable[str] = (),
               empty: str = "none") -> str:
    """An HTML table; cells are escaped; ``text_columns`` are left-aligned."""
    if not records:
        return f'<p class="empty">{esc(empty)}</p>'
    text_columns = set(text_columns)
    headers = headers or {}
    head = "".join(
        f'<th class="{"text" if c in text_columns else "num"}">{esc(headers.get(c, c))}</th>'
        for c in columns
    )
    body = []
    for rec in records:
        cells = "".join(
            f'<td class="{"text" if c in text_columns else "num"}">{esc(rec.get(c))}</td>'
            for c in columns
        )
        body.append(f"<tr>{cells}</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>"


def html_document(title: str, sections: Sequence[tuple[str, str]], *,
                  provenance: Provenance | None = None) -> str:
    """A self-contained HTML page: ``sections`` are (heading, already-safe HTML body).

    Section bodies must come from :func:`html_table`, :func:`esc` or our own SVG; the
    heading is escaped here.
    """
    prov = ""
    if provenance:
        rows = "".join(f"<tr><td>{esc(k)}</td><td>{esc(v)}</td></tr>"
                       for k, v in provenance.items())
        prov = f'<table class="prov">{rows}</table>'
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>{esc(title)}</title>",
        f"<style>{_CSS}</style></head><body>",
        f"<h1>{esc(title)}</h1>",
        prov,
        f'<div class="caution"><strong>Caution.</strong> {esc(CAUTION)}</div>',
    ]
    for heading, body in sections:
        parts.append(f"<h2>{esc(heading)}</h2>")
        parts.append(body)
    parts.append(f'<div class="caution"><strong>Caution.</strong> {esc(CAUTION)}</div>')
    parts.append("</body></html>")
    return "\n".join(parts)
