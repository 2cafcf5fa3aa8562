"""Figures worded the same way in every output: the terminal, the sheet and the cards read them from here.

One figure has one printed form: a standby drain, a reference run or a meter
window reads the same wherever it appears.
"""

from __future__ import annotations

import re
from typing import Sequence

from sheetgen.circuits.loads import kind_of
from sheetgen.inputs.units import format_quantity

EN_DASH = "\u2013"


def refs_text(refs: Sequence[str]) -> str:
    """``R4, R5`` for two, ``LED1–LED6`` for a consecutive run of three or more."""
    parsed = [re.fullmatch(r"([A-Z]+)(\d+)", r) for r in refs]
    if len(refs) >= 3 and all(parsed) and len({m[1] for m in parsed}) == 1:
        nums = [int(m[2]) for m in parsed]
        if nums == list(range(nums[0], nums[0] + len(nums))):
            return f"{refs[0]}{EN_DASH}{refs[-1]}"
    return ", ".join(refs)


def standby_text(i_a: float) -> str:
    """Standby drain as printed: leakage below a nanoamp is no drain worth a number."""
    return format_quantity(i_a, "A") if i_a >= 1e-9 else "under 1 nA (no real drain)"


def watts(p_w: float) -> str:
    """A dissipation as printed (``59.1 mW``, never ``0.06 W`` or ``0.00 W``); below a microwatt the digits
    mean nothing at the bench."""
    return format_quantity(p_w, "W") if p_w >= 1e-6 else "under 1 µW"


def volts_range(lo_hi: tuple[float, float]) -> str:
    """A meter reading window, e.g. ``10.85–14.45 V``; a window at 0 V reads ``0.00–0.00 V``, never ``-0.00``."""
    lo, hi = (0.0 if abs(v) < 0.005 else v for v in lo_hi)
    return f"{lo:.2f}{EN_DASH}{hi:.2f} V"


NBSP = "\u00a0"
_NUMBER_UNIT = re.compile(r"(\d) (?=(?:[pnµmkM]?(?:Ω|V|A|W|F|s|J)|°C|mm²|%|AWG|×)(?![A-Za-z]))")


def keep_units(text: str) -> str:
    """Join each number to its unit with a no-break space, so ``125 °C`` never wraps apart on a page."""
    return _NUMBER_UNIT.sub(rf"\1{NBSP}", text)


def led_dimming_words(report) -> str | None:
    """How bright LED strings run at nominal supply, given they are sized for the top of the range."""
    if report.led_current_a is None:
        return None
    spec = report.design.spec
    rated = spec.load.current_a
    return (f"each LED string carries {format_quantity(report.led_current_a, 'A')} at "
            f"{spec.supply.nominal_v:g} V, {report.led_current_a / rated:.0%} of its "
            f"{format_quantity(rated, 'A')} rating: sized so that at {spec.supply.max_v:g} V it stays within it")


def led_string_words(report) -> str | None:
    """How unequal the LED strings may run with their LEDs at opposite ends of one bin; None for one string."""
    share = report.design.strings
    if share is None or len(share.typical_a) < 2:
        return None
    spec = report.design.spec
    currents = [i for row in share.nominal_a for i in row]
    return (f"with one string's LEDs at the bottom of their {format_quantity(share.vf_spread_v, 'V')} "
            f"forward-voltage bin and another's at the top, the strings carry "
            f"{format_quantity(min(currents), 'A')} to {format_quantity(max(currents), 'A')} at "
            f"{spec.supply.nominal_v:g} V, the dimmest {share.ratio:.0%} of the brightest (at least "
            f"{share.ratio_min:.0%} wanted), and none more than {format_quantity(share.max_a, 'A')} "
            f"(at {share.max_where})")


def draws_bin_words(report) -> str | None:
    """What the tolerance draws assume of the LEDs' forward voltage; None for a lamp.

    The draws take every LED from one forward-voltage bin of its colour, the spread
    within one bag; LEDs from mixed lots can lie further apart than that.
    """
    spec = report.design.spec
    if spec.load.kind != "led":
        return None
    width = kind_of(spec.load).vf_spread_v(spec.load)
    return (f"the LEDs are taken from one {format_quantity(width, 'V')} forward-voltage bin: "
            "buy them as one lot, since LEDs from mixed lots may run further apart")


def current_stage_words(report) -> str | None:
    """What sets the LED current in a current stage; None for a switch driven into saturation."""
    d = report.design
    emitter = d.netlist.by_role("emitter")
    if not emitter:
        return None
    re = emitter[0]
    spec = d.spec
    return (f"{re.ref} ({format_quantity(re.value, 'ohm')}) in Q1's emitter holds each string at or under "
            f"{format_quantity(spec.load.current_a, 'A')} up to {spec.supply.max_v:g} V; Q1 never saturates, "
            "so its gain does not set the brightness")
