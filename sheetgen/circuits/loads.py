"""The kinds of load the fader drives, one registry entry each.

An entry owns everything the tool needs to know about its kind: how many
branches it has and what each is rated for, its parts and model cards in the
netlist, how its light is read off a simulated circuit, how its current follows
the supply, the worst a hovering feed can put into the switch, how its parts
spread in the tolerance draws and the corners, and the words the sheet prints
about it.  The spec reader (``inputs/spec.py``) holds the matching spec type;
nothing else branches on a load's kind: code asks ``kind_of(spec.load)``.
"""

from __future__ import annotations

import math
from typing import Callable

import numpy as np

from sheetgen.engine import light as filament_light
from sheetgen.engine.devices import VT_NOMINAL
from sheetgen.inputs.spec import LampLoad, LedLoad
from sheetgen.model.netlist import Model, Netlist, Overrides, Part
from sheetgen.parts import catalog

#: Makes a series resistor for a branch: ``(ref, top net, bottom net) -> Part``.
SeriesResistor = Callable[[str, str, str], Part]
#: Reads a net's voltage from a simulation: (N, T) for a transient, (N,) for an operating point.
Voltages = Callable[[str], np.ndarray]

#: A filament's current rises roughly as V^0.57 (from memory: the incandescent characteristic
#: curves of lighting handbooks give current ∝ V^0.55–0.6; first guesses only).
LAMP_CURRENT_EXPONENT = 0.57
#: Light ∝ I for an LED; a filament's steady light rises as V^3.4 and its current as V^0.6 (lighting
#: handbooks' incandescent characteristics, from memory), so light ∝ I^5.7: the current fraction
#: at which each reference level of light is reached (first guess only).
LAMP_LIGHT_EXPONENT = 3.4 / 0.6


class LedKind:
    """LED strings, each with its own series resistor; light taken as proportional to current."""

    name = "led"
    spec_type = LedLoad
    #: Each branch has a series resistor the sizer sets.
    series_resistor = True
    #: What a branch current is called where it is checked against its rating.
    branch_words = "LED string current"

    @staticmethod
    def branches(load: LedLoad) -> int:
        return load.strings

    @staticmethod
    def branch_rating_a(load: LedLoad) -> float | None:
        """The current each branch must never exceed: a string's rated LED current."""
        return load.current_a

    @staticmethod
    def rated_current_a(load: LedLoad) -> float:
        return load.current_a * load.strings

    @staticmethod
    def model(load: LedLoad) -> Model:
        return led_model(load)

    @staticmethod
    def parts(load: LedLoad, *, top: str, bottom: str, first_r: int, series: SeriesResistor) -> list[Part]:
        model = led_model(load)
        parts: list[Part] = []
        led_no = 1
        for s in range(load.strings):
            head = f"str{s + 1}"
            parts.append(series(f"R{first_r + s}", top, head))
            node = head
            for k in range(load.per_string):
                nxt = bottom if k == load.per_string - 1 else f"str{s + 1}_{k + 1}"
                colour = f"{load.colour} " if load.colour else ""
                parts.append(Part(ref=f"LED{led_no}", kind="led", pins=(("A", node), ("K", nxt)), role="load",
                                  model=model, description=f"{colour}LED, Vf {load.vf_v:g} V at "
                                  f"{load.current_a * 1000:g} mA", package="5 mm"))
                node = nxt
                led_no += 1
        return parts

    @staticmethod
    def branch_currents(netlist: Netlist, v: Voltages, overrides: Overrides | None = None) -> np.ndarray:
        """Each string's current, read through its series resistor, stacked on a leading axis."""
        out = []
        for r in netlist.by_role("led_series"):
            value = (overrides or {}).get((r.ref, "value"), r.value)
            value = np.asarray(value, dtype=float)
            drop = v(r.net("1")) - v(r.net("2"))
            out.append(drop / (value[:, None] if value.ndim and drop.ndim == 2 else value))
        if not out:
            raise ValueError("an LED load without series resistors: no string current to read")
        return np.stack(out)

    @classmethod
    def light(cls, netlist: Netlist, v: Voltages, overrides: Overrides | None = None) -> np.ndarray:
        """An LED's flux is taken as proportional to its current (common practice, no source)."""
        return cls.branch_currents(netlist, v, overrides).sum(axis=0)

    @staticmethod
    def current_fractions(low: float, high: float) -> tuple[float, float]:
        """Fractions of the steady current at which the light crosses ``low`` and ``high``."""
        return low, high

    @staticmethod
    def supply_scale(load: LedLoad, *, supply_v: float, nominal_v: float, switch_drop_v: float) -> float:
        """How the saturated current scales with the supply: strings are headroom-limited."""
        drop = load.per_string * load.vf_v + switch_drop_v
        return max(supply_v - drop, 0.0) / max(nominal_v - drop, 1e-9)

    @staticmethod
    def hover_peak_w(load: LedLoad, *, supply_v: float, series_ohm: float | None,
                     current_limit_a: float | None) -> float:
        """The switch's largest steady dissipation along the load line of the strings."""
        # Each string as an ideal drop n·Vf plus its resistor; P = I (V - nVf - I R), largest at I = (V - nVf) / 2R.
        r_total = series_ohm / load.strings
        headroom = max(supply_v - load.per_string * load.vf_v, 0.0)
        i = headroom / (2.0 * r_total)
        if current_limit_a is not None:
            i = min(i, current_limit_a)
        return i * (headroom - i * r_total)

    @staticmethod
    def vf_spread_v(load: LedLoad) -> float:
        """How far apart two of the load's LEDs may lie in forward voltage: one bin of its colour."""
        return led_colour(load).vf_bin_v

    @staticmethod
    def slope_ohm(load: LedLoad) -> float:
        """One LED's slope resistance dV/dI at its rated current, from its card: RS + N·Vt / I."""
        m = led_model(load)
        return m["RS"] + m["N"] * VT_NOMINAL / load.current_a

    @staticmethod
    def mismatches(load: LedLoad) -> np.ndarray:
        """The worst spreads of forward voltage over the strings, each LED's offset in volts.

        Rows: the first string's LEDs at the bottom of the bin and every other string's at the
        top (the first string takes the most of a shared current), then the reverse (the first
        string is the dimmest).  Columns: the strings.  Centred on the spec's vf.
        """
        half = led_colour(load).vf_bin_v / 2
        low_first = np.full(load.strings, half)
        low_first[0] = -half
        return np.stack([low_first, -low_first])

    @classmethod
    def spread_overrides(cls, load: LedLoad, netlist: Netlist, dt: np.ndarray,
                         offsets_v: np.ndarray) -> Overrides:
        """Each string's LEDs moved by ``offsets_v`` (strings × N, volts) in Vf, drifting with ``dt`` °C.

        An offset of the card's IS by exp(-dV / (N·Vt)) moves its forward voltage by dV at every
        current (the Shockley law the card follows).
        """
        colour = led_colour(load)
        offsets_v = np.asarray(offsets_v, dtype=float)
        ov = {}
        for chain, dv in zip(led_strings(netlist), offsets_v):
            for led in chain:
                ov[(led.ref, "IS")] = (led.model["IS"] * np.exp(-dv / (led.model["N"] * VT_NOMINAL))
                                       * colour.is_drift(dt, n=led.model["N"]))
        return ov

    @classmethod
    def draw_overrides(cls, load: LedLoad, netlist: Netlist, rng: np.random.Generator, n: int,
                       dt: np.ndarray) -> Overrides:
        """Each LED's forward voltage drawn on its own, uniform over its colour's bin around the spec's vf.

        The LEDs of a build come from one bag, one bin: every string's LEDs are drawn apart from
        every other's, so the strings' forward voltages (and with them their shares of the
        current) differ from draw to draw.  Each drifts with ``dt`` °C.
        """
        half = led_colour(load).vf_bin_v / 2
        colour = led_colour(load)
        ov = {}
        for led in (p for p in netlist.parts if p.kind == "led"):
            dv = rng.uniform(-half, half, n)
            ov[(led.ref, "IS")] = (led.model["IS"] * np.exp(-dv / (led.model["N"] * VT_NOMINAL))
                                   * colour.is_drift(dt, n=led.model["N"]))
        return ov

    @staticmethod
    def corner_overrides(load: LedLoad, netlist: Netlist, dt: np.ndarray) -> Overrides:
        """Typical LEDs, their forward voltage drifting with ``dt`` °C."""
        colour = led_colour(load)
        return {(led.ref, "IS"): led.model["IS"] * colour.is_drift(dt, n=led.model["N"])
                for led in (p for p in netlist.parts if p.kind == "led")}

    @staticmethod
    def describe(load: LedLoad, format_quantity: Callable[[float, str], str]) -> str:
        """The load in a sentence; a single LED or string is not called "1 string of 1 LED"."""
        colour = f"{load.colour} " if load.colour else ""
        current = format_quantity(load.current_a, "A")
        vf = format_quantity(load.vf_v, "V")
        n, leds = load.per_string, "LED" if load.per_string == 1 else "LEDs"
        if load.strings == 1 and n == 1:
            return f"1 {colour}LED, {current}, Vf {vf}"
        if load.strings == 1:
            return f"{n} {colour}{leds} in series, {current}, Vf {vf} each"
        if n == 1:
            return f"{load.strings} {colour}LEDs, each with its own resistor, {current} each, Vf {vf}"
        return f"{load.strings} strings of {n} {colour}LEDs in series, {current} per string, Vf {vf} each"

    #: How its light relates to the current plotted on the timing block.
    light_words = "For LEDs the light follows the current, so the two lines lie on top of each other. "
    #: Cautions of its own: (sheet wording, card wording).
    cautions: tuple[tuple[str, str], ...] = ()
    #: Said in a refusal: what this kind makes hard, or None.
    refusal_hint: str | None = None


class LampKind:
    """Identical incandescent lamps in parallel; light from the filament's temperature."""

    name = "lamp"
    spec_type = LampLoad
    series_resistor = False
    branch_words = "lamp current"

    @staticmethod
    def branches(load: LampLoad) -> int:
        return load.count

    @staticmethod
    def branch_rating_a(load: LampLoad) -> float | None:
        return None  # a filament is rated by its voltage, checked as a part rating

    @staticmethod
    def rated_current_a(load: LampLoad) -> float:
        return load.count * load.power_w / load.rated_v

    @staticmethod
    def model(load: LampLoad) -> Model:
        return lamp_model(load)

    @staticmethod
    def parts(load: LampLoad, *, top: str, bottom: str, first_r: int, series: SeriesResistor) -> list[Part]:
        model = lamp_model(load)
        return [Part(ref=f"LP{k + 1}", kind="lamp", pins=(("1", top), ("2", bottom)), role="load", model=model,
                     description=f"{load.rated_v:g} V {load.power_w:g} W lamp",
                     rating_v=load.rated_v, rating_w=load.power_w)
                for k in range(load.count)]

    @staticmethod
    def branch_currents(netlist: Netlist, v: Voltages, overrides: Overrides | None = None) -> None:
        return None  # no per-branch rating to check

    @staticmethod
    def light(netlist: Netlist, v: Voltages, overrides: Overrides | None = None) -> np.ndarray:
        """Summed over the lamps, in units of one lamp at its rated temperature."""
        lamps = [p for p in netlist.by_role("load") if p.kind == "lamp"]
        return sum(filament_light.lamp_light(v(f"{p.ref}:th"), t_ref_k=p.model["THOT"]) for p in lamps)

    @staticmethod
    def current_fractions(low: float, high: float) -> tuple[float, float]:
        return low ** (1 / LAMP_LIGHT_EXPONENT), high ** (1 / LAMP_LIGHT_EXPONENT)

    @staticmethod
    def supply_scale(load: LampLoad, *, supply_v: float, nominal_v: float, switch_drop_v: float) -> float:
        return (supply_v / nominal_v) ** LAMP_CURRENT_EXPONENT

    @staticmethod
    def hover_peak_w(load: LampLoad, *, supply_v: float, series_ohm: float | None,
                     current_limit_a: float | None) -> float:
        """The switch's largest steady dissipation along the filaments' own I-V curve."""
        f = catalog.filament()
        # Steady states of the filament along its own I-V curve (radiation balances V·I).
        t = np.linspace(f.t_room_k * 1.01, f.t_hot_k * 1.3, 2000)
        p_rated = load.power_w
        r_hot = load.rated_v**2 / p_rated
        r = r_hot * (t / f.t_hot_k) ** f.alpha
        p = p_rated * (t**4 - f.t_room_k**4) / (f.t_hot_k**4 - f.t_room_k**4)
        i = np.sqrt(p / r) * load.count
        v_lamp = np.sqrt(p * r)
        p_q = (supply_v - v_lamp) * i
        return float(np.max(np.where(v_lamp <= supply_v, p_q, 0.0)))

    @staticmethod
    def draw_overrides(load: LampLoad, netlist: Netlist, rng: np.random.Generator, n: int,
                       dt: np.ndarray) -> Overrides:
        return {}  # filaments are drawn as rated

    @staticmethod
    def corner_overrides(load: LampLoad, netlist: Netlist, dt: np.ndarray) -> Overrides:
        return {}

    @staticmethod
    def mismatches(load: LampLoad) -> None:
        return None  # identical filaments: no branch takes another's share

    @staticmethod
    def vf_spread_v(load: LampLoad) -> None:
        return None

    @staticmethod
    def describe(load: LampLoad, format_quantity: Callable[[float, str], str]) -> str:
        lamps = "1 lamp" if load.count == 1 else f"{load.count} lamps in parallel"
        return f"{lamps}, {format_quantity(load.power_w, 'W')} each, rated at {format_quantity(load.rated_v, 'V')}"

    light_words = ("A lamp's light lags its current while the filament heats and cools and rises far more "
                   "steeply: it is worked out from the filament's temperature. ")
    cautions = (("Lamp glass and holders run hot: use heat-rated holders, keep them clear of fabric, trim and "
                 "wiring, and let them cool before touching.",
                 "Lamps run hot: heat-rated holders, clear of fabric and trim."),)
    refusal_hint = ("a lamp's light rises from 10 % to 90 % over only the top third of its current, so these "
                    "stages keep it dark and then snap it on; an LED load of the same light, on a current "
                    "stage, fades as asked")


#: Every load kind, by the name a spec's ``load: kind:`` uses.
LOAD_KINDS = {k.name: k for k in (LedKind, LampKind)}


def kind_of(load: LedLoad | LampLoad) -> type[LedKind] | type[LampKind]:
    """The registry entry for a spec's load."""
    return LOAD_KINDS[load.kind]


def led_strings(netlist: Netlist) -> list[list[Part]]:
    """The LEDs of each string, from its series resistor down, one list per ``led_series`` resistor."""
    by_anode = {p.net("A"): p for p in netlist.parts if p.kind == "led"}
    out = []
    for r in netlist.by_role("led_series"):
        chain, net = [], r.net("2")
        while net in by_anode:
            chain.append(by_anode[net])
            net = chain[-1].net("K")
        out.append(chain)
    return out


def rated_current_a(load: LedLoad | LampLoad) -> float:
    """The load's own rated current, all branches together."""
    return kind_of(load).rated_current_a(load)


def led_colour(load: LedLoad) -> catalog.LedColour:
    """The catalog colour an LED load is drawn from: the named one, or the nearest forward voltage."""
    return (catalog.led_colour(load.colour) if load.colour else
            min(catalog.led_colours(), key=lambda c: abs(c.vf_typ_v - load.vf_v)))


def led_model(load: LedLoad) -> Model:
    """A diode card that drops exactly ``load.vf_v`` at ``load.current_a``.

    The emission coefficient and series resistance come from the catalog colour
    (the named one, or the one whose typical forward voltage is nearest), so the
    curve has a realistic slope; IS is then solved so the stated point holds.
    """
    colour = led_colour(load)
    n = colour.model["N"]
    # A power LED is a bigger die: its series resistance falls as its rated current rises, so the
    # catalog card's resistance (a 5 mm part at its test current) is scaled by at_a / current
    # (common practice, no source).
    rs = colour.model.get("RS", 0.0) * min(1.0, colour.at_a / load.current_a)
    v_junction = load.vf_v - load.current_a * rs
    is_a = load.current_a / math.expm1(v_junction / (n * VT_NOMINAL))
    # Named by what the spec says it is: its forward voltage, and its colour where one is given.
    named = f"_{load.colour.upper().replace(' ', '_')}" if load.colour else ""
    whole, _, fraction = f"{load.vf_v:g}".partition(".")
    name = f"LED{named}_{whole}V{fraction}"  # 3.1 V white: LED_WHITE_3V1, as the RKM code writes it
    # EG (XTI = 0) keeps the colour's temperature coefficient of Vf in the card ngspice reads.
    eg = float(f"{colour.eg_for(vj_v=v_junction):.6g}")
    return Model(name=name, kind="D", params=(("IS", float(f"{is_a:.6g}")), ("N", n), ("RS", rs),
                                              ("EG", eg), ("XTI", 0.0)))


def lamp_model(load: LampLoad) -> Model:
    """A filament card: hot resistance from the rating, cold from the resistance law.

    The radiation constant K makes the rated power balance at the hot
    temperature; the heat capacity is the mass of a wire sized from the rating
    times tungsten's specific heat, so a 21 W filament warms slower than a 5 W one.
    """
    f = catalog.filament()
    r_hot = load.rated_v**2 / load.power_w
    r0 = r_hot / (f.t_hot_k / f.t_room_k) ** f.alpha
    k = load.power_w / (f.t_hot_k**4 - f.t_room_k**4)
    cth = f.heat_capacity_j_per_k(power_w=load.power_w, rated_v=load.rated_v)
    name = f"LAMP_{load.rated_v:g}V_{load.power_w:g}W".replace(".", "P")
    params = (("R0", float(f"{r0:.6g}")), ("TROOM", f.t_room_k), ("THOT", f.t_hot_k),
              ("ALPHA", f.alpha), ("K", float(f"{k:.6g}")), ("CTH", float(f"{cth:.6g}")))
    return Model(name=name, kind="LAMP", params=params)
