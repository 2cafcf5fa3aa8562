"""Write a netlist as an ngspice deck, so anyone can check the tool's numbers.

The deck carries the tool's own model cards and runs as it stands with
``ngspice -b deck.cir`` (checked against ngspice 39).  It is plain text built
from the immutable netlist; per-run variations arrive as overrides and are
written into the deck, never into the netlist.

Naming, so a reader can find things:

* element names start with their SPICE letter: a ref that already does is kept
  (``R1``, ``C1``, ``D1``, ``Q1``), otherwise the letter is prefixed
  (``LED1`` -> ``DLED1``, ``LP1`` -> ``XLP1``; a MOSFET, written as the subcircuit of its
  equation, ``Q1`` -> ``XQ1``);
* nets keep their names, lowercased, with anything but letters, digits and
  ``_`` turned into ``_`` (see :func:`node_names`);
* a lamp's filament temperature, in kelvin, is the voltage of the node
  :func:`lamp_thermal_node` names (``xlp1.th``).
"""

from __future__ import annotations

import re

import numpy as np

from sheetgen import __version__
from sheetgen.engine import light as filament_light
from sheetgen.engine.devices import GMIN, NMOS_N_DEFAULT, VT_NOMINAL
from sheetgen.model.kinds import KINDS
from sheetgen.model.netlist import GROUND, Model, Netlist, Overrides, Part

#: The SPICE element letter of each part kind.
ELEMENT_LETTER: dict[str, str] = {k.name: k.letter for k in KINDS.values()}

#: The model kind each part kind needs (resistors and capacitors need none).
MODEL_KIND: dict[str, str] = {k.name: k.model_kind for k in KINDS.values() if k.model_kind}

#: Prefix of a deck model name, by model kind: tells a reader what a card is.
_MODEL_PREFIX = {"D": "D", "NPN": "Q", "PNP": "Q", "NMOS": "M", "LAMP": "LAMP"}

#: Parameters a LAMP model must give; THOT is optional (K already encodes it).
LAMP_PARAMS = ("R0", "TROOM", "ALPHA", "K", "CTH")

#: Nodes ngspice reads as ground; a net of that name would be shorted to 0.
_GROUND_ALIASES = {"0", "gnd"}

#: Steps per run: tstep = tmax = stop_s / _STEPS keeps every edge resolved.
_STEPS = 4000

#: A repeated PWL time is moved on by this fraction of stop_s (ngspice warns
#: on non-increasing PWL times); it is 1/400 of a step, so the edge is a step.
_PWL_NUDGE = 1e-7


def _num(x: float) -> str:
    """A plain SI number, six significant digits, as the deck writes values."""
    return "%.6g" % float(x)


def _clean(text: str, pattern: str) -> str:
    """Replace runs of characters outside ``pattern`` by one underscore."""
    return re.sub(f"[^{pattern}]+", "_", text).strip("_")


def _unique(name: str, taken: set[str]) -> str:
    """``name``, or ``name_2``, ``name_3``... whichever is still free (case-blind)."""
    candidate, n = name, 1
    while candidate.lower() in taken:
        n += 1
        candidate = f"{name}_{n}"
    taken.add(candidate.lower())
    return candidate


def node_names(netlist: Netlist) -> dict[str, str]:
    """Map every net (ground included) to its SPICE node name.

    Names stay readable: lowercased, a leading ``+``/``-`` read as ``p``/``m``,
    other characters turned into ``_``.  A net that would collide with another,
    or with ngspice's ground aliases ``0`` and ``gnd``, gets a suffix or an
    ``n_`` prefix.
    """
    out = {GROUND: "0"}
    taken = set(_GROUND_ALIASES)
    for net in netlist.nets:
        # A leading sign reads as a letter ("+12V" -> p12v, "-12V" -> m12v).
        sign = {"+": "p", "-": "m"}.get(net[:1])
        spelled = sign + net[1:] if sign else net
        name = _clean(spelled.lower(), "a-z0-9_") or "n"
        if name in _GROUND_ALIASES:
            name = f"n_{name}"
        out[net] = _unique(name, taken)
    return out


def element_name(part: Part) -> str:
    """The part's SPICE element name: its ref, prefixed with the letter if needed."""
    letter = "X" if part.is_composite else ELEMENT_LETTER[part.kind]
    ref = _clean(part.ref, "A-Za-z0-9_")
    if not ref:
        raise ValueError(f"part ref {part.ref!r} has no usable characters")
    return ref if ref[0].upper() == letter else letter + ref


def source_name(name: str) -> str:
    """A source's SPICE name: ``V`` first, as every voltage source needs."""
    clean = _clean(name, "A-Za-z0-9_")
    if not clean:
        raise ValueError(f"source name {name!r} has no usable characters")
    return clean if clean[0].upper() == "V" else "V" + clean


def lamp_thermal_node(part: Part) -> str:
    """The node whose voltage is the lamp's filament temperature in kelvin.

    ngspice 39 names a node inside a subcircuit instance ``<instance>.<node>``
    in lowercase, e.g. ``xlp1.th``; both ``.ic`` and vectors use that name.
    """
    if part.kind != "lamp":
        raise ValueError(f"{part.ref} is a {part.kind}, not a lamp")
    return f"{element_name(part).lower()}.th"


def _model_base_name(model: Model) -> str:
    """A deck name for a model card, prefixed by what it is (``Q_BC337_40``)."""
    prefix = _MODEL_PREFIX[model.kind]
    name = _clean(model.name.upper(), "A-Z0-9_") or "MODEL"
    return name if name.startswith(prefix + "_") else f"{prefix}_{name}"


class _Resolved:
    """The values one parameter set gives: overrides applied over the netlist."""

    def __init__(self, netlist: Netlist, overrides: Overrides | None, index: int) -> None:
        self.values: dict[str, float] = {}
        self.levels: dict[str, float] = {}
        self.model_params: dict[str, dict[str, float]] = {}
        self.count = 0
        parts = {p.ref: p for p in netlist.parts}
        sources = {s.name for s in netlist.sources}
        for (ref, param), arr in (overrides or {}).items():
            values = np.asarray(arr, dtype=float).reshape(-1)
            self.count = max(self.count, values.size)
            if values.size == 1:
                value = float(values[0])
            elif 0 <= index < values.size:
                value = float(values[index])
            else:
                raise IndexError(f"override ({ref!r}, {param!r}) has {values.size} members, no index {index}")
            if ref in sources:
                if param != "level":
                    raise ValueError(f"source {ref} can only take a 'level' override, not {param!r}")
                self.levels[ref] = value
            elif ref in parts:
                part = parts[ref]
                if param == "value":
                    if part.kind not in ("resistor", "capacitor"):
                        raise ValueError(f"{ref} is a {part.kind}; only resistors and capacitors take 'value'")
                    self.values[ref] = value
                elif param == "level":
                    raise ValueError(f"{ref} is a part; 'level' overrides a source")
                elif part.model is None:
                    raise ValueError(f"{ref} has no model to take parameter {param!r}")
                else:
                    self.model_params.setdefault(ref, {})[param.upper()] = value
            else:
                raise KeyError(f"override names {ref!r}, which is neither a part nor a source")


def _model_card(name: str, model: Model, params: dict[str, float]) -> list[str]:
    """One ``.model`` card, or for a lamp its filament subcircuit, or a composite's ``.subckt``."""
    if model.kind == "LAMP":
        return _lamp_subckt(name, model, params)
    if model.body:
        return _composite_subckt(name, model, params)
    if model.kind == "NMOS":
        return _mosfet_subckt(name, model, params)
    body = " ".join(f"{k}={_num(v)}" for k, v in params.items())
    return [f".model {name} {model.kind} ({body})"]


def model_card(name: str, model: Model) -> list[str]:
    """The deck's text for the typical ``model`` under ``name``: a ``.model`` card or a ``.subckt``."""
    return _model_card(name, model, {k.upper(): v for k, v in model.params})


def _composite_subckt(name: str, model: Model, params: dict[str, float]) -> list[str]:
    """A device built of parts (a Darlington) as the subcircuit of its equivalent circuit.

    The ports are the device's pins in element order; each inner transistor or
    diode has its own card inside the subcircuit, named after the device and
    the inner part (``Q_TIP120_QD``).  ``params`` are the composite's
    parameters, ``<inner ref>.<PARAM>`` (``QD.BF``, ``R1.VALUE``).
    """
    ports = _composite_ports(model)
    lines = [f".subckt {name} {' '.join(ports)}",
             "* the datasheet's equivalent circuit: " + ", ".join(f"{p.ref} {p.kind}" for p in model.body)]
    inner_cards: list[str] = []
    for part in model.body:
        mine = {k.split(".", 1)[1]: v for k, v in params.items() if k.startswith(part.ref.upper() + ".")}
        nets = " ".join(net.lower() for net in part.nets)
        if part.model is None:
            lines.append(f"{element_name(part)} {nets} {_num(mine.get('VALUE', part.value))}")
            continue
        inner = f"{name}_{_clean(part.ref.upper(), 'A-Z0-9_')}"
        lines.append(f"{element_name(part)} {nets} {inner}")
        inner_cards += _model_card(inner, part.model, {**{k.upper(): v for k, v in part.model.params}, **mine})
    return lines + inner_cards + [f".ends {name}"]


def _composite_ports(model: Model) -> list[str]:
    """A composite's port nets (its kind's pins), lowercased, in element order."""
    pins = next(k.pins for k in KINDS.values() if k.model_kind == model.kind)
    return [pin.lower() for pin in pins]


#: Parameters an NMOS card may give, with the values the simulator takes where it gives none.
NMOS_PARAMS = {"VTO": 0.0, "KP": 2e-5, "LAMBDA": 0.0, "N": NMOS_N_DEFAULT, "GLEAK": GMIN, "RD": 0.0, "RS": 0.0}


def _mosfet_subckt(name: str, model: Model, params: dict[str, float]) -> list[str]:
    """An NMOS as the equation the tool's own simulator solves (``engine.devices.mosfet``).

    ngspice's level 1 has no conduction below threshold, so the drain current is a
    behavioural source: the square law in its smooth, symmetric EKV form, with the
    thermal voltage at 27 °C, and the off channel's leakage GLEAK as a resistor.  RD and RS
    sit in series on internal nodes, as in a card.
    """
    unknown = set(params) - set(NMOS_PARAMS)
    if unknown:
        raise ValueError(f"NMOS model {model.name} has parameters the deck cannot write: {', '.join(sorted(unknown))}")
    p = {**NMOS_PARAMS, **params}
    header = " ".join(f"{k}={_num(p[k])}" for k in ("VTO", "KP", "LAMBDA", "N"))
    w = f"(2*{{N}}*{_num(VT_NOMINAL)})"
    # ln(1 + exp(u)) as max(u, 0) + ln(1 + exp(-|u|)): the same function, with no exp to overflow.
    u = {x: f"((V(g,{x})-{{VTO}})/{w})" for x in ("si", "di")}
    s_s, s_d = (f"({w}*(max({u[x]},0)+ln(1+exp(-abs({u[x]})))))" for x in ("si", "di"))
    lines = [f".subckt {name} d g s params: {header}",
             "* Id = KP/2 (s(Vgs-VTO)^2 - s(Vgd-VTO)^2)(1 + LAMBDA |Vds|), s(u) = 2 n Vt ln(1 + exp(u / 2 n Vt))"]
    for pin, inner, r in (("d", "di", p["RD"]), ("s", "si", p["RS"])):
        lines.append(f"R{inner} {pin} {inner} {_num(r)}" if r > 0 else f"V{inner} {pin} {inner} 0")
    lines += [f"Bid di si I={{KP}}/2*({s_s}*{s_s}-{s_d}*{s_d})*(1+{{LAMBDA}}*abs(V(di,si)))",
              f"Rleak di si {_num(1.0 / p['GLEAK'])}",
              f".ends {name}"]
    return lines


def _lamp_subckt(name: str, model: Model, params: dict[str, float]) -> list[str]:
    """A tungsten filament: electrical current set by a thermal node's voltage.

    Node ``th`` is the filament temperature in kelvin across a capacitor CTH
    (J/K); heat V*I in, radiation K*(T^4 - TROOM^4) out.  The equations are the
    ones the tool's own simulator uses, so the two must agree.
    """
    missing = [p for p in LAMP_PARAMS if p not in params]
    if missing:
        raise ValueError(f"lamp model {model.name} lacks {', '.join(missing)}")
    header = " ".join(f"{p}={_num(params[p])}" for p in LAMP_PARAMS)
    r_t = "({R0}*pow(max(V(th),{TROOM})/{TROOM},{ALPHA}))"
    t4 = "V(th)*V(th)*V(th)*V(th)"
    troom4 = "{TROOM}*{TROOM}*{TROOM}*{TROOM}"
    lines = [
        f".subckt {name} 1 2 params: {header}",
        "* R(T) = R0*(T/TROOM)^ALPHA with T = V(th) in kelvin, held at TROOM or above",
    ]
    if "THOT" in params:
        lines.append(f"* rated hot at THOT = {_num(params['THOT'])} K")
    lines += [
        f"Bel 1 2 I=V(1,2)/{r_t}",
        "* heat balance into th (watts as amperes): V*I in, radiation out",
        f"Bheat 0 th I=V(1,2)*V(1,2)/{r_t}-{{K}}*({t4}-{troom4})",
        "Cth th 0 {CTH}",
        f".ends {name}",
    ]
    return lines


def _pwl(points: tuple[tuple[float, float], ...], level_v: float, stop_s: float) -> tuple[str, bool]:
    """The PWL body, with repeated times moved on a hair; says if any were."""
    nudge = _PWL_NUDGE * stop_s
    out: list[str] = []
    last: float | None = None
    moved = False
    for t, frac in points:
        t = float(t)
        if last is not None and t <= last:
            t = last + nudge
            moved = True
        last = t
        out.append(f"{'%.9g' % t} {_num(frac * level_v)}")
    return f"PWL({' '.join(out)})", moved


def _element_names(netlist: Netlist) -> dict[str, str]:
    """Each part's and source's SPICE name, refusing clashes (ngspice is case-blind)."""
    names: dict[str, str] = {}
    seen: dict[str, str] = {}
    pairs = [(p.ref, element_name(p)) for p in netlist.parts]
    pairs += [(s.name, source_name(s.name)) for s in netlist.sources]
    for ref, spice in pairs:
        if spice.lower() in seen:
            raise ValueError(f"{ref} and {seen[spice.lower()]} would both be {spice} in the deck")
        seen[spice.lower()] = ref
        names[ref] = spice
    return names


def _model_cards(
    netlist: Netlist, res: _Resolved
) -> tuple[dict[str, str], dict[str, list[str]], dict[str, float]]:
    """Which card each part uses, the cards' text, and each lamp's room temperature.

    A part uses the shared card as it is, or its own copy when the parameter
    set changes one of its model parameters.
    """
    taken: set[str] = set()
    base_names = {m.name: _unique(_model_base_name(m), taken) for m in netlist.models}
    part_model: dict[str, str] = {}
    cards: dict[str, list[str]] = {}
    lamp_troom: dict[str, float] = {}
    for part in netlist.parts:
        if part.kind not in MODEL_KIND:
            continue
        model = part.model
        if model is None:
            raise ValueError(f"{part.ref} ({part.kind}) has no model")
        if model.kind != MODEL_KIND[part.kind]:
            raise ValueError(f"{part.ref} is a {part.kind} but model {model.name} is {model.kind}")
        params = {k.upper(): v for k, v in model.params}
        if part.ref in res.model_params:
            params.update(res.model_params[part.ref])
            name = _unique(f"{base_names[model.name]}__{_clean(part.ref.upper(), 'A-Z0-9_')}", taken)
        else:
            name = base_names[model.name]
        part_model[part.ref] = name
        if name not in cards:
            cards[name] = _model_card(name, model, params)
        if part.kind == "lamp":
            lamp_troom[part.ref] = params["TROOM"]
    return part_model, cards, lamp_troom


def spice_deck(
    netlist: Netlist,
    *,
    overrides: Overrides | None = None,
    index: int = 0,
    title: str | None = None,
    light_full: float | None = None,
) -> str:
    """A complete ngspice deck for ``netlist`` that ``ngspice -b`` runs as it stands.

    ``overrides`` maps ``(ref, param)`` to arrays of shape (N,) and member
    ``index`` is written: ``"value"`` replaces an R or C value, ``"level"`` a
    source's level, any other name a model parameter of that part, which then
    gets its own copy of the card (``<card>__<ref>``) so parts sharing the
    model keep the typical one.  Capacitors start at 0 V and filaments at
    room temperature (``uic``).  With ``light_full`` (the load's steady light with
    the feed on, in the units of its load kind's ``light``) the deck carries a node
    ``light`` whose voltage is the relative light, 1 V at full.
    """
    res = _Resolved(netlist, overrides, index)
    nodes = node_names(netlist)
    names = _element_names(netlist)
    part_model, cards, lamp_troom = _model_cards(netlist, res)

    title_line = " ".join((title if title is not None else netlist.title).split()) or "sheetgen fader"
    tstep = netlist.stop_s / _STEPS
    lines = [
        title_line,
        f"* Written by sheetgen {__version__} for ngspice 39; run it with: ngspice -b <this file>",
        "* Values in SI units (ohm, farad, volt, second).  Capacitors start at 0 V and",
        "* lamp filaments at room temperature (.tran ... uic).",
        "* A source's current i(V...) is negative while it delivers current (SPICE sign).",
    ]
    if res.count:
        lines.append(f"* Parameter set {index} of {res.count} from the tolerance/what-if batch.")
    renamed = [(net, node) for net, node in nodes.items() if net != node]
    if renamed:
        lines.append("* Nets renamed for SPICE: " + ", ".join(f"{net!r} -> {node}" for net, node in renamed))
    if netlist.probes:
        lines.append("* Test points: " + ", ".join(f"{label} = {nodes[net]}" for label, net in netlist.probes))

    lines += ["", "* --- sources ---"]
    for src in netlist.sources:
        level = res.levels.get(src.name, src.level_v)
        if src.shape is None:
            wave = f"DC {_num(level)}"
        else:
            wave, moved = _pwl(src.shape, level, netlist.stop_s)
            if moved:
                lines.append(f"* {src.name}: a vertical edge gets a {_num(_PWL_NUDGE * netlist.stop_s)} s rise;"
                             " ngspice wants PWL times to increase")
        lines.append(f"{names[src.name]} {nodes[src.plus]} {nodes[src.minus]} {wave}")

    lines += ["", "* --- parts ---"]
    for part in netlist.parts:
        # The description says what the part does in its own kind's words (a MOSFET's R3 is a gate resistor).
        note = ", ".join(dict.fromkeys(x for x in (part.part_number, part.description) if x))
        lines.append(f"* {part.ref}: {note}" if note else f"* {part.ref}")
        pins = " ".join(nodes[n] for n in part.nets)
        if part.kind in ("resistor", "capacitor"):
            value = res.values.get(part.ref, part.value)
            if value is None:
                raise ValueError(f"{part.ref} ({part.kind}) has no value")
            lines.append(f"{names[part.ref]} {pins} {_num(value)}")
        else:
            lines.append(f"{names[part.ref]} {pins} {part_model[part.ref]}")

    if cards:
        lines += ["", "* --- models ---"]
        for card in cards.values():
            lines += card

    lamps = [p for p in netlist.parts if p.kind == "lamp"]
    if light_full is not None:
        lines += ["", "* --- light: 1 V is the steady light with the feed on (nominal parts and supply) ---"]
        lines.append(f"Blight light 0 V=({_light_sum(netlist, res, nodes, lamps)})/{_num(light_full)}")
    lines += ["", "* --- analysis ---"]
    if lamps:
        lines.append(".ic " + " ".join(f"v({lamp_thermal_node(p)})={_num(lamp_troom[p.ref])}" for p in lamps))
    # ngspice -b runs no analysis without an output line, so one is always given.
    probe_nets = [net for _, net in netlist.probes] or list(netlist.nets)
    vectors = [f"v({nodes[n]})" for n in dict.fromkeys(probe_nets) if n != GROUND]
    vectors += [f"i({names[s.name].lower()})" for s in netlist.sources]
    vectors += [f"v({lamp_thermal_node(p)})" for p in lamps]
    if light_full is not None:
        vectors.append("v(light)")
    lines.append(".print tran " + " ".join(vectors))
    lines.append(f".tran {_num(tstep)} {_num(netlist.stop_s)} 0 {_num(tstep)} uic")
    lines.append(".end")
    return "\n".join(lines) + "\n"


def _light_sum(netlist: Netlist, res: "_Resolved", nodes: dict[str, str], lamps: list[Part]) -> str:
    """The load's light as a B-source expression: filament light per lamp, or the LED string currents."""
    if lamps:
        return "+".join(filament_light.spice_light_expression(lamp_thermal_node(p), p.model["THOT"]) for p in lamps)
    terms = [f"(v({nodes[r.net('1')]})-v({nodes[r.net('2')]}))/{_num(res.values.get(r.ref, r.value))}"
             for r in netlist.by_role("led_series")]
    if not terms:
        raise ValueError("an LED load without series resistors: no string current for the light node")
    return "+".join(terms)


__all__ = [
    "ELEMENT_LETTER",
    "LAMP_PARAMS",
    "MODEL_KIND",
    "element_name",
    "lamp_thermal_node",
    "model_card",
    "node_names",
    "source_name",
    "spice_deck",
]
