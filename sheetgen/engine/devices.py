"""Device equations: the same SPICE subset the exported decks use, as pure functions.

Every function takes numpy arrays (one entry per parameter set of a batch) and
returns currents together with their partial derivatives, which is what Newton's
method needs.  The equations follow the SPICE3 / ngspice forms so that a deck
written with our model cards and run in ngspice is a fair judge of our solver:

* junction diode: Shockley with emission coefficient, plus GMIN in parallel,
  and reverse breakdown (BV, IBV, NBV) as ngspice's diode model has it;
* BJT: the Gummel-Poon subset with forward Early voltage (VAF), forward knee
  current (IKF) and base-emitter leakage (ISE, NE), GMIN across both junctions;
* MOSFET: the Shichman-Hodges square law (SPICE level 1) with channel-length modulation, in
  the smooth EKV form that adds conduction below threshold; the deck writes it as a
  behavioural subcircuit, since ngspice's level 1 has no such tail;
* tungsten lamp: resistance R0 (T/TROOM)^ALPHA and a radiative heat balance.

Series resistances (RB, RC, RE, RD) are separate linear resistors in the
solver, exactly as SPICE places them on internal nodes; a diode's RS is
eliminated inside the diode by the solver, which is the same equations.
"""

from __future__ import annotations

import numpy as np

from sheetgen.model.constants import VT_NOMINAL
GMIN = 1e-12  # S, SPICE's default GMIN across every junction

_SPICE_RELTOL = 1e-3  # ngspice's default RELTOL, which also ends its breakdown-voltage match
_EXP_LIMIT = 80.0  # exp() argument cap; pnjlim keeps real iterates far below it


def _exp(x):
    return np.exp(np.minimum(x, _EXP_LIMIT))


def junction_vcrit(is_a, nvt):
    """The critical voltage above which SPICE limits a junction's Newton step."""
    return nvt * np.log(nvt / (np.sqrt(2.0) * is_a))


def pnjlim(v_new, v_old, nvt, vcrit):
    """SPICE's junction-voltage limiting: keep Newton out of the exponential's wall.

    Returns the limited voltage and a mask of entries that were limited.
    """
    big = (v_new > vcrit) & (np.abs(v_new - v_old) > 2.0 * nvt)
    if not big.any():
        return v_new, big
    arg = 1.0 + (v_new - v_old) / nvt
    from_above = np.where(arg > 0, v_old + nvt * np.log(np.maximum(arg, 1e-300)), vcrit)
    from_below = nvt * np.log(np.maximum(v_new / nvt, 1e-300))
    limited = np.where(v_old > 0, from_above, from_below)
    return np.where(big, limited, v_new), big


def junction(v, is_a, nvt):
    """Shockley current and conductance of one junction with GMIN in parallel."""
    e = _exp(v / nvt)
    return is_a * (e - 1.0) + GMIN * v, is_a * e / nvt + GMIN


def diode(v, *, is_a, n, vt=VT_NOMINAL):
    """Junction current and conductance at junction voltage ``v``."""
    return junction(v, is_a, n * vt)


def breakdown_knee(bv, ibv, is_a, nbv_vt, vt=VT_NOMINAL):
    """The breakdown voltage the equations use: BV moved so the current at -BV is IBV.

    ngspice (diotemp.c) solves IS (exp((BV - x) / NBV Vt) - 1 + x / Vt) = IBV
    for x by at most 25 fixed-point steps, stopping at RELTOL IBV; where IBV
    is below IS BV / Vt it keeps BV itself.  Done here the same way, per entry.
    """
    x = bv - nbv_vt * np.log(1.0 + ibv / is_a)
    done = np.zeros(np.shape(x), dtype=bool)
    for _ in range(25):
        step = bv - nbv_vt * np.log(ibv / is_a + 1.0 - x / vt)
        x = np.where(done, x, step)
        done |= np.abs(is_a * (np.exp((bv - x) / nbv_vt) - 1.0 + x / vt) - ibv) <= _SPICE_RELTOL * ibv
        if done.all():
            break
    return np.where(ibv < is_a * bv / vt, bv, x)


def breakdown_limit(v_new, v_old, *, bv_x, nbv_vt, vcrit):
    """pnjlim on the mirrored junction, for iterates below -BV + 10 NBV Vt (ngspice dioload.c).

    ``bv_x`` is :func:`breakdown_knee`'s voltage.  Returns the limited voltage
    and a mask of entries that were limited.
    """
    deep = v_new < np.minimum(0.0, -bv_x + 10.0 * nbv_vt)
    if not deep.any():
        return v_new, deep
    mirrored, hit = pnjlim(-(v_new + bv_x), -(v_old + bv_x), nbv_vt, vcrit)
    return np.where(deep, -(mirrored + bv_x), v_new), deep & hit


def breakdown(v, i, g, *, is_a, nvt, bv_x, nbv_vt):
    """A junction's current and conductance ``i``, ``g`` with the breakdown branch put in.

    Below -3 N Vt and below -``bv_x`` ngspice's diode carries
    -IS exp(-(bv_x + v) / NBV Vt) (plus GMIN) instead of its reverse current.
    """
    on = (v < -3.0 * nvt) & (v < -bv_x)
    e = _exp(-(bv_x + v) / nbv_vt)
    return np.where(on, GMIN * v - is_a * e, i), np.where(on, is_a * e / nbv_vt + GMIN, g)


def inverse_or_zero(x):
    """1/x, with 0 standing for SPICE's "infinite" (VAF, IKF left unset)."""
    return np.divide(1.0, x, out=np.zeros(np.shape(x)), where=x > 0)


def be_leakage(vbe, ise, ne, vt=VT_NOMINAL):
    """Base-emitter leakage current ISE (exp(vbe / NE Vt) - 1) and its conductance."""
    nevt = np.where(ne > 0, ne, 1.5) * vt
    e = _exp(vbe / nevt)
    return ise * (e - 1.0), ise * e / nevt


def bjt(vbe, vbc, *, is_a, bf, br, nf, nr, vaf, ikf, ise, ne, vt=VT_NOMINAL):
    """Gummel-Poon subset for an NPN with internal junction voltages vbe, vbc.

    ``vaf`` and ``ikf`` use 0 for "infinite", as SPICE does.  Returns
    ``(ic, ib, dic_dvbe, dic_dvbc, dib_dvbe, dib_dvbc)``: collector and base
    currents flowing *into* the device.  A PNP uses the same call with every
    voltage and current negated.
    """
    cbe, gbe = junction(vbe, is_a, nf * vt)
    cbc, gbc = junction(vbc, is_a, nr * vt)
    leak = be_leakage(vbe, ise, ne, vt) if np.any(ise) else None
    return gummel_poon(cbe, gbe, cbc, gbc, vbc, leak, inv_bf=1.0 / bf, inv_br=1.0 / br,
                       inv_vaf=inverse_or_zero(vaf), inv_ikf=inverse_or_zero(ikf))


def gummel_poon(cbe, gbe, cbc, gbc, vbc, leak, *, inv_bf, inv_br, inv_vaf, inv_ikf):
    """:func:`bjt` from its two junctions' currents and conductances.

    Split out so the solver can evaluate every junction of a circuit in one
    pass; ``leak`` is :func:`be_leakage`'s result, or None without ISE.
    """
    q1 = 1.0 / (1.0 - inv_vaf * vbc)
    # The knee's square root stays positive: its argument is 1 + 4 cbe / IKF and
    # cbe > -IS for any junction voltage a circuit reaches.
    sq = np.sqrt(np.maximum(1.0 + 4.0 * inv_ikf * cbe, 1e-30))
    qb = q1 * (0.5 + 0.5 * sq)
    dqb_dvbe = q1 * inv_ikf * gbe / sq
    dqb_dvbc = q1 * inv_vaf * qb

    it = (cbe - cbc) / qb
    dit_dvbe = (gbe - it * dqb_dvbe) / qb
    gbc_r = gbc * inv_br
    ic = it - cbc * inv_br
    ib = cbe * inv_bf + cbc * inv_br
    dib_dvbe = gbe * inv_bf
    if leak is not None:
        ib = ib + leak[0]
        dib_dvbe = dib_dvbe + leak[1]
    return ic, ib, dit_dvbe, -(gbc + it * dqb_dvbc) / qb - gbc_r, dib_dvbe, gbc_r


#: The subthreshold slope factor of an NMOS card that gives none: n Vt ln 10 = 89 mV per decade at
#: 25 °C, inside the 80–120 mV/decade power MOSFETs show below threshold (common practice, no source).
NMOS_N_DEFAULT = 1.5


def mosfet(vgs, vds, *, vto, kp, lam, n, g_leak=GMIN):
    """Drain current of an NMOS with a subthreshold tail, and its two derivatives.

    The square law of Shichman and Hodges written in the symmetric, smooth form of the EKV
    model (Enz, Krummenacher and Vittoz, Analog Integrated Circuits and Signal Processing 8
    (1995) 83): Id = KP/2 (s(Vgs - VTO)^2 - s(Vgd - VTO)^2)(1 + LAMBDA |Vds|), with
    s(u) = 2 n Vt ln(1 + exp(u / 2 n Vt)).  Well above threshold s(u) = u and this is level 1
    exactly (linear region, and saturation once Vgd < VTO); below it the current falls as
    exp(u / n Vt), n Vt ln 10 per decade, so a fade starts from a tail, not a corner.  The
    form is symmetric in drain and source, so a reversed Vds needs no special case.  The off
    channel's leakage ``g_leak`` sits across drain and source (the deck writes it as a
    resistor): a drain between an off channel and unlit LEDs is then a node the solver can
    settle, where GMIN alone left it swinging.  Returns ``(id, did_dvgs, did_dvds)``.
    """
    w = 2.0 * n * VT_NOMINAL
    u_s, u_d = (vgs - vto) / w, (vgs - vds - vto) / w
    s_s, s_d = w * np.logaddexp(0.0, u_s), w * np.logaddexp(0.0, u_d)
    g_s, g_d = 0.5 * (1.0 + np.tanh(0.5 * u_s)), 0.5 * (1.0 + np.tanh(0.5 * u_d))  # ds/du: the logistic
    clm = 1.0 + lam * np.abs(vds)
    core = 0.5 * kp * (s_s * s_s - s_d * s_d)
    i_d = core * clm + g_leak * vds
    did_dvgs = kp * (s_s * g_s - s_d * g_d) * clm
    did_dvds = kp * s_d * g_d * clm + core * lam * np.sign(vds) + g_leak
    return i_d, did_dvgs, did_dvds


def mosfet_vto(vgs_th_v, *, at_a: float, kp, n):
    """The VTO at which :func:`mosfet` carries ``at_a`` with its gate tied to its drain at ``vgs_th_v``.

    That is how a datasheet measures VGS(th) (VDS = VGS, ID = ``at_a``); the drain-side term is
    negligible there, so the square-law branch inverts in closed form.
    """
    w = 2.0 * n * VT_NOMINAL
    return vgs_th_v - w * np.log(np.expm1(np.sqrt(2.0 * at_a / kp) / w))


def lamp_resistance(t_k, *, r0_ohm, t_room_k, alpha):
    """Filament resistance at temperature ``t_k``; never below the cold value."""
    return r0_ohm * (np.maximum(t_k, t_room_k) / t_room_k) ** alpha


def lamp(v, t_k, *, r0_ohm, t_room_k, alpha, k_w_per_k4):
    """Electrical current and heat balance of a tungsten filament.

    Returns ``(i, di_dv, di_dt, p_net, dp_dv, dp_dt)`` where ``p_net`` is the
    power flowing into the filament's heat capacity: V*I minus radiation
    k (T^4 - TROOM^4).
    """
    t_eff = np.maximum(t_k, t_room_k)
    r = r0_ohm * (t_eff / t_room_k) ** alpha
    dr_dt = np.where(t_k > t_room_k, alpha * r / t_eff, 0.0)
    i = v / r
    di_dv = 1.0 / r
    di_dt = -v * dr_dt / (r * r)
    p_net = v * i - k_w_per_k4 * (t_k**4 - t_room_k**4)
    dp_dv = 2.0 * v / r
    dp_dt = v * di_dt - 4.0 * k_w_per_k4 * t_k**3
    return i, di_dv, di_dt, p_net, dp_dv, dp_dt
