"""Symbolic derivations of junction electrostatics and stored-charge capacitance.

Each derivation starts from Poisson's equation in the depletion approximation,
d E/dx = rho(x)/eps_s with E = 0 outside the depleted region, integrates it to the field
E(x) and the potential psi(x) = -int E dx, and closes with the boundary condition
psi(right edge) - psi(left edge) = V_bi + V_r (reverse bias V_r positive). The charge on one
side gives the capacitance as dQ/dV_r, and the identity C = eps_s A / W follows. The
diffusion capacitance follows from the charge-control relation Q = tau I.

Every function is cached (``functools.lru_cache``): sympy is slow, derive once per process.

References
----------
.. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley, 2007,
   ch. 2 (p-n junction: abrupt and linearly graded depletion layers, capacitance,
   diffusion capacitance).
.. [2] B. G. Streetman and S. K. Banerjee, *Solid State Electronic Devices*, 6th ed.,
   Prentice Hall, 2006, ch. 5 (charge-control approach to stored charge).
"""

from __future__ import annotations

from functools import lru_cache

import sympy as sp

from .derivation import Derivation, Step, eq, k_B, q

__all__ = [
    "abrupt_junction",
    "linearly_graded_junction",
    "pin_junction",
    "diffusion_capacitance",
    "JUNCTION_SYMBOLS",
]

x = sp.Symbol("x", real=True)
N_A, N_D, N_i, a, d, area, eps_s, V_bi, n_i, T = sp.symbols(
    "N_A N_D N_i a d A epsilon_s V_bi n_i T", positive=True)
V_r = sp.Symbol("V_r", real=True)
x_p, x_n, W, w_i = sp.symbols("x_p x_n W w_i", positive=True)
tau, I_F, I_s, n_id, V = sp.symbols("tau I I_s n V", positive=True)
V_f = sp.Symbol("V_f", real=True)
Q_sym, rho, E_max, V_pt = sp.symbols("Q rho E_max V_pt")
C_diff, Q_s = sp.symbols("C_diff Q_s")
E_sym, psi_sym, C_sym = sp.Function("E"), sp.Function("psi"), sp.Symbol("C_j")

#: meaning and SI unit of every symbol used by the junction derivations
JUNCTION_SYMBOLS = {
    x: ("position across the junction (metallurgical junction at 0)", "m"),
    N_A: ("acceptor density of the p side", "m^-3"),
    N_D: ("donor density of the n side", "m^-3"),
    N_i: ("net donor density of the intrinsic (i) layer", "m^-3"),
    a: ("impurity gradient of the linearly graded junction", "m^-4"),
    d: ("thickness of the i layer", "m"),
    area: ("junction area", "m^2"),
    eps_s: ("permittivity of the semiconductor", "F/m"),
    V_bi: ("built-in potential", "V"),
    V_r: ("reverse bias (negative = forward)", "V"),
    n_i: ("intrinsic carrier density", "m^-3"),
    T: ("temperature", "K"),
    x_p: ("depletion depth on the p side", "m"),
    x_n: ("depletion depth on the n side", "m"),
    W: ("depletion width", "m"),
    w_i: ("depleted depth of the i layer below punch-through", "m"),
    tau: ("transit time (short base) or minority-carrier lifetime", "s"),
    I_F: ("forward current", "A"),
    I_s: ("saturation current", "A"),
    n_id: ("ideality factor", "1"),
    V_f: ("forward voltage", "V"),
    Q_sym: ("depletion charge on one side", "C"),
    rho: ("space-charge density", "C/m^3"),
    E_max: ("peak field magnitude", "V/m"),
    V_pt: ("punch-through reverse bias", "V"),
    C_sym: ("junction (depletion) capacitance", "F"),
    C_diff: ("diffusion capacitance", "F"),
    Q_s: ("stored minority-carrier charge", "C"),
}

_SZE = "S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed., Wiley, 2007, ch. 2."
_DEPLETION = ("Depletion approximation: fully ionised dopants, no free carriers inside the "
              "depleted region, none of its charge outside; the field is zero at its edges.",
              "The majority-carrier tails (Sze's 2kT/q correction) are neglected.")


def _poisson(segments):
    """Integrate dE/dx = rho/eps_s over contiguous segments (x0, x1, rho), E(left edge) = 0.

    Returns the field and the potential in each segment (psi = 0 at the left edge), the
    field at the right edge (zero for a neutral depletion region) and the total potential
    difference psi(right) - psi(left).
    """
    t = sp.Dummy("t")
    e_prev, psi_prev = sp.Integer(0), sp.Integer(0)
    fields, pots = [], []
    for x0, x1, rho in segments:
        e_seg = e_prev + sp.integrate(rho.subs(x, t) / eps_s, (t, x0, x))
        psi_seg = psi_prev - sp.integrate(e_seg.subs(x, t), (t, x0, x))
        fields.append(sp.expand(e_seg))
        pots.append(sp.expand(psi_seg))
        e_prev, psi_prev = sp.expand(e_seg.subs(x, x1)), sp.expand(psi_seg.subs(x, x1))
    return fields, pots, e_prev, psi_prev


def _piecewise(values, segments):
    pieces = [(v, (x >= x0) & (x <= x1)) for v, (x0, x1, _) in zip(values, segments)]
    return sp.Piecewise(*pieces, (0, True))


@lru_cache(maxsize=None)
def abrupt_junction() -> Derivation:
    """Abrupt p-n junction: field, potential, depletion width, charge and capacitance.

    Returns
    -------
    Derivation
        Results ``depletion_width`` W [m], ``x_n``, ``x_p`` [m], ``peak_field`` |E(0)| [V/m],
        ``charge`` Q = q N_D x_n A [C], ``capacitance`` dQ/dV_r [F], ``capacitance_eps_a_over_w``
        eps_s A/W [F] (equal to the former), ``field`` E(x) [V/m] and ``potential`` psi(x) [V]
        (piecewise in x), ``built_in_potential`` (k_B T/q) ln(N_A N_D/n_i^2) [V] (Boltzmann
        statistics), ``depletion_width_one_sided`` (N_A -> infinity) [m].
    """
    segs = [(-x_p, 0, -q * N_A), (0, x_n, q * N_D)]
    fields, pots, e_end, drop = _poisson(segs)
    neutral = sp.Eq(e_end, 0)
    xp_sol = sp.solve(neutral, x_p)[0]
    bc = sp.Eq(drop, V_bi + V_r)
    xn_sol = [r for r in sp.solve(bc.subs(x_p, xp_sol), x_n) if not r.could_extract_minus_sign()][0]
    xn_sol = sp.simplify(xn_sol)
    xp_val = sp.simplify(xp_sol.subs(x_n, xn_sol))
    w = sp.simplify(sp.factor(xn_sol + xp_val))
    charge = sp.simplify(q * N_D * xn_sol * area)
    cap = sp.simplify(sp.diff(charge, V_r))
    identity = sp.simplify(cap - eps_s * area / w)
    peak = sp.simplify(-fields[0].subs(x, 0).subs(x_p, xp_val))
    sub = {x_p: xp_val, x_n: xn_sol}
    field = _piecewise([f.subs(sub) for f in fields], [(-xp_val, 0, None), (0, xn_sol, None)])
    potential = sp.Piecewise((pots[0].subs(sub), (x >= -xp_val) & (x <= 0)),
                             (pots[1].subs(sub), (x > 0) & (x <= xn_sol)),
                             (0, x < -xp_val), (V_bi + V_r, True))
    # built-in potential: E_F - E_i = kT ln(N_D/n_i) on the n side, E_i - E_F = kT ln(N_A/n_i) on p
    vt = k_B * T / q
    vbi_sum = vt * (sp.log(N_D / n_i) + sp.log(N_A / n_i))
    vbi = vt * sp.logcombine(sp.log(N_D / n_i) + sp.log(N_A / n_i), force=True)
    w_one = sp.simplify(sp.limit(w, N_A, sp.oo))
    steps = [
        Step("Charge density in the depletion approximation",
             sp.Eq(rho, _piecewise([s[2] for s in segs], segs))),
        Step("Poisson's equation", sp.Eq(sp.Derivative(E_sym(x), x), rho / eps_s)),
        Step("Integrate from the p edge, where E = 0 (p side)", sp.Eq(E_sym(x), fields[0])),
        Step("... and on the n side", sp.Eq(E_sym(x), fields[1])),
        Step("E = 0 at the n edge too: charge neutrality", neutral),
        Step("Hence", sp.Eq(x_p, xp_sol)),
        Step("Potential $\\psi = -\\int E\\,dx$ (zero at the p edge), p side", sp.Eq(psi_sym(x), pots[0])),
        Step("... n side", sp.Eq(psi_sym(x), pots[1])),
        Step("The total drop equals the built-in potential plus the reverse bias", bc),
        Step("Solve for the n-side depth", sp.Eq(x_n, xn_sol)),
        Step("and the p-side depth", sp.Eq(x_p, xp_val)),
        Step("Depletion width $W = x_n + x_p$", sp.Eq(W, w)),
        Step("Peak field at the metallurgical junction", sp.Eq(E_max, peak)),
        Step("Charge on the n side", sp.Eq(Q_sym, charge)),
        Step("Capacitance $C_j = dQ/dV_r$", sp.Eq(C_sym, cap)),
        Step("Identity: $C_j - \\epsilon_s A/W$ simplifies to", sp.Eq(C_sym - eps_s * area / W, identity)),
        Step("Built-in potential: $(E_F - E_i)/q$ on the n side minus that on the p side, "
             "from Boltzmann statistics $N_D = n_i e^{(E_F-E_i)/kT}$, $N_A = n_i e^{(E_i-E_F)/kT}$",
             sp.Eq(V_bi, vbi_sum)),
        Step("Combined", sp.Eq(V_bi, vbi)),
        Step("One-sided junction ($N_A \\to \\infty$)", sp.Eq(W, w_one)),
    ]
    return Derivation(
        title="Abrupt p-n junction from Poisson's equation",
        steps=steps,
        results={"depletion_width": eq(W, w), "x_n": eq(x_n, xn_sol), "x_p": eq(x_p, xp_val),
                 "peak_field": eq(E_max, peak), "charge": eq(Q_sym, charge),
                 "capacitance": eq(C_sym, cap), "capacitance_eps_a_over_w": eps_s * area / w,
                 "identity_residual": identity, "field": eq(E_sym(x), field),
                 "potential": eq(psi_sym(x), potential), "built_in_potential": eq(V_bi, vbi),
                 "depletion_width_one_sided": w_one},
        symbols=JUNCTION_SYMBOLS,
        assumptions=_DEPLETION + ("Valid for V_r > -V_bi (the depletion region must exist); "
                                  "near and beyond flat band the depletion approximation fails.",),
        references=(_SZE,),
    )


@lru_cache(maxsize=None)
def linearly_graded_junction() -> Derivation:
    """Linearly graded junction: rho = q a x over -W/2 < x < W/2; the cube-root law.

    Returns
    -------
    Derivation
        Results ``depletion_width`` (12 eps_s (V_bi+V_r)/(q a))^(1/3) [m], ``capacitance``
        dQ/dV_r [F], ``capacitance_eps_a_over_w`` [F], ``charge`` [C], ``peak_field`` [V/m],
        ``field`` E(x) [V/m], ``identity_residual`` (zero).
    """
    segs = [(-W / 2, W / 2, q * a * x)]
    fields, pots, e_end, drop = _poisson(segs)
    bc = sp.Eq(drop, V_bi + V_r)
    w_sol = [r for r in sp.solve(bc, W) if r.is_real is not False and not r.could_extract_minus_sign()]
    w_sol = sp.simplify(w_sol[0])
    charge_w = sp.integrate(q * a * x, (x, 0, W / 2)) * area
    charge = charge_w.subs(W, w_sol)
    cap = sp.simplify(sp.diff(charge, V_r))
    identity = sp.simplify(cap - eps_s * area / w_sol)
    peak = sp.simplify(-fields[0].subs(x, 0).subs(W, w_sol))
    steps = [
        Step("Charge density of a linear impurity gradient", sp.Eq(rho, q * a * x)),
        Step("Poisson's equation", sp.Eq(sp.Derivative(E_sym(x), x), q * a * x / eps_s)),
        Step("Integrate from the edge $-W/2$ where E = 0", sp.Eq(E_sym(x), fields[0])),
        Step("The field vanishes at $+W/2$ by symmetry (neutrality)", sp.Eq(e_end, 0)),
        Step("Potential drop across the layer", sp.Eq(psi_sym(W / 2) - psi_sym(-W / 2), drop)),
        Step("Equal to the built-in potential plus the reverse bias", bc),
        Step("Cube-root law for the depletion width", sp.Eq(W, w_sol)),
        Step("Charge on one side", sp.Eq(Q_sym, charge_w)),
        Step("Capacitance $dQ/dV_r$", sp.Eq(C_sym, cap)),
        Step("Identity: $C_j - \\epsilon_s A/W$ simplifies to", sp.Eq(C_sym - eps_s * area / W, identity)),
        Step("Peak field", sp.Eq(E_max, peak)),
    ]
    return Derivation(
        title="Linearly graded junction from Poisson's equation",
        steps=steps,
        results={"depletion_width": eq(W, w_sol), "capacitance": eq(C_sym, cap),
                 "capacitance_eps_a_over_w": eps_s * area / w_sol, "charge": eq(Q_sym, charge),
                 "peak_field": eq(E_max, peak),
                 "field": eq(E_sym(x), _piecewise([fields[0].subs(W, w_sol)],
                                                  [(-w_sol / 2, w_sol / 2, None)])),
                 "identity_residual": identity},
        symbols=JUNCTION_SYMBOLS,
        assumptions=_DEPLETION + ("V_bi is taken as given; for the graded junction it depends "
                                  "weakly on W itself (Sze: V_bi = (2kT/q) ln(a W / 2 n_i)).",),
        references=(_SZE,),
    )


@lru_cache(maxsize=None)
def pin_junction() -> Derivation:
    """p+ / i / n+ junction below and above punch-through of the i layer.

    The i layer (thickness d) carries a small net donor density N_i, so the junction is at
    its p+ side (x = 0) and the depletion region grows into it.

    Returns
    -------
    Derivation
        Results ``depletion_width`` (Piecewise in V_r) [m], ``capacitance`` eps_s A / W [F],
        ``punch_through_voltage`` V_pt [V] (reverse bias at which the i layer is just
        depleted), ``depletion_width_below`` and ``depletion_width_above`` [m],
        ``capacitance_below``, ``capacitance_above`` (dQ/dV_r) [F], ``x_n_above`` depletion
        depth into the n+ contact [m], ``identity_residual_above`` (zero).
    """
    # below punch-through: an abrupt p+/i junction
    segs_b = [(-x_p, 0, -q * N_A), (0, w_i, q * N_i)]
    _, _, e_b, drop_b = _poisson(segs_b)
    xp_b = sp.solve(sp.Eq(e_b, 0), x_p)[0]
    wi_sol = [r for r in sp.solve(sp.Eq(drop_b.subs(x_p, xp_b), V_bi + V_r), w_i)
              if not r.could_extract_minus_sign()][0]
    wi_sol = sp.simplify(wi_sol)
    w_below = sp.simplify(wi_sol + xp_b.subs(w_i, wi_sol))
    vpt_sol = sp.solve(sp.Eq(drop_b.subs(x_p, xp_b).subs(w_i, d), V_bi + V_r), V_r)[0]
    vpt = sp.simplify(vpt_sol)
    cap_below = sp.simplify(sp.diff(q * N_i * wi_sol * area, V_r))
    # above punch-through: the field reaches the n+ contact
    segs_a = [(-x_p, 0, -q * N_A), (0, d, q * N_i), (d, d + x_n, q * N_D)]
    fields_a, _, e_a, drop_a = _poisson(segs_a)
    xp_a = sp.solve(sp.Eq(e_a, 0), x_p)[0]
    bc_a = sp.Eq(drop_a.subs(x_p, xp_a), V_bi + V_r)
    roots = sp.solve(bc_a, x_n)
    probe = {N_A: 1e25, N_D: 1e25, N_i: 1e19, d: 1e-5, eps_s: 1e-10, q: 1.6e-19, V_bi: 0.8, V_r: 50}
    xn_a = [r for r in roots if complex(sp.N(r.subs(probe))).real > 0][0]
    xn_a = sp.simplify(xn_a)
    w_above = sp.simplify(xp_a.subs(x_n, xn_a) + d + xn_a)
    charge_a = q * N_A * xp_a.subs(x_n, xn_a) * area
    cap_above = sp.simplify(sp.diff(charge_a, V_r))
    identity_a = sp.simplify(cap_above - eps_s * area / w_above)
    w_pw = sp.Piecewise((w_below, V_r <= vpt), (w_above, True))
    steps = [
        Step("Below punch-through: charge $-qN_A$ on $(-x_p, 0)$ and $qN_i$ on $(0, w_i)$; "
             "Poisson's equation with E = 0 at both edges gives", sp.Eq(x_p, xp_b)),
        Step("Potential drop equal to $V_{bi} + V_r$", sp.Eq(drop_b.subs(x_p, xp_b), V_bi + V_r)),
        Step("Depleted depth of the i layer", sp.Eq(w_i, wi_sol)),
        Step("Depletion width below punch-through", sp.Eq(W, w_below)),
        Step("Punch-through: $w_i = d$ at the reverse bias", sp.Eq(V_pt, vpt)),
        Step("Above punch-through: charge $-qN_A$, $qN_i$ on $(0, d)$, $qN_D$ on $(d, d+x_n)$; "
             "field", sp.Eq(E_sym(x), _piecewise(fields_a, segs_a))),
        Step("Neutrality (E = 0 at the n+ edge)", sp.Eq(x_p, xp_a)),
        Step("Potential drop equal to $V_{bi} + V_r$", bc_a),
        Step("Depletion depth into the n+ contact (positive root)", sp.Eq(x_n, xn_a)),
        Step("Depletion width above punch-through", sp.Eq(W, w_above)),
        Step("Capacitance $dQ/dV_r$ above punch-through", sp.Eq(C_sym, cap_above)),
        Step("Identity: $C_j - \\epsilon_s A/W$ simplifies to",
             sp.Eq(C_sym - eps_s * area / W, identity_a)),
    ]
    return Derivation(
        title="PIN junction below and above punch-through",
        steps=steps,
        results={"depletion_width": eq(W, w_pw), "capacitance": eq(C_sym, eps_s * area / w_pw),
                 "punch_through_voltage": eq(V_pt, vpt), "depletion_width_below": w_below,
                 "depletion_width_above": w_above, "capacitance_below": cap_below,
                 "capacitance_above": cap_above, "x_n_above": xn_a,
                 "identity_residual_above": identity_a},
        symbols=JUNCTION_SYMBOLS,
        assumptions=_DEPLETION + ("The i layer is lightly n type (N_i > 0) and depletes from "
                                  "the p+ side; V_bi is taken as given (the same value in both "
                                  "regimes, as in the usual textbook treatment).",),
        references=(_SZE,),
    )


@lru_cache(maxsize=None)
def diffusion_capacitance() -> Derivation:
    """Diffusion (storage) capacitance from the stored minority charge, Q = tau I.

    Returns
    -------
    Derivation
        Results ``capacitance`` tau I/(n V_t) [F] (for I >> I_s), ``capacitance_exact``
        tau (I + I_s)/(n V_t) [F], ``relative_error`` of the former, -I_s/(I + I_s).
    """
    vt = k_B * T / q
    t = sp.Symbol("t", real=True)
    q_t = sp.Function("Q_s")(t)
    charge_control = sp.Eq(sp.Derivative(q_t, t), I_F - q_t / tau)
    steady = sp.solve(charge_control.rhs, q_t)[0]
    diode = I_s * (sp.exp(V_f / (n_id * vt)) - 1)
    q_v = steady.subs(I_F, diode)
    c_v = sp.diff(q_v, V_f)
    # express through the current: exp(V/(n Vt)) = 1 + I/I_s
    c_i = sp.simplify(c_v.subs(sp.exp(V_f / (n_id * vt)), 1 + I_F / I_s))
    c_approx = sp.limit(c_i / I_F, I_F, sp.oo) * I_F
    rel = sp.simplify(c_approx / c_i - 1)
    steps = [
        Step("Charge control: the stored minority charge $Q_s$ is fed by the current and "
             "recombines (or leaves) in the time $\\tau$", charge_control),
        Step("Steady state", sp.Eq(Q_s, steady)),
        Step("Diode law (forward voltage $V_f = -V_r$)", sp.Eq(I_F, diode)),
        Step("Stored charge versus voltage", sp.Eq(Q_s, q_v)),
        Step("Capacitance $C = dQ_s/dV_f$", sp.Eq(C_diff, c_v)),
        Step("In terms of the current", sp.Eq(C_diff, c_i)),
        Step("For $I \\gg I_s$", sp.Eq(C_diff, c_approx)),
    ]
    return Derivation(
        title="Diffusion capacitance from the stored charge",
        steps=steps,
        results={"capacitance": eq(C_diff, c_approx), "capacitance_exact": c_i,
                 "relative_error": rel},
        symbols={**JUNCTION_SYMBOLS, t: ("time", "s")},
        assumptions=("Quasi-static charge control (frequencies well below 1/tau).",
                     "For a long-base diode the small-signal diffusion capacitance carries an "
                     "extra factor 1/2 (Sze and Ng, 3rd ed., sec. 2.3); the charge-control form "
                     "holds for a short base, with tau the transit time.",),
        references=(_SZE, "B. G. Streetman and S. K. Banerjee, Solid State Electronic Devices, "
                          "6th ed., 2006, ch. 5."),
    )
