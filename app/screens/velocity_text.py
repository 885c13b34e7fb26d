"""Words and numbers of the velocity and water-surface steps, from the service's view-models.

Pure functions (no Kivy): each takes the plain values the service hands the screen (see
:func:`stakeline.app.service.gauging.gauging_view`) and gives the text a person reads -- the
trade's plain words, every number with its unit.
"""

from __future__ import annotations

from datetime import datetime

POINT_WORDS = {"surface": "surface", "v02": "0.2 depth", "v06": "0.6 depth", "v08": "0.8 depth",
               "bed": "bed"}  # fmt: skip
"""Where in the vertical each point velocity is read."""

METHODS = ("one-point", "two-point", "three-point", "surface")
"""The methods the crew chooses from, in chip order."""

SEVERITY_WORDS = {"block": "MUST FIX", "warn": "LOOK AT", "note": "NOTE"}

READ_WORDS = {"none": "to read", "partial": "part read", "complete": "read"}

HISTORY_ACTIONS = {"add": "entered", "correct": "changed", "remove": "removed"}

SHARE_LIMIT, SHARE_AIM = 10.0, 5.0
"""A panel's share of the discharge (%): over the limit is marked; the aim is at most 5 %
(USGS practice: no panel over 10 %, ideally 5 %; common practice)."""


def method_words(method: str | None, coefficient: float = 0.85) -> str:
    """The method in words: ``"1 point (0.6)"``, ``"Surface × 0.85"``...

    >>> method_words("two-point"), method_words("surface", 0.86)
    ('2 points (0.2, 0.8)', 'Surface × 0.86')
    """
    words = {
        "one-point": "1 point (0.6)",
        "two-point": "2 points (0.2, 0.8)",
        "three-point": "3 points (0.2, 0.6, 0.8)",
        "surface": f"Surface × {coefficient:g}",
        "five-point": "5 points",
    }
    return words.get(method or "", method or "—")


def method_chip(method: str, coefficient: float = 0.85) -> str:
    """The method's chip text on two short lines (four chips share one row).

    >>> method_chip("three-point")
    '3 points\n0.2 0.6 0.8'
    """
    chips = {
        "one-point": "1 point\n0.6",
        "two-point": "2 points\n0.2 0.8",
        "three-point": "3 points\n0.2 0.6 0.8",
        "surface": f"Surface\n× {coefficient:g}",
    }
    return chips.get(method, method_words(method, coefficient))


def number(value: float | None, decimals: int = 3) -> str:
    """``value`` with ``decimals`` places; a dash for None (no "-0.000").

    >>> number(None), number(-0.0001), number(1.23456)
    ('—', '0.000', '1.235')
    """
    if value is None:
        return "—"
    if abs(value) < 0.5 * 10.0**-decimals:
        value = 0.0
    return f"{value:.{decimals}f}"


def share_text(percent: float | None) -> str:
    """A panel's share: ``"12.3 % over 10"``, ``"6.1 %"``, or a dash.

    >>> share_text(12.34), share_text(6.1), share_text(None)
    ('12.3 % over 10', '6.1 %', '—')
    """
    if percent is None:
        return "—"
    return f"{percent:.1f} %" + (" over 10" if percent > SHARE_LIMIT else "")


def share_tone(percent: float | None) -> str:
    """``flagged`` over 10 %, ``unsaved`` (caution) over 5 %, else ``none``."""
    if percent is None:
        return "none"
    return "flagged" if percent > SHARE_LIMIT else ("unsaved" if percent > SHARE_AIM else "none")


def vertical_row(vertical: dict, unit: str, current: float | None, screen=None) -> dict:
    """One wet vertical in the list: station, depth, velocity, its panel's Q and share, state."""
    state = READ_WORDS.get(vertical["read"], vertical["read"])
    counted = vertical["velocity"] is not None  # its panel is in the discharge
    if vertical.get("wading") and vertical["wading"]["severity"] == "warn":
        state = "WADING LIMIT"
    return {
        "station": vertical["station"],
        "station_text": f"{vertical['station']:g}",
        "depth_text": number(vertical["depth"], 2),
        "velocity_text": number(vertical["velocity"]),
        "discharge_text": number(vertical["discharge"] if counted else None, 4),
        "share_text": share_text(vertical["percent"] if counted else None),
        "share_tone": share_tone(vertical["percent"] if counted else None),
        "state_text": state,
        "tone": "flagged" if state == "WADING LIMIT" else (
            "saved" if vertical["read"] == "complete" else "none"),
        "current": current is not None and abs(vertical["station"] - current) < 1e-6,
        "screen": screen,
    }  # fmt: skip


def summary_rows(state: dict) -> list[tuple[str, str]]:
    """(name, value) of the live totals: discharge so far with its ±, mean velocity, the wet
    verticals read."""
    unit = state["unit"]
    discharge = number(state["discharge"])
    if state.get("plus_minus") is not None:
        discharge += f" ± {number(state['plus_minus'])}"
    return [
        ("Measured discharge so far", f"{discharge} {unit}³/s"),
        ("Mean velocity", f"{number(state['mean_velocity'])} {unit}/s"),
        ("Wet verticals read", f"{state['read']} of {state['wet']}"),
    ]


def wading_text(state: dict) -> str:
    """The wading warnings to show at once (the limit reached first, then those near it);
    empty when there are none."""
    found = sorted(state.get("wading") or (), key=lambda f: f["severity"] != "warn")
    lines = []
    for finding in found:
        head = "DO NOT WADE" if finding["severity"] == "warn" else "Near the wading limit"
        lines.append(f"[b]{head}:[/b] {finding['message']}. {finding['suggestion'].capitalize()}.")
    return "\n".join(lines)


def findings_text(state: dict, shown: int = 6) -> str:
    """The gauging's findings other than wading, most serious first (at most ``shown``, then
    how many more), one per line."""
    found = [f for f in state.get("findings") or () if f["kind"] != "wading"]
    if not found:
        return "No findings on the velocities so far."
    order = {"block": 0, "warn": 1, "note": 2}
    found.sort(key=lambda f: order.get(f["severity"], 3))
    lines = [
        f"[b]{SEVERITY_WORDS.get(f['severity'], f['severity'])}[/b] · {f['message']}"
        for f in found[:shown]
    ]
    if len(found) > shown:
        lines.append(f"… and {len(found) - shown} more on the Checks step.")
    return "\n".join(lines)


def point_value(point: dict | None, part: str) -> str:
    """Text for a point's field: its velocity (3 decimals) or its revolutions or seconds as
    typed; empty when not read."""
    if not point:
        return ""
    value = point.get(part)
    if value is None:
        return ""
    return f"{value:.3f}" if part == "velocity" else f"{value:g}"


def history_lines(versions: list[dict], unit: str) -> list[str]:
    """One line per version of a vertical, oldest first (local time, what, the points)."""
    lines = []
    for v in versions:
        when = datetime.fromisoformat(v["modified"]).astimezone().strftime("%H:%M")
        what = HISTORY_ACTIONS.get(v["action"], v["action"])
        if v["action"] == "remove":
            lines.append(f"{when}  {what}" + ("  (undone)" if v["undone"] else ""))
            continue
        parts = []
        for name, reading in (v.get("points") or {}).items():
            where = POINT_WORDS.get(name, name)
            if "velocity" in reading:
                parts.append(f"{where} {reading['velocity']:.3f} {unit}/s")
            else:
                parts.append(f"{where} {reading['revolutions']:g} rev in {reading['seconds']:g} s")
        text = f"{when}  {what}: {method_words(v['method'])}"
        text += f" · {'; '.join(parts)}" if parts else ""
        text += f" · angle {v['angle']:g}°" if v.get("angle") is not None else ""
        text += f" · rod depth {v['depth']:.2f} {unit}" if v.get("depth") is not None else ""
        text += f" · {v['note']}" if v.get("note") else ""
        lines.append(text + ("  (undone)" if v["undone"] else ""))
    return lines


def slope_rows(surface: dict) -> list[tuple[str, str]]:
    """(name, value) of the fitted water-surface slope, or [] when there is none yet."""
    slope, unit = surface.get("slope"), surface["unit"]
    if not slope:
        return []
    return [
        ("Water-surface slope", f"{slope['slope']:.5f} ± {slope['plus_minus']:.5f}"),
        ("Fall over the reach", f"{slope['fall']:.3f} {unit}"),
        ("Length along the stream", f"{slope['length']:.1f} {unit}"),
        ("Points levelled", f"{slope['points']}"),
    ]
