"""Single faults, simulated: what the light does and what the meter reads with one part wrong.

Every part that can fail a way a builder meets is failed one at a time: each
part open (left out, a dry joint: ``open``), shorted (a solder bridge across
its leads: ``short``), a polarised two-lead part fitted backwards (the
electrolytic, a diode, an LED: ``reversed``) and a bipolar transistor with its
collector and emitter leads exchanged (``leads_swapped``).  Each fault is a new
circuit, so the netlist is never touched: one *fault harness* is built beside
it, the same circuit with a switch for every fault (a link in series with a
part, a bridge across it, a reversed twin), and every fault is one member of
one batch whose overrides set those switches.  The operating points with the
feed on and off then come out of two batched solves, each with a meter on one
test point at a time, exactly as the bench readings are taken.

What a fault does to the light is read against the good board's steady light:
it blows the fuse, never comes on, stays on, comes on dim or too bright, or
leaves one LED string dark.  Where the steady light is unchanged, one batched
transient of those faults says whether the fades are still right (a missing
timing capacitor leaves no fade at all).

Figures and what they stand for:

* an open part is 1 TΩ in series, a short 10 mΩ across (a solder bridge of a
  few millimetres of tinned copper; common practice, no source);
* a reversed aluminium electrolytic conducts through its oxide once more than
  about a volt is across it the wrong way, and the current grows as it heats:
  it is modelled as 100 Ω across the capacitor (common practice, no source;
  a real part varies, and may vent);
* an LED has no breakdown in its card, so one fitted backwards blocks its
  string; the LEDs of one string are alike and in series, so a fault in any of
  them gives the same readings at every test point, and the string's first LED
  stands for all of them; a shorted LED gives no light of its own;
* a string's series resistor open leaves its string as dead as the first LED
  open, and is worked out so: the LED's open lead is tied, the string's nets do
  not float (a floating chain of LEDs is what Newton's method is slowest on);
* a bipolar transistor with collector and emitter exchanged is the same card
  with those pins exchanged: it works in its inverse mode, a transistor of low
  gain BR (the Ebers-Moll model; from memory); a Darlington's own collector-emitter
  diode then conducts, as in the part;
* a MOSFET's drain and source exchanged would put its body diode across the
  switch; the card has no body diode, so that fault is not offered.

The readings are for nominal parts at nominal supply (one figure each, not a
window); a reading *tells* a fault when it lies outside the bench window by more
than a meter's doubt.  Speed: both batches start from the good board's solution
(``simulate.operating_point(start=...)``), and the one transient runs only on
the faults whose steady light is right, on a harness with switches on those
parts alone.  A fault that does not settle in the simulator is named as such,
never left to stop the build.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from sheetgen.engine import simulate
from sheetgen.errors import SimulationError
from sheetgen.engine.measure import LOW, TIMES, light_times
from sheetgen.inputs.units import format_quantity
from sheetgen.model.netlist import GROUND, Netlist, Part
from sheetgen.sizing.design import Design
from sheetgen.circuits.loads import kind_of, led_strings
from sheetgen.sizing.report import BenchReading, FaultCase, FaultReading

__all__ = ["FAULTS", "R_OPEN_OHM", "R_REVERSED_CAP_OHM", "R_SHORT_OHM", "single_faults"]

#: The fault kinds, in the order a builder is likeliest to meet them: parts fitted the wrong
#: way round first, then a lead not soldered, then a bridge (common practice, no source).
FAULTS = ("reversed", "leads_swapped", "open", "short")
R_OPEN_OHM = 1e12  # an open part: 1 TΩ in series
R_SHORT_OHM = 0.01  # a solder bridge across a part (common practice, no source)
R_REVERSED_CAP_OHM = 100.0  # a reversed electrolytic's leak (common practice, no source): see the module text
C_OPEN_F = 1e-12  # a timing capacitor left out: the board's own stray capacitance, about a picofarad (from memory)
R_LINK_OHM = 1e-3  # the harness's closed switch in series with a part: 20 µV at 20 mA
R_TIE_OHM = 1e3  # an open lead's inner side held to the part's own pin: no current flows in it
R_UNPLUGGED_OHM = 1e15  # a meter not connected: far below the solver's 1e-12 S junction gmin
#: Light levels: under LOW of a good board's steady light is dark (the fade contract's 10 %);
#: a builder sees a steady light below DIM or above BRIGHT of it as wrong (common practice, no source).
DIM = 0.7
BRIGHT = 1.3
#: A fade time seen as wrong: off by more than this fraction of the good board's and by
#: more than FADE_SEEN_S (common practice, no source).
FADE_CHANGE = 0.3
FADE_SEEN_S = 0.2
#: Under this share of the good board's light a builder sees nothing at all (common practice, no source).
GLOW = 0.02
#: A fade this much shorter than the good board's is no fade at all: the light snaps.
SNAP = 0.2
#: A reading tells a fault from a good board when it lies outside the bench window by more
#: than a meter's own doubt: 3 % of the reading and 50 mV (common practice, no source).
READ_MARGIN = 0.03
READ_MARGIN_V = 0.05


@dataclass(frozen=True)
class _Fault:
    """One fault as the harness's switches set for it: ``(hook or part ref, value)`` pairs."""

    ref: str
    fault: str
    switches: tuple[tuple[str, float], ...]
    stands_for: tuple[str, ...] = ()  # parts that give the same circuit with this fault (the rest of an LED string)


def _stand_ins(nl: Netlist) -> dict[str, tuple[str, ...]]:
    """Each LED string's first LED with the others of the string it stands for; LEDs it covers map to None."""
    out: dict[str, tuple[str, ...] | None] = {}
    for chain in led_strings(nl):
        alike = [p for p in chain if p.model == chain[0].model]
        if len(alike) != len(chain):  # mixed LEDs in one string: each is failed on its own
            continue
        out[chain[0].ref] = tuple(p.ref for p in chain[1:])
        for p in chain[1:]:
            out[p.ref] = None
    return out


def _harness(nl: Netlist, meters: list[str], *,
             only: set[str] | None = None) -> tuple[Netlist, list[_Fault], dict[str, float]]:
    """The netlist with a switch for every fault, every switch as a good board has it, and the faults.

    A lead that can open runs through a *link* (1 mΩ closed, 1 TΩ open); an
    open link's inner side is *tied* to one of the part's own pins, so a lead
    left floating sits at a defined voltage and carries no current, which keeps
    the transient's matrix as well conditioned as the DC one.  A reversed or
    swapped part is a *twin* fitted the other way, its links open until its
    fault.  Returns the harness, its faults in part order, and every switch's
    good value (the parts' own values included, for the faults that change them).
    The harness's own nets are named ``<ref>#<pin>``: the simulator names a
    part's inner nodes ``<ref>:<pin>``, and the two must never meet.  With
    ``only``, the other parts go in as they are, without switches or faults:
    a smaller circuit for the transient of a few faults.
    """
    parts: list[Part] = []
    good: dict[str, float] = {}
    faults: list[_Fault] = []
    stands = _stand_ins(nl)

    def resistor(ref: str, a: str, b: str, value: float) -> None:
        parts.append(Part(ref=ref, kind="resistor", pins=(("1", a), ("2", b)), role="fault", value=value))
        good[ref] = value

    def link(ref: str, outer: str, inner: str, tie_to: str, *, closed: bool = True) -> tuple[tuple[str, float], ...]:
        """A lead through a link; returns the switches that flip it (open it, or close it when it starts open)."""
        resistor(ref, outer, inner, R_LINK_OHM if closed else R_OPEN_OHM)
        resistor(f"{ref}~tie", inner, tie_to, R_OPEN_OHM if closed else R_TIE_OHM)
        return ((ref, R_OPEN_OHM), (f"{ref}~tie", R_TIE_OHM)) if closed else \
            ((ref, R_LINK_OHM), (f"{ref}~tie", R_OPEN_OHM))

    for p in nl.parts:
        ref = p.ref
        if only is not None and ref not in only:
            parts.append(p)
        elif p.kind == "resistor":
            parts.append(p)
            good[ref] = float(p.value)
            faults += [_Fault(ref, "open", ((ref, R_OPEN_OHM),)), _Fault(ref, "short", ((ref, R_SHORT_OHM),))]
        elif p.kind == "capacitor":
            parts.append(p)
            good[ref] = float(p.value)
            resistor(f"{ref}~across", p.net("+"), p.net("-"), R_OPEN_OHM)
            faults += [_Fault(ref, "open", ((ref, C_OPEN_F),)),
                       _Fault(ref, "short", ((f"{ref}~across", R_SHORT_OHM),))]
            if "electrolytic" in p.description.lower():
                faults.append(_Fault(ref, "reversed", ((f"{ref}~across", R_REVERSED_CAP_OHM),)))
        elif p.kind in ("diode", "led", "lamp"):
            if ref in stands and stands[ref] is None:
                parts.append(p)  # its string's first LED stands for it
                continue
            also = stands.get(ref) or ()
            (pa, a), (pk, k) = p.pins
            opened = link(f"{ref}~link", a, f"{ref}#a", k)
            parts.append(replace(p, pins=((pa, f"{ref}#a"), (pk, k))))
            resistor(f"{ref}~across", a, k, R_OPEN_OHM)
            faults += [_Fault(ref, "open", opened, also), _Fault(ref, "short", ((f"{ref}~across", R_SHORT_OHM),), also)]
            if p.kind != "lamp":
                twin = f"{ref}~rev"
                fitted = link(f"{twin}~link", a, f"{twin}#k", k, closed=False)
                parts.append(replace(p, ref=twin, role="fault", pins=(("A", k), ("K", f"{twin}#k"))))
                faults.append(_Fault(ref, "reversed", opened + fitted, also))
        elif p.kind in ("npn", "pnp"):
            c, b, e = p.nets
            opened = link(f"{ref}~c", c, f"{ref}#c", e) + link(f"{ref}~b", b, f"{ref}#b", e)
            parts.append(replace(p, pins=(("C", f"{ref}#c"), ("B", f"{ref}#b"), ("E", e))))
            resistor(f"{ref}~ce", c, e, R_OPEN_OHM)
            # The part fitted with collector and emitter exchanged: the same card, pins swapped.
            twin = f"{ref}~swap"
            fitted = (link(f"{twin}~b", b, f"{twin}#b", e, closed=False)
                      + link(f"{twin}~e", c, f"{twin}#e", e, closed=False))
            parts.append(replace(p, ref=twin, role="fault", pins=(("C", e), ("B", f"{twin}#b"), ("E", f"{twin}#e"))))
            faults += [_Fault(ref, "leads_swapped", opened + fitted), _Fault(ref, "open", opened),
                       _Fault(ref, "short", ((f"{ref}~ce", R_SHORT_OHM),))]
        elif p.kind == "nmos":
            d, g, src = p.nets
            opened = link(f"{ref}~d", d, f"{ref}#d", src) + link(f"{ref}~g", g, f"{ref}#g", src)
            parts.append(replace(p, pins=(("D", f"{ref}#d"), ("G", f"{ref}#g"), ("S", src))))
            resistor(f"{ref}~ds", d, src, R_OPEN_OHM)
            faults += [_Fault(ref, "open", opened), _Fault(ref, "short", ((f"{ref}~ds", R_SHORT_OHM),))]
        else:
            raise ValueError(f"{ref}: no single faults are defined for a {p.kind}")
    # A string's series resistor open leaves the string as dead as its first LED open, and at every
    # test point the two read the same; the LED's open lead is tied, so the string's nets do not float
    # (a floating chain of LEDs is what Newton's method converges on slowest, or not at all).
    first_led = {r.ref: chain[0].ref for r, chain in zip(nl.by_role("led_series"), led_strings(nl)) if chain}
    opened = {f.ref: f.switches for f in faults if f.fault == "open"}
    faults = [replace(f, switches=opened[first_led[f.ref]])
              if f.fault == "open" and first_led.get(f.ref) in opened else f for f in faults]
    for k, net in enumerate(meters):
        resistor(f"METER~{k}", net, GROUND, R_UNPLUGGED_OHM)
    return replace(nl, parts=tuple(parts), title=f"{nl.title} (fault harness)"), faults, good


def _overrides(good: dict[str, float], members: list[tuple[str, float]] | None, rows: list[_Fault | None],
               per: int) -> dict:
    """Overrides for ``rows`` (None = the good board), ``per`` members each; member j > 0 plugs meter j - 1 in."""
    n = len(rows) * per
    ov = {}
    for ref, value in good.items():
        ov[(ref, "value")] = np.full(n, value)
    for f, row in enumerate(rows):
        for ref, value in (row.switches if row else ()):
            ov[(ref, "value")][f * per:(f + 1) * per] = value
    for j, (ref, value) in enumerate(members or (), start=1):
        ov[(ref, "value")][j::per] = value
    return ov


def single_faults(design: Design, bench: tuple[BenchReading, ...], *, fuse_a: float,
                  meter_ohm: float) -> tuple[FaultCase, ...]:
    """Every single fault of ``design`` at nominal supply: the light it gives and the meter's readings.

    ``bench`` are the good board's windows (what tells a reading apart);
    ``fuse_a`` the always-on feed's fuse; ``meter_ohm`` the meter's input
    resistance, plugged in at one test point at a time as for the bench readings.
    """
    nl = design.netlist
    fixed = {s.plus for s in nl.sources}
    points = [(label, net) for label, net in nl.probes if net not in fixed]  # a source's node reads the source
    harness, faults, good = _harness(nl, [net for _, net in points])
    rows: list[_Fault | None] = [None, *faults]
    per = len(points) + 1
    ov = _overrides(good, [(f"METER~{k}", meter_ohm) for k in range(len(points))], rows, per)
    n = len(rows) * per
    (on, lost_on), (off, lost_off) = (_solved(harness, at, ov, per) for at in (nl.release_s * 0.999, nl.stop_s))
    lost = lost_on | lost_off
    bare = slice(0, n, per)  # each row's member without a meter: its light and its supply current
    kind = kind_of(design.spec.load)
    chains = led_strings(nl)  # empty for a load without series resistors
    lit_on, strings = _light(kind, harness, on, ov, bare, rows, chains)
    lit_off, _ = _light(kind, harness, off, ov, bare, rows, chains)
    rel_on, rel_off = lit_on / lit_on[0], lit_off / lit_on[0]
    drawn = np.maximum(np.abs(on.i_source("VSUPPLY")[bare]), np.abs(off.i_source("VSUPPLY")[bare]))
    looks = [_steady_look(float(rel_on[k]), float(rel_off[k]), float(drawn[k]), fuse_a,
                          None if strings is None else (strings[0][:, k], strings[1][:, k], strings[0][:, 0]),
                          chains, rows[k])
             for k in range(len(rows))]
    for k in lost:
        looks[k] = ("unknown", "not worked out: the simulation of this fault did not settle")
    steady_ok = [k for k in range(1, len(rows)) if looks[k] is None]
    times = _fade_times(kind, nl, [rows[k] for k in steady_ok], lit_on[[0, *steady_ok]])

    windows = {b.net: b for b in bench}
    out: list[FaultCase] = []
    for k, f in enumerate(faults, start=1):
        readings = []
        for j, (label, net) in enumerate(points if k not in lost else ()):
            v_on, v_off = float(on.v(net)[k * per + j + 1]), float(off.v(net)[k * per + j + 1])
            readings.append(FaultReading(point=label, net=net, on_v=v_on, off_v=v_off,
                                         telling=_tells(windows.get(net), v_on, v_off)))
        fades = times.get((f.ref, f.fault))
        look, symptom = looks[k] or (_fade_symptom(fades, times[None], nl.stop_s - nl.release_s) if fades else
                                     ("unknown", "steady light right; its fades not worked out: the simulation "
                                                 "did not settle"))
        for ref in (f.ref, *f.stands_for):
            out.append(FaultCase(ref=ref, fault=f.fault, symptom=symptom, look=look, readings=tuple(readings),
                                 light_on=float(rel_on[k]), light_off=float(rel_off[k]),
                                 worked_on=f.ref if ref != f.ref else ""))
    position = {p.ref: k for k, p in enumerate(nl.parts)}
    order = {name: k for k, name in enumerate(FAULTS)}
    return tuple(sorted(out, key=lambda c: (position[c.ref], order[c.fault])))


def _solved(harness: Netlist, at_s: float, ov: dict, per: int) -> tuple[simulate.OperatingPoint, set[int]]:
    """The batch's operating point at ``at_s``, from the good board's, and the rows that did not settle.

    The batch is solved at once; should any member fail every fallback, each
    row is solved on its own and a row that still fails is left as NaN and
    named, so one stubborn fault cannot take the rest of the sheet with it.
    The good board (row 0) failing is a failure of the design and raises.
    """
    n = len(next(iter(ov.values())))
    alone = {key: np.asarray(v)[:1] for key, v in ov.items()}
    start = simulate.operating_point(harness, at_s=at_s, overrides=alone, n=1)
    try:
        return simulate.operating_point(harness, at_s=at_s, overrides=ov, n=n, start=start), set()
    except SimulationError:
        pass
    pieces, lost = [], set()
    for k in range(n // per):
        sub = {key: np.asarray(v)[k * per:(k + 1) * per] for key, v in ov.items()}
        try:
            pieces.append(simulate.operating_point(harness, at_s=at_s, overrides=sub, n=per, start=start))
        except SimulationError:
            if k == 0:
                raise
            pieces.append(None)
            lost.add(k)
    good = pieces[0]
    blank = (np.full_like(good.voltages, np.nan), np.full_like(good.source_currents, np.nan))
    return replace(good, voltages=np.concatenate([p.voltages if p else blank[0] for p in pieces]),
                   source_currents=np.concatenate([p.source_currents if p else blank[1] for p in pieces])), lost


def _light(kind, harness: Netlist, op, ov, bare: slice, rows: list[_Fault | None], chains: list[list[Part]]):
    """Each row's light (members without a meter), and for LEDs each string's (current, light) by row.

    An LED shorted across gives no light of its own: its string's light is its
    current times the share of its LEDs still lit.
    """
    total = kind.light(harness, op.v, ov)[bare]
    if not chains:
        return total, None
    current = kind.branch_currents(harness, op.v, ov)[:, bare]
    lit = current.copy()
    where = {led.ref: j for j, chain in enumerate(chains) for led in chain}
    for k, row in enumerate(rows):
        if row is not None and row.fault == "short" and row.ref in where:
            j = where[row.ref]
            lit[j, k] *= (len(chains[j]) - 1) / len(chains[j])
    return total - (current - lit).sum(axis=0), (current, lit)


def _string_name(chain: list[Part]) -> str:
    return chain[0].ref if len(chain) == 1 else f"{chain[0].ref}\u2013{chain[-1].ref}"


def _steady_look(rel_on: float, rel_off: float, drawn_a: float, fuse_a: float, strings, chains,
                 row: _Fault | None) -> tuple[str, str] | None:
    """What the builder sees in the steady light, as ``(look, words)``; None when it is right.

    ``look`` names the group a sheet files the fault under; ``strings`` is each
    string's (current, light) with the fault and its current on a good board.
    """
    if row is None:
        return None
    if drawn_a > fuse_a:
        return "fuse", f"blows the {fuse_a:g} A fuse (draws {format_quantity(drawn_a, 'A')})"
    if rel_on < LOW and rel_off < LOW:
        return "never", "never comes on" if rel_on < GLOW else f"only glows faintly ({rel_on:.0%} of full)"
    if rel_off >= LOW:
        if rel_on < LOW:
            return "stays", "lights with the feed off instead of on"
        return "stays", "stays on with the feed off" + (f" ({rel_off:.0%} of full)" if rel_off < DIM else "")
    if strings is not None:
        current, lit, was = strings
        rel_i = current / np.where(was > 0, was, 1.0)
        rel_lit = lit / np.where(was > 0, was, 1.0)
        mine = [j for j, chain in enumerate(chains) if row.ref in {p.ref for p in chain}]
        if row.fault == "short" and mine and len(chains[mine[0]]) > 1:
            j = mine[0]
            how = f"{rel_i[j]:.1f} × the string's current" + (", too bright" if rel_i[j] > BRIGHT else "")
            return "string", f"the shorted LED stays dark; the rest of {_string_name(chains[j])} run at {how}"
        if len(chains) > 1:
            dark = [_string_name(c) for c, r in zip(chains, rel_lit) if r < LOW]
            if dark and len(dark) < len(chains):
                one = len(dark) == 1 and "\u2013" not in dark[0]
                return "string", f"{', '.join(dark)} {'stays' if one else 'stay'} dark; the rest light"
            bright = [(_string_name(c), r) for c, r in zip(chains, rel_i) if r > BRIGHT]
            if bright and len(bright) < len(chains):
                return "bright", "; ".join(f"{name} too bright ({r:.1f} × the string's current)"
                                           for name, r in bright)
    if rel_on < DIM:
        return "dim", f"comes on dim ({rel_on:.0%} of full)"
    if rel_on > BRIGHT:
        return "bright", f"comes on too bright ({rel_on:.1f} × full)"
    if strings is not None:
        off = [(c, r) for c, r in zip(chains, strings[0] / np.where(strings[2] > 0, strings[2], 1.0))
               if not DIM <= r <= BRIGHT]
        if off:
            return "bright", "strings out of step: " + "; ".join(
                f"{_string_name(c)} at {r:.1f} × its current" for c, r in off)
    return None


def _fade_times(kind, nl: Netlist, faults: list[_Fault], full: np.ndarray) -> dict:
    """The four light times of ``faults`` and of the good board (key None) in one transient.

    The transient runs on a harness with switches on the failed parts only:
    the rest of the board goes in as it is, which keeps the circuit small.
    ``full`` is each one's steady light with the feed on, the good board's first.
    """
    if not faults:
        return {}
    harness, own, good = _harness(nl, [], only={f.ref for f in faults})
    by_name = {(f.ref, f.fault): f for f in own}
    rows = [None, *(by_name[(f.ref, f.fault)] for f in faults)]
    ov = _overrides(good, None, rows, 1)
    try:
        tr = simulate.transient(harness, overrides=ov, n=len(rows))
    except SimulationError:  # one stubborn fault: each on its own beside the good board, and drop what fails
        out: dict = {}
        for j, f in enumerate(rows[1:], start=1):
            try:
                out.update(_fade_times(kind, nl, [f], full[[0, j]]))
            except SimulationError:
                continue
        return out
    t = light_times(tr.t_s, kind.light(harness, tr.v, ov), release_s=nl.release_s, full=full)
    return {(f.ref, f.fault) if f else None: {name: float(getattr(t, name)[j]) for name in TIMES}
            for j, f in enumerate(rows)}


def _tells(window: BenchReading | None, on_v: float, off_v: float) -> bool:
    """Whether either reading lies outside the good board's window by more than a meter's doubt."""
    if window is None:
        return False

    def out(v: float, lo_hi: tuple[float, float]) -> bool:
        lo, hi = lo_hi
        return v < lo - READ_MARGIN * abs(lo) - READ_MARGIN_V or v > hi + READ_MARGIN * abs(hi) + READ_MARGIN_V

    return out(on_v, window.on_v) or out(off_v, window.off_v)


def _fade_symptom(now: dict[str, float], was: dict[str, float], window_s: float) -> tuple[str, str]:
    """The fades against a good board's: snapping, quicker or slower ones; or no visible change."""
    def span(times: dict[str, float], a: str, b: str) -> float:
        return times[a] + times[b]

    words = []
    for what, a, b in (("in", "delay_on_s", "fade_in_s"), ("out", "hold_off_s", "fade_out_s")):
        t, t0 = span(now, a, b), span(was, a, b)
        fade, fade0 = now[b], was[b]
        if not np.isfinite(t):
            words.append(("never", what, t, t0))
        elif fade < SNAP * fade0 and abs(t - t0) > FADE_SEEN_S or t < SNAP * t0:
            words.append(("snap", what, t, t0))
        elif abs(t - t0) > max(FADE_CHANGE * t0, FADE_SEEN_S):
            words.append(("slow" if t > t0 else "quick", what, t, t0))
    if not words:
        return "none", "no visible change in the light"
    kinds = {w[0] for w in words}
    if kinds == {"snap"} and len(words) == 2:
        return "fade", "no fade: snaps on and off"
    said = []
    for kind, what, t, t0 in words:
        if kind == "snap":
            said.append("snaps on" if what == "in" else "goes out at once")
        elif kind == "never":  # past the simulated window
            said.append("never gets to full" if what == "in" else
                        f"still lit {window_s:.0f} s after the feed goes off")
        else:
            said.append(f"fades {what} too {kind}ly: {t:.1f} s instead of {t0:.1f} s")
    return "fade", "; ".join(said)
