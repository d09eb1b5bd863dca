"""The watch summary: one fix (the latest by default) against the plan in force."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from passagelog.errors import InputError
from passagelog.nav.geodesic import inverse
from passagelog.review.results import PHASES, Review, _f, iso_z


#: What each reason of a suspect fix means, in a few words (for status lines and alerts).
SUSPECT_WHY = {
    "logbook": "marked suspect in the logbook",
    "speed": "implausible speed from the fix before",
    "no-foot": "no cross-track foot on its leg",
}

@dataclass(frozen=True)
class Status:
    """What a watch officer asks for at one fix.

    ``side`` is ``"R"`` (starboard of the leg) or ``"L"`` (port) or ``""`` on the line;
    ``xtl_m`` the limit on that side (None when the leg has none). ``cmg_window``/
    ``smg_window_kn`` are made good over the review's window (``window_s``; less, as
    ``window_used_s`` says, early in the voyage or after suspect fixes); ``set``/
    ``drift_kn`` the vector mean of the currents found over the same window (None where
    heading and speed through the water were not logged). Times are float seconds (UTC).
    ``revision`` indexes ``Review.routes``; ``revision_number`` is the number rows give it.
    """

    time_s: float
    lat: float
    lon: float
    phase: str
    suspect: bool
    revision: int
    leg: int
    legs: int
    from_wp: str
    to_wp: str
    xte_m: float
    side: str
    xtl_m: float | None
    inside_xtl: bool
    along_m: float
    leg_to_go_m: float
    dtw_m: float
    btw: float | None
    route_to_go_m: float
    cmg_window: float | None
    smg_window_kn: float | None
    window_s: float
    window_used_s: float | None
    eta_wp_plan_s: float | None
    eta_dest_plan_s: float | None
    eta_wp_smg_s: float | None
    eta_dest_smg_s: float | None
    delay_s: float | None
    set: float | None
    drift_kn: float | None
    destination: str
    revision_number: int | None = None  # as rows number it (see Review.revision_numbers)
    #: why the fix is suspect (``logbook``, ``speed``, ``no-foot``; None when it is not)
    suspect_reason: str | None = None

    def row(self) -> dict:
        return {
            "time_utc": iso_z(self.time_s), "lat": self.lat, "lon": self.lon,
            "phase": self.phase, "suspect": self.suspect, "suspect_reason": self.suspect_reason,
            "revision": self.revision if self.revision_number is None else self.revision_number,
            "leg": self.leg, "legs": self.legs, "from_wp": self.from_wp, "to_wp": self.to_wp,
            "xte_m": _f(self.xte_m), "side": self.side, "xtl_m": self.xtl_m,
            "inside_xtl": self.inside_xtl, "along_m": _f(self.along_m),
            "leg_to_go_m": _f(self.leg_to_go_m), "dtw_m": _f(self.dtw_m), "btw": self.btw,
            "route_to_go_m": _f(self.route_to_go_m), "cmg_window": self.cmg_window,
            "smg_window_kn": self.smg_window_kn, "window_s": self.window_s,
            "window_used_s": self.window_used_s,
            "eta_wp_plan_utc": iso_z(self.eta_wp_plan_s),
            "eta_dest_plan_utc": iso_z(self.eta_dest_plan_s),
            "eta_wp_smg_utc": iso_z(self.eta_wp_smg_s),
            "eta_dest_smg_utc": iso_z(self.eta_dest_smg_s), "delay_s": self.delay_s,
            "set": self.set, "drift_kn": self.drift_kn, "destination": self.destination,
        }


def status_of(review: Review, row: int = -1) -> Status:
    fr = review.fixes
    n = len(fr)
    if n == 0:
        raise InputError("there are no fixes to report against the plan")
    if not -n <= row < n:
        raise InputError(f"fix row {row} does not exist; the review has {n} fixes")
    i = row % n
    t = fr.time_s
    r, leg = int(fr.revision[i]), int(fr.leg[i])
    route = review.routes[r]
    names = [w.name for w in route.waypoints]
    window = review.settings.window_s
    good = ~fr.suspect | review.settings.include_suspect
    # made good over the window, from the first good fix in it (not before departure)
    cand = np.flatnonzero(good[: i + 1] & (fr.phase[: i + 1] != 0))
    cmg = None
    used = None
    if cand.size:
        pos = min(int(np.searchsorted(t[cand], t[i] - window, side="left")), cand.size - 1)
        j = int(cand[pos])
        if j < i and t[j] < t[i]:
            used = float(t[i] - t[j])
            d, azi, _ = inverse(float(fr.lat[j]), float(fr.lon[j]), float(fr.lat[i]),
                                float(fr.lon[i]), review.settings.earth)
            cmg = azi if d > 0 else None
    lo = np.searchsorted(t, t[i] - window, side="left")
    sel = np.arange(lo, i + 1)
    sel = sel[good[sel] & np.isfinite(fr.drift_kn[sel])]
    set_deg = drift = None
    if sel.size:
        s_rad = np.radians(fr.set[sel])
        dk = fr.drift_kn[sel]
        east = float(np.mean(np.where(dk > 0, dk * np.sin(s_rad), 0.0)))
        north = float(np.mean(np.where(dk > 0, dk * np.cos(s_rad), 0.0)))
        drift = math.hypot(east, north)
        set_deg = math.degrees(math.atan2(east, north)) % 360.0 if drift > 0 else None
    x = float(fr.xte_m[i])
    return Status(
        time_s=float(t[i]), lat=float(fr.lat[i]), lon=float(fr.lon[i]),
        phase=PHASES[int(fr.phase[i])], suspect=bool(fr.suspect[i]),
        revision=r, revision_number=review.revision_numbers[r], leg=leg,
        legs=len(route.legs), from_wp=names[leg - 1], to_wp=names[leg], xte_m=x,
        side="R" if x > 0 else "L" if x < 0 else "", xtl_m=_f(fr.xtl_m[i]),
        inside_xtl=bool(fr.inside_xtl[i]), along_m=float(fr.along_m[i]),
        leg_to_go_m=float(fr.leg_to_go_m[i]), dtw_m=fr.value("dtw_m", i),
        btw=_f(fr.value("btw", i)),
        route_to_go_m=float(fr.route_to_go_m[i]), cmg_window=cmg,
        smg_window_kn=_f(fr.value("smg_window_kn", i)), window_s=window, window_used_s=used,
        eta_wp_plan_s=_f(fr.eta_wp_plan_s[i]), eta_dest_plan_s=_f(fr.eta_dest_plan_s[i]),
        eta_wp_smg_s=_f(fr.value("eta_wp_smg_s", i)),
        eta_dest_smg_s=_f(fr.value("eta_dest_smg_s", i)),
        delay_s=_f(fr.delay_s[i]), set=set_deg, drift_kn=drift, destination=names[-1],
        suspect_reason=next((s.reason for s in review.suspects if s.fix == i), None)
        if fr.suspect[i] else None,
    )
