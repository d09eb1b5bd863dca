"""A small terminal chart: series of points drawn in Braille dots (2 x 4 per cell).

No plotting library: the data are binned to dots with numpy, so a million points cost a few
milliseconds, and the output is plain text (deterministic in snapshots). Lines are drawn by
sampling, which is enough for a track and a plan at terminal resolution.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

# dot bit of the Braille cell at (row 0..3, column 0..1), Unicode U+2800 block
_BITS = np.array([[0x01, 0x08], [0x02, 0x10], [0x04, 0x20], [0x40, 0x80]], dtype=np.uint8)


@dataclass(frozen=True)
class Series:
    x: np.ndarray
    y: np.ndarray
    style: str = ""
    label: str = ""
    connect: bool = False  # sample the straight lines between successive points


def _densify(x: np.ndarray, y: np.ndarray, steps: int) -> tuple[np.ndarray, np.ndarray]:
    if len(x) < 2:
        return x, y
    t = np.linspace(0.0, 1.0, steps)
    xs = (x[:-1, None] + (x[1:] - x[:-1])[:, None] * t).ravel()
    ys = (y[:-1, None] + (y[1:] - y[:-1])[:, None] * t).ravel()
    return xs, ys


def render_chart(series: list[Series], width: int, height: int, *,
                 x_range: tuple[float, float] | None = None,
                 y_range: tuple[float, float] | None = None,
                 x_labels: tuple[str, str] = ("", ""), y_labels: tuple[str, str] = ("", ""),
                 equal_aspect: float | None = None) -> Text:
    """The chart as text ``height`` lines of ``width`` cells (axes labels included).

    ``equal_aspect``: make one unit of y as long as ``equal_aspect`` units of x on screen
    (a terminal cell is about twice as tall as wide), e.g. cos(latitude) for a chart of
    longitude against latitude.
    """
    label_w = max(len(y_labels[0]), len(y_labels[1]), 1) + 1
    plot_w = max(4, width - label_w)
    plot_h = max(2, height - 1)
    dots_w, dots_h = plot_w * 2, plot_h * 4
    xs_all = [s.x[np.isfinite(s.x) & np.isfinite(s.y)] for s in series]
    ys_all = [s.y[np.isfinite(s.x) & np.isfinite(s.y)] for s in series]
    if x_range is None:
        xv = np.concatenate(xs_all) if xs_all else np.array([0.0])
        x_range = (float(xv.min()), float(xv.max())) if xv.size else (0.0, 1.0)
    if y_range is None:
        yv = np.concatenate(ys_all) if ys_all else np.array([0.0])
        y_range = (float(yv.min()), float(yv.max())) if yv.size else (0.0, 1.0)
    x0, x1 = x_range
    y0, y1 = y_range
    if x1 - x0 <= 0:
        x0, x1 = x0 - 0.5, x1 + 0.5
    if y1 - y0 <= 0:
        y0, y1 = y0 - 0.5, y1 + 0.5
    if equal_aspect:
        # cells are ~2:1, dots are then ~ square: x units per dot = y units per dot * aspect
        per_dot = max((x1 - x0) / dots_w / equal_aspect, (y1 - y0) / dots_h)
        cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
        x0, x1 = cx - per_dot * equal_aspect * dots_w / 2, cx + per_dot * equal_aspect * dots_w / 2
        y0, y1 = cy - per_dot * dots_h / 2, cy + per_dot * dots_h / 2
    bits = np.zeros((plot_h, plot_w), dtype=np.uint8)
    owner = np.full((plot_h, plot_w), -1, dtype=np.int16)
    for k, s in enumerate(series):
        x = np.asarray(s.x, dtype=float)
        y = np.asarray(s.y, dtype=float)
        if s.connect and 1 < len(x) <= dots_w * 4:
            # few points: sample the lines between them (many points draw their own line)
            x, y = _densify(x, y, max(2, 2 * dots_w // (len(x) - 1) + 2))
        ok = np.isfinite(x) & np.isfinite(y)
        px = np.floor((x[ok] - x0) / (x1 - x0) * (dots_w - 1) + 0.5).astype(np.int64)
        py = np.floor((y1 - y[ok]) / (y1 - y0) * (dots_h - 1) + 0.5).astype(np.int64)
        inside = (px >= 0) & (px < dots_w) & (py >= 0) & (py < dots_h)
        px, py = px[inside], py[inside]
        if px.size == 0:
            continue
        cell = np.unique((py // 4) * plot_w * 8 + (px // 2) * 8 + (py % 4) * 2 + (px % 2))
        row, rest = np.divmod(cell, plot_w * 8)
        col, sub = np.divmod(rest, 8)
        dy, dx = np.divmod(sub, 2)
        np.bitwise_or.at(bits, (row, col), _BITS[dy, dx])
        owner[row, col] = k
    text = Text()
    for r in range(plot_h):
        label = y_labels[0] if r == 0 else (y_labels[1] if r == plot_h - 1 else "")
        text.append(label.rjust(label_w - 1) + "│", style="dim")
        for c in range(plot_w):
            b = int(bits[r, c])
            if b:
                text.append(chr(0x2800 + b), style=series[owner[r, c]].style)
            else:
                text.append(" ")
        text.append("\n")
    bottom = " " * (label_w - 1) + "└"
    left, right = x_labels
    gap = max(1, plot_w - len(left) - len(right))
    text.append(bottom + left + " " * gap + right, style="dim")
    return text


class Chart(Widget):
    """A chart widget; give it a function of (width, height) returning the Text."""

    DEFAULT_CSS = "Chart { height: 1fr; }"
    version: reactive[int] = reactive(0)

    def __init__(self, *args, **kwargs) -> None:
        super().__init__(*args, **kwargs)
        self.painter = None
        self._cache: tuple | None = None

    def set_painter(self, painter) -> None:
        self.painter = painter
        self._cache = None
        self.version += 1
        self.refresh()

    def render(self) -> Text:
        if self.painter is None:
            return Text("Nothing to plot yet.", style="dim")
        key = (self.size.width, self.size.height)
        if self._cache is None or self._cache[0] != key:
            self._cache = (key, self.painter(*key))
        return self._cache[1]
