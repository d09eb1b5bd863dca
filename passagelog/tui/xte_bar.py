"""A one-line bar of cross-track error drawn against the leg's port and starboard limits."""

from __future__ import annotations

from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

from passagelog.nav.units import NM_M


def bar_text(xte_m: float | None, port_m: float | None, stbd_m: float | None,
             width: int) -> Text:
    """``P 0.50 ├────┼──●─┤ 0.50 S``: the track line in the middle, the limits at the
    ends of the inner span, a margin of half a limit beyond them; XTE + is starboard (right)."""
    port = port_m or stbd_m or NM_M
    stbd = stbd_m or port_m or NM_M
    left_label = f"P {port / NM_M:.2f} " if port_m else "P –    "
    right_label = f" {stbd / NM_M:.2f} S" if stbd_m else "    – S"
    span = max(11, width - len(left_label) - len(right_label))
    # the inner span covers [-port, +stbd] in the middle 2/3 of the bar
    inner = max(5, (span * 2) // 3)
    margin_l = (span - inner) // 2
    centre = margin_l + round(inner * port / (port + stbd))
    left_edge, right_edge = margin_l, margin_l + inner - 1
    cells = ["─"] * span
    for i in range(0, left_edge):
        cells[i] = "╌"
    for i in range(right_edge + 1, span):
        cells[i] = "╌"
    cells[left_edge], cells[right_edge], cells[centre] = "├", "┤", "┼"
    text = Text(left_label, style="bold")
    marker_at = None
    outside = False
    if xte_m is not None:
        if xte_m >= 0:
            pos = centre + xte_m / stbd * (right_edge - centre)
            outside = stbd_m is not None and xte_m > stbd_m
        else:
            pos = centre + xte_m / port * (centre - left_edge)
            outside = port_m is not None and -xte_m > port_m
        marker_at = int(round(max(0, min(span - 1, pos))))
    for i, ch in enumerate(cells):
        if i == marker_at:
            text.append("◆", style="bold reverse" if outside else "bold")
        else:
            text.append(ch, style="dim" if ch == "╌" else "")
    text.append(right_label, style="bold")
    return text


class XteBar(Widget):
    """XTE against the limits; set :attr:`xte_m`, :attr:`port_m`, :attr:`stbd_m`."""

    DEFAULT_CSS = "XteBar { height: 1; }"

    xte_m: reactive[float | None] = reactive(None)
    port_m: reactive[float | None] = reactive(None)
    stbd_m: reactive[float | None] = reactive(None)

    def render(self) -> Text:
        return bar_text(self.xte_m, self.port_m, self.stbd_m, self.size.width)
