"""A ground-switched feed in a vehicle: the lamp already on the door-switch wire, and the door test.

A door-switch wire that is grounded when the door opens already carries the
vehicle's own courtesy lamp from the always-on supply.  The builder must know
what to do with that lamp and how to prove the fader with the door itself; the
readings quoted are the simulated bench readings, so the words match the table.
"""

from __future__ import annotations

from sheetgen.inputs.units import format_quantity
from sheetgen.sizing.report import BenchReading
from sheetgen.sizing.design import Design

__all__ = ["with_door_test"]


def _about(lo_hi: tuple[float, float]) -> str:
    """A bench window in a step's words, to 0.1 V; a reading that rounds to zero is 0.0, never -0.0."""
    lo, hi = (0.0 if abs(v) < 0.05 else v for v in lo_hi)
    if hi < 0.05:
        return "about 0 V"
    return f"{lo:.1f}–{hi:.1f} V"


def _steps(design: Design, bench: tuple[BenchReading, ...], *, short: bool) -> list[str]:
    at = {b.net: b for b in bench}
    feed, switched = at["feed"], at["switched"]
    fade_in = format_quantity(design.fade_in_s, "s")
    fade_out = format_quantity(design.fade_out_s, "s")
    tp1, tp6 = feed.label.split()[0], switched.label.split()[0]
    vehicle = design.spec.install == "vehicle"
    lamp = "The vehicle's own courtesy lamp hangs" if vehicle else "Where a lamp already hangs"
    own = "the vehicle's lamp" if vehicle else "that lamp"
    door = "door" if vehicle else "door or switch"
    if short:
        return [
            "Door lamp on the switch wire: leave it (instant light too) or take its bulb out (fade only); never cut "
            "the wire.",
            f"Door test, meter on {tp1}: shut {_about(feed.off_v)}, light off; open {_about(feed.on_v)}, {tp6} "
            f"{_about(switched.on_v)}, fades up in {fade_in}; shut again: fades out in {fade_out}.",
        ]
    return [
        f"{lamp} on the switch wire from the always-on supply, leave it in if you want its instant light as well: "
        "it snaps on with the switch while this light fades. Take its bulb out (keep the holder and the wire) for "
        "the fade alone: R5 holds the input off without it. Do not cut or move the switch wire: a door-open "
        "warning or an alarm may watch it; where the vehicle checks its lamps for failure, leave the bulb in.",
        f"Test with the {door} switch, meter on {feed.label} (black lead on ground). Shut (switch open): {tp1} reads "
        f"{_about(feed.off_v)} (held up by {own} or R5), {tp6} {_about(switched.off_v)}, and the light "
        f"is off. Open the door: {tp1} drops to {_about(feed.on_v)}, {tp6} rises to {_about(switched.on_v)} and the "
        f"light fades up over about {fade_in}. Shut it: the light fades out over about {fade_out}. If {own} "
        "was left in, it comes on and goes out at once beside the fading light.",
    ]


def with_door_test(steps: tuple[str, ...], design: Design, bench: tuple[BenchReading, ...], *,
                   short: bool) -> tuple[str, ...]:
    """The wiring steps with the door-switch advice and test after them, for a ground-switched feed."""
    if design.topology.trigger != "ground":
        return steps
    return (*steps, *_steps(design, bench, short=short))
