"""Symbolic derivations of the transimpedance amplifier, from Kirchhoff's current law.

Circuit (as in :mod:`photorx.circuit.tia`): the photodiode (current source i_ph drawn out of
the junction node j, junction capacitance C_d, shunt resistance R_sh) behind the series
resistance R_s feeds the summing node n; the amplifier's inverting input sits at n (input
capacitance C_in to ground), its output o drives R_f || C_f back to n, and v_o = -A(s) v_n.

Each function returns a :class:`~photorx.symbolic.derivation.Derivation`; each is derived
once per process (``functools.lru_cache``) because sympy is slow. Frequency-domain results
are functions of the Laplace variable ``s``: evaluate them at ``s = 2j*pi*f``.

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2-3.
.. [2] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, ch. 18.
.. [3] G. F. Franklin, J. D. Powell and A. Emami-Naeini, *Feedback Control of Dynamic
   Systems*, Pearson (any edition), section on second-order response and phase margin.
"""

from __future__ import annotations

from functools import lru_cache

import sympy as sp

from .derivation import Derivation, Step, eq

__all__ = [
    "tia_nodal_analysis",
    "tia_single_pole",
    "tia_two_pole",
    "tia_second_order",
    "tia_feedback_capacitor",
    "tia_phase_margin",
    "TIA_SYMBOLS",
]

s = sp.Symbol("s")
R_f, C_f, C_d, C_in, R_sh, A_0, GBW, f_2, C_i = sp.symbols(
    "R_f C_f C_d C_in R_sh A_0 GBW f_2 C_i", positive=True)
R_s = sp.Symbol("R_s", nonnegative=True)
A = sp.Symbol("A")
v_j, v_n, v_o, i_ph, e_n = sp.symbols("v_j v_n v_o i_ph e_n")
omega, omega_0, Q, zeta, x = sp.symbols("omega omega_0 Q zeta x", positive=True)
Z_t, T_loop, beta, G_n, M_p, Z_0, f_0, f_3dB, H, omega_c = sp.symbols(
    "Z_t T_loop beta G_n M_p Z_0 f_0 f_3dB H omega_c")
r_cf, tan_phi_m = sp.symbols("r tan_phi_m")

#: meaning and SI unit of every symbol used by the TIA derivations
TIA_SYMBOLS = {
    s: ("Laplace variable, s = j 2 pi f", "rad/s"),
    R_f: ("feedback resistance", "ohm"),
    C_f: ("feedback capacitance", "F"),
    C_d: ("photodiode capacitance", "F"),
    C_in: ("amplifier input capacitance", "F"),
    C_i: ("total input capacitance C_d + C_in", "F"),
    R_sh: ("photodiode shunt resistance", "ohm"),
    R_s: ("photodiode series resistance", "ohm"),
    A: ("open-loop voltage gain A(s)", "1"),
    A_0: ("DC open-loop gain", "1"),
    GBW: ("gain-bandwidth product", "Hz"),
    f_2: ("second amplifier pole", "Hz"),
    v_j: ("junction node voltage", "V"),
    v_n: ("summing node voltage", "V"),
    v_o: ("output voltage", "V"),
    i_ph: ("photocurrent, drawn out of the junction node", "A"),
    e_n: ("voltage source in series with the non-inverting input", "V"),
    omega: ("angular frequency", "rad/s"),
    omega_0: ("natural angular frequency", "rad/s"),
    Q: ("quality factor of the closed-loop poles", "1"),
    zeta: ("damping ratio 1/(2Q)", "1"),
    x: ("normalised frequency squared (omega/omega_0)^2", "1"),
    Z_t: ("closed-loop transimpedance", "ohm"),
    T_loop: ("loop gain A beta", "1"),
    beta: ("feedback factor", "1"),
    G_n: ("noise gain 1/beta", "1"),
    M_p: ("peak of |Z_t|/Z_0", "1"),
    Z_0: ("DC transimpedance", "ohm"),
    f_0: ("natural frequency", "Hz"),
    f_3dB: ("-3 dB bandwidth", "Hz"),
    H: ("closed-loop response normalised to 1 at DC", "1"),
    omega_c: ("loop crossover angular frequency", "rad/s"),
    r_cf: ("ratio of the approximate to the exact C_f", "1"),
    tan_phi_m: ("tangent of the phase margin", "1"),
}

_REFS = ("J. G. Graeme, Photodiode Amplifiers: Op Amp Solutions, McGraw-Hill, 1996, ch. 2-3.",
         "P. C. D. Hobbs, Building Electro-Optical Systems, 2nd ed., Wiley, 2009, ch. 18.")

_Y_f = 1 / R_f + s * C_f
_Z_f = 1 / _Y_f
_Z_d = 1 / (1 / R_sh + s * C_d)
_A_single = A_0 / (1 + s * A_0 / (2 * sp.pi * GBW))
_A_two = _A_single / (1 + s / (2 * sp.pi * f_2))


def _nodal_equations(e_source=0):
    """KCL at the junction and summing nodes, and the amplifier law, with a source e_n at (+)."""
    kcl_j = sp.Eq(v_j * (1 / R_sh + s * C_d) + (v_j - v_n) / R_s + i_ph, 0)
    kcl_n = sp.Eq((v_n - v_j) / R_s + v_n * s * C_in + (v_n - v_o) * _Y_f, 0)
    amp = sp.Eq(v_o, A * (e_source - v_n))
    return kcl_j, kcl_n, amp


@lru_cache(maxsize=None)
def tia_nodal_analysis() -> Derivation:
    """Closed-loop transimpedance, feedback factor, loop gain and noise gain for any A(s).

    Returns
    -------
    Derivation
        Results ``transimpedance`` Z_t(s) [ohm] (function of A), ``feedback_factor`` beta,
        ``loop_gain`` T = A beta, ``noise_gain`` 1/beta (the ideal-amplifier gain from a
        source at the non-inverting input), ``transimpedance_factored``
        Z_f Z_d/(Z_d + R_s) T/(1+T) (the same function, in the textbook form).

    Notes
    -----
    Exact for a linear amplifier with gain A(s), no approximation beyond linearity.
    """
    kcl_j, kcl_n, amp = _nodal_equations()
    sol = sp.solve([kcl_j, kcl_n, amp], [v_j, v_n, v_o], dict=True)[0]
    zt = sp.factor(sp.cancel(sol[v_o] / i_ph))
    # feedback factor: the fraction of v_o that returns to the summing node with i_ph = 0
    v_j_open = sp.solve(kcl_j.subs(i_ph, 0), v_j)[0]  # the diode branch as a divider
    kcl_n_open = kcl_n.subs(v_j, v_j_open)
    beta_expr = sp.factor(sp.cancel(sp.solve(kcl_n_open, v_n)[0] / v_o))
    loop = A * beta_expr
    # noise gain: output per volt at the non-inverting input, in the limit A -> infinity
    eqs_e = _nodal_equations(e_n)
    sol_e = sp.solve([e_.subs(i_ph, 0) for e_ in eqs_e], [v_j, v_n, v_o], dict=True)[0]
    ng_finite = sp.cancel(sol_e[v_o] / e_n)
    ng = sp.factor(sp.limit(ng_finite, A, sp.oo))
    textbook = _Z_f * _Z_d / (_Z_d + R_s) * loop / (1 + loop)
    steps = [
        Step("Kirchhoff's current law at the junction node (photocurrent drawn out of it)", kcl_j),
        Step("Kirchhoff's current law at the summing node", kcl_n),
        Step("Amplifier: output = -A(s) times the inverting-input voltage", amp),
        Step("Solve the three linear equations for $v_o / i_{ph}$", sp.Eq(Z_t, zt)),
        Step("Feedback factor: $v_n / v_o$ with the photocurrent off (diode branch as a divider)",
             sp.Eq(beta, beta_expr)),
        Step("Loop gain", sp.Eq(T_loop, loop)),
        Step("Gain from a source at the non-inverting input, finite $A$", sp.Eq(v_o / e_n, ng_finite)),
        Step("Noise gain: its limit for $A \\to \\infty$, equal to $1/\\beta$",
             sp.Eq(G_n, ng)),
        Step("The transimpedance in the textbook form $Z_f \\, Z_d/(Z_d+R_s) \\, T/(1+T)$",
             sp.Eq(Z_t, textbook)),
    ]
    return Derivation(
        title="Transimpedance amplifier by nodal analysis",
        steps=steps,
        results={"transimpedance": eq(Z_t, zt), "feedback_factor": eq(beta, beta_expr),
                 "loop_gain": eq(T_loop, loop), "noise_gain": eq(G_n, ng),
                 "transimpedance_factored": textbook},
        symbols=TIA_SYMBOLS,
        assumptions=("Linear small-signal circuit; the amplifier is a voltage-controlled voltage "
                     "source of gain -A(s) with infinite input and zero output impedance; "
                     "its input capacitance is lumped to ground at the summing node.",),
        references=_REFS,
    )


def _with_amplifier(gain, title, extra_refs=()):
    nodal = tia_nodal_analysis()
    zt = sp.factor(sp.cancel(nodal["transimpedance"].subs(A, gain)))
    loop = sp.factor(sp.cancel(nodal["loop_gain"].subs(A, gain)))
    return Derivation(
        title=title,
        steps=list(nodal.steps[:4]) + [
            Step("Open-loop gain of the amplifier", sp.Eq(A, gain)),
            Step("Substitute into the nodal solution", sp.Eq(Z_t, zt)),
            Step("Loop gain", sp.Eq(T_loop, loop)),
        ],
        results={"transimpedance": eq(Z_t, zt), "loop_gain": eq(T_loop, loop),
                 "noise_gain": eq(G_n, nodal["noise_gain"]), "open_loop_gain": eq(A, gain)},
        symbols=TIA_SYMBOLS,
        assumptions=nodal.assumptions,
        references=_REFS + tuple(extra_refs),
    )


@lru_cache(maxsize=None)
def tia_single_pole() -> Derivation:
    """Transimpedance and loop gain with a dominant-pole amplifier A = A_0/(1 + s A_0/(2 pi GBW)).

    Returns
    -------
    Derivation
        Results ``transimpedance`` [ohm], ``loop_gain``, ``noise_gain``, ``open_loop_gain``,
        all functions of ``s`` [rad/s] and the circuit symbols (SI).
    """
    return _with_amplifier(_A_single, "Transimpedance amplifier, dominant-pole amplifier")


@lru_cache(maxsize=None)
def tia_two_pole() -> Derivation:
    """As :func:`tia_single_pole` with a second amplifier pole at ``f_2`` [Hz]."""
    return _with_amplifier(_A_two, "Transimpedance amplifier, two-pole amplifier")


@lru_cache(maxsize=None)
def tia_second_order() -> Derivation:
    """Canonical second-order form of the TIA with a dominant-pole amplifier and an ideal diode.

    Ideal diode: R_s = 0, R_sh -> infinity; C_i = C_d + C_in.

    Returns
    -------
    Derivation
        Results ``transimpedance`` Z_0 omega_0^2/(s^2 + s omega_0/Q + omega_0^2) [ohm],
        ``dc_transimpedance`` Z_0 [ohm], ``natural_frequency`` f_0 [Hz], ``omega_0`` [rad/s],
        ``q`` Q, ``damping`` zeta, ``bandwidth`` f_-3dB [Hz] (exact), ``peaking`` |Z_t|max/Z_0
        (Q/sqrt(1 - 1/(4 Q^2)) for Q > 1/sqrt(2), else 1), ``peaking_of_q`` the same in Q, ``natural_frequency_gbw_limit`` and ``q_gbw_limit`` (A_0 -> inf),
        ``bandwidth_ratio`` f_-3dB/f_0 as a function of Q.

    Notes
    -----
    With A_0 -> infinity, f_0 = sqrt(GBW/(2 pi R_f (C_i + C_f))) (Graeme 1996, ch. 3) and
    Q = sqrt(2 pi GBW R_f (C_i+C_f)) / (1 + 2 pi GBW R_f C_f).
    """
    zt_full = tia_single_pole()["transimpedance"]
    zt_ideal = sp.limit(zt_full.subs(R_s, 0), R_sh, sp.oo)
    zt_ci = sp.factor(sp.cancel(zt_ideal.subs(C_d, C_i - C_in)))
    num, den = sp.fraction(sp.cancel(zt_ci))
    den_poly = sp.Poly(sp.expand(den), s)
    a2, a1, a0 = (den_poly.coeff_monomial(s ** k) for k in (2, 1, 0))
    w0 = sp.sqrt(sp.factor(a0 / a2))
    q_expr = sp.sqrt(sp.factor(a0 * a2)) / sp.factor(a1)
    z0 = sp.factor(num / a0)
    f0 = w0 / (2 * sp.pi)
    canonical = z0 * omega_0 ** 2 / (s ** 2 + s * omega_0 / Q + omega_0 ** 2)
    # -3 dB: |H(j omega)|^2 = 1/((1 - x)^2 + x/Q^2) = 1/2 with x = (omega/omega_0)^2
    mag2_inv = (1 - x) ** 2 + x / Q ** 2
    half_power = sp.Eq(mag2_inv, 2)
    x3 = [r for r in sp.solve(half_power, x) if complex(sp.N(r.subs(Q, sp.Rational(1, 3)))).real > 0]
    x3 = sp.simplify(x3[0])
    # numerically stable form of the same root: x^2 - b x - 1 = 0, b = 2 - 1/Q^2 < 2, so the
    # root (b + sqrt(b^2 + 4))/2 = 2/(sqrt(b^2 + 4) - b) with no cancellation for small Q
    b_q = 2 - 1 / Q ** 2
    x3_stable = 2 / (sp.sqrt(b_q ** 2 + 4) - b_q)
    if sp.simplify(sp.radsimp(x3 - x3_stable)) != 0:  # pragma: no cover - derivation guard
        raise RuntimeError("half-power root: stable form differs from the solved root")
    ratio = sp.sqrt(x3_stable)
    bandwidth = f0 * ratio.subs(Q, q_expr)
    # peaking: the minimum of (1-x)^2 + x/Q^2 over x
    x_pk = sp.solve(sp.diff(mag2_inv, x), x)[0]
    peaking_q = sp.simplify(1 / sp.sqrt(mag2_inv.subs(x, x_pk)))
    # below Q = 1/sqrt(2) the stationary point x_pk is negative: the maximum is the DC value 1
    peaking = sp.Piecewise((peaking_q, Q > 1 / sp.sqrt(2)), (1, True))
    f0_lim = sp.limit(f0, A_0, sp.oo)
    q_lim = sp.simplify(sp.limit(q_expr, A_0, sp.oo))
    steps = [
        Step("Dominant-pole transimpedance from nodal analysis (see tia_single_pole)",
             sp.Eq(Z_t, zt_full)),
        Step("Ideal diode: $R_s = 0$, $R_{sh} \\to \\infty$; input capacitance $C_i = C_d + C_{in}$",
             sp.Eq(Z_t, zt_ci)),
        Step("Compare the denominator $a_2 s^2 + a_1 s + a_0$ with the canonical form",
             sp.Eq(Z_t, canonical)),
        Step("Natural frequency $\\omega_0 = \\sqrt{a_0/a_2}$", sp.Eq(omega_0, w0)),
        Step("Quality factor $Q = \\sqrt{a_0 a_2}/a_1$", sp.Eq(Q, q_expr)),
        Step("DC transimpedance $Z_0 = N/a_0$", sp.Eq(Z_0, z0)),
        Step("Magnitude response in $x = (\\omega/\\omega_0)^2$",
             sp.Eq(sp.Abs(Z_t / Z_0) ** 2, 1 / mag2_inv)),
        Step("Half-power point: solve $(1-x)^2 + x/Q^2 = 2$ for the positive root", sp.Eq(x, x3)),
        Step("Rationalised (no cancellation for small Q)", sp.Eq(f_3dB / f_0, ratio)),
        Step("Peaking: minimum of $(1-x)^2 + x/Q^2$ at", sp.Eq(x, x_pk)),
        Step("Peak of $|Z_t|/Z_0$ (for $Q > 1/\\sqrt{2}$; else the DC value 1)", sp.Eq(M_p, peaking)),
        Step("Ideal-gain limit $A_0 \\to \\infty$ of $f_0$", sp.Eq(f_0, f0_lim)),
        Step("Ideal-gain limit of $Q$", sp.Eq(Q, q_lim)),
    ]
    return Derivation(
        title="Transimpedance amplifier: canonical second-order form",
        steps=steps,
        results={"transimpedance": eq(Z_t, zt_ci), "dc_transimpedance": eq(Z_0, z0),
                 "natural_frequency": eq(f_0, f0), "omega_0": eq(omega_0, w0), "q": eq(Q, q_expr),
                 "damping": eq(zeta, 1 / (2 * q_expr)), "bandwidth": eq(f_3dB, bandwidth),
                 "peaking": eq(M_p, peaking.subs(Q, q_expr)), "natural_frequency_gbw_limit": f0_lim,
                 "q_gbw_limit": q_lim, "bandwidth_ratio": ratio, "peaking_of_q": peaking},
        symbols=TIA_SYMBOLS,
        assumptions=("Dominant-pole amplifier (no further poles), R_s = 0, no shunt resistance.",
                     "Peaking exists only for Q > 1/sqrt(2); below, the maximum is the DC value.",),
        references=_REFS,
    )


@lru_cache(maxsize=None)
def tia_feedback_capacitor() -> Derivation:
    """Feedback capacitance for a maximally flat (Butterworth, Q = 1/sqrt(2)) response.

    Returns
    -------
    Derivation
        Results ``cf_butterworth`` (exact, finite A_0) [F], ``cf_butterworth_gbw_limit``
        (exact for A_0 -> inf) sqrt(2 C_i/(w_t R_f) - 1/(w_t R_f)^2), ``cf_butterworth_approx``
        sqrt(C_i/(pi GBW R_f)), ``approx_ratio`` approx/exact (A_0 -> inf) =
        1/sqrt(1 - 1/(4 pi GBW R_f C_i)), ``cf_45deg`` sqrt(C_i/(2 pi GBW R_f)) (the feedback zero
        at the loop's crossover, Graeme 1996), ``cf_for_q`` exact for any target Q (A_0 -> inf).

    Notes
    -----
    The approximation drops the 1 against 2 omega_t R_f C_i in
    (omega_t R_f C_f)^2 = 2 omega_t R_f C_i - 1; it overestimates C_f by the factor
    ``approx_ratio``, about 1 + 1/(8 pi GBW R_f C_i): below 1 % when 2 pi GBW R_f C_i > 25.
    """
    so = tia_second_order()
    q_fin = so["q"]
    q_lim = so["q_gbw_limit"]
    w_t = 2 * sp.pi * GBW
    eq_exact = sp.Eq(q_fin ** 2, sp.Rational(1, 2))
    roots = [r for r in sp.solve(eq_exact, C_f) if _positive_root(r)]
    cf_exact = sp.simplify(roots[0])
    eq_lim = sp.Eq(q_lim ** 2, Q ** 2)
    roots_q = [r for r in sp.solve(eq_lim, C_f) if _positive_root(r.subs(Q, sp.Rational(7, 10)))]
    cf_q = sp.simplify(roots_q[0])
    cf_lim = sp.simplify(cf_q.subs(Q, 1 / sp.sqrt(2)))
    cf_approx = sp.sqrt(2 * C_i / (w_t * R_f))
    ratio = sp.simplify(cf_approx / cf_lim)
    cf_45 = sp.sqrt(C_i / (w_t * R_f))
    steps = [
        Step("Quality factor of the closed loop (see tia_second_order)", sp.Eq(Q, q_fin)),
        Step("Maximally flat: set $Q^2 = 1/2$ and solve the quadratic for $C_f$",
             sp.Eq(C_f, cf_exact)),
        Step("With $A_0 \\to \\infty$, any target $Q$: $Q^2 (1+\\omega_t R_f C_f)^2 = "
             "\\omega_t R_f (C_i + C_f)$", sp.Eq(C_f, cf_q)),
        Step("Maximally flat, $A_0 \\to \\infty$: $(\\omega_t R_f C_f)^2 = 2\\omega_t R_f C_i - 1$",
             sp.Eq(C_f, cf_lim)),
        Step("Usual approximation: drop the 1 (valid for $2\\pi\\, GBW R_f C_i \\gg 1$)",
             sp.Eq(C_f, cf_approx)),
        Step("Ratio approximation / exact", sp.Eq(r_cf, ratio)),
        Step("Feedback zero at the intercept of $1/\\beta$ and $A$ (about 45 degrees phase margin)",
             sp.Eq(C_f, cf_45)),
    ]
    return Derivation(
        title="Feedback capacitance for a maximally flat transimpedance",
        steps=steps,
        results={"cf_butterworth": cf_exact, "cf_butterworth_gbw_limit": cf_lim,
                 "cf_butterworth_approx": cf_approx, "approx_ratio": ratio, "cf_45deg": cf_45,
                 "cf_for_q": cf_q},
        symbols=TIA_SYMBOLS,
        assumptions=("Dominant-pole amplifier, ideal diode (R_s = 0, no shunt resistance).",
                     "A positive C_f exists only if the loop is underdamped without it, "
                     "Q(C_f = 0) > 1/sqrt(2); for A_0 -> infinity that is 2 pi GBW R_f C_i > 1/2. "
                     "Otherwise cf_butterworth is negative or NaN: no C_f is needed.",),
        references=_REFS,
    )


def _positive_root(r):
    """True if the root ``r`` is positive for a typical design (checked numerically)."""
    val = r.subs({GBW: 1e8, R_f: 1e4, C_i: 5e-12, A_0: 1e5, C_in: 1e-12})
    val = complex(sp.N(val))
    return abs(val.imag) < 1e-9 * abs(val.real) and val.real > 0


@lru_cache(maxsize=None)
def tia_phase_margin() -> Derivation:
    """Phase margin of the TIA loop (exact) and the classical phase margin - Q relation.

    Returns
    -------
    Derivation
        Results ``phase_margin`` [deg] and ``crossover`` [Hz] of the loop
        T = (2 pi GBW/(s + omega_a)) (1 + s R_f C_f)/(1 + s R_f (C_f + C_i)),
        omega_a = 2 pi GBW/A_0 (ideal diode), exact; ``phase_margin_of_zeta`` and
        ``phase_margin_of_q`` [deg] for the two-pole loop omega_0^2/(s (s + 2 zeta omega_0)),
        the classical relation PM = atan(2 zeta / sqrt(sqrt(1 + 4 zeta^4) - 2 zeta^2)),
        exact for the TIA when C_f = 0 and A_0 -> infinity; ``q_of_phase_margin`` its inverse
        Q = sqrt(cos phi_m)/sin phi_m (argument ``phi_m`` in degrees).
    """
    w_a = 2 * sp.pi * GBW / A_0
    w_t = 2 * sp.pi * GBW
    tz, tp = R_f * C_f, R_f * (C_f + C_i)
    loop = w_t / (s + w_a) * (1 + s * tz) / (1 + s * tp)
    # |T(j omega)|^2 = 1: a quadratic in omega^2
    u = sp.Symbol("u", positive=True)  # u = omega^2
    mag_eq = sp.Eq(w_t ** 2 * (1 + u * tz ** 2), (u + w_a ** 2) * (1 + u * tp ** 2))
    poly = sp.Poly(sp.expand(mag_eq.rhs - mag_eq.lhs), u)
    qa, qb, qc = (poly.coeff_monomial(u ** k) for k in (2, 1, 0))   # qa u^2 + qb u + qc = 0
    u_roots = sp.solve(mag_eq, u)
    u_c = [r for r in u_roots if _positive_root(r.subs(C_f, 1e-13))][0]
    # the same positive root in the two cancellation-free forms (qa > 0 > qc): choose by sign of qb
    disc = sp.sqrt(qb ** 2 - 4 * qa * qc)
    u_stable = sp.Piecewise((-2 * qc / (qb + disc), qb >= 0), ((disc - qb) / (2 * qa), True))
    for probe in ({C_f: 1e-13}, {C_f: 1e-11}):
        vals = {GBW: 1e8, R_f: 1e4, C_i: 5e-12, A_0: 1e5, **probe}
        if abs(complex(sp.N(u_c.subs(vals))) / complex(sp.N(u_stable.subs(vals))) - 1) > 1e-12:
            raise RuntimeError("crossover: stable form differs from the solved root")  # pragma: no cover
    w_c = sp.sqrt(u_stable)
    pm = 180 - sp.atan(w_c / w_a) * 180 / sp.pi + (sp.atan(w_c * tz) - sp.atan(w_c * tp)) * 180 / sp.pi
    # classical two-pole loop
    loop2 = omega_0 ** 2 / (s * (s + 2 * zeta * omega_0))
    u2 = [r for r in sp.solve(sp.Eq(omega_0 ** 4, u * (u + 4 * zeta ** 2 * omega_0 ** 2)), u)
          if not r.could_extract_minus_sign()]
    u2 = [r for r in u2 if complex(sp.N(r.subs({omega_0: 1, zeta: sp.Rational(1, 2)}))).real > 0][0]
    wc2 = sp.sqrt(sp.factor(u2))
    pm2 = sp.simplify(sp.atan(2 * zeta * omega_0 / wc2)) * 180 / sp.pi
    pm2_q = pm2.subs(zeta, 1 / (2 * Q))
    # closed-loop of the two-pole loop: T/(1+T) = omega_0^2/(s^2 + 2 zeta omega_0 s + omega_0^2)
    closed = sp.factor(sp.cancel(loop2 / (1 + loop2)))
    pm_sym = sp.Symbol("phi_m", positive=True)
    # invert: with t = tan(PM) and w = zeta^2, t^2 (sqrt(1 + 4 w^2) - 2 w) = 4 w
    t, w = sp.symbols("t w", positive=True)
    inv_eq = sp.Eq(t ** 2 * (sp.sqrt(1 + 4 * w ** 2) - 2 * w), 4 * w)
    w_t_sol = sp.solve(inv_eq, w)[0]
    # 0 < PM < 90 deg: tan and cos are positive, so the absolute values sympy keeps drop out
    q_pm = sp.simplify(1 / (2 * sp.sqrt(w_t_sol.subs(t, sp.tan(pm_sym))))).replace(sp.Abs, lambda a: a)
    q_pm_rad = sp.simplify(sp.trigsimp(q_pm))
    q_pm = q_pm_rad.subs(pm_sym, pm_sym * sp.pi / 180)  # phase margin in degrees throughout
    steps = [
        Step("Loop gain of the TIA with a dominant-pole amplifier and an ideal diode",
             sp.Eq(T_loop, loop)),
        Step("Crossover: $|T(j\\omega)|^2 = 1$ is a quadratic in $u = \\omega^2$", mag_eq),
        Step("Its positive root", sp.Eq(omega_c, sp.sqrt(u_c))),
        Step("Written without cancellation ($a u^2 + b u + c = 0$, $a > 0 > c$)",
             sp.Eq(omega_c, w_c)),
        Step("Phase margin: $180° + \\arg T(j\\omega_c)$ in degrees", sp.Eq(pm_sym, pm)),
        Step("Classical two-pole loop (the TIA with $C_f = 0$, $A_0 \\to \\infty$, "
             "$\\omega_0^2 = \\omega_t/(R_f C_i)$, $2\\zeta\\omega_0 = 1/(R_f C_i)$)",
             sp.Eq(T_loop, loop2)),
        Step("Its closed loop is the canonical second-order response", sp.Eq(H, closed)),
        Step("Crossover: $\\omega_0^4 = \\omega^2(\\omega^2 + 4\\zeta^2\\omega_0^2)$",
             sp.Eq(omega_c, wc2)),
        Step("Phase margin $= 90° - \\arctan(\\omega_c / 2\\zeta\\omega_0)$", sp.Eq(pm_sym, pm2)),
        Step("In terms of $Q = 1/(2\\zeta)$", sp.Eq(pm_sym, pm2_q)),
        Step("Inverse: square $\\tan\\phi_m$ and solve for $\\zeta^2$", inv_eq),
        Step("Solution", sp.Eq(zeta ** 2, w_t_sol.subs(t, tan_phi_m))),
        Step("Q for a phase margin $0 < \\phi_m < 90°$", sp.Eq(Q, q_pm_rad)),
        Step("With $\\phi_m$ in degrees", sp.Eq(Q, q_pm)),
    ]
    return Derivation(
        title="Phase margin of the transimpedance loop and its relation to Q",
        steps=steps,
        results={"phase_margin": eq(pm_sym, pm), "crossover": w_c / (2 * sp.pi),
                 "phase_margin_of_zeta": pm2, "phase_margin_of_q": pm2_q,
                 "q_of_phase_margin": q_pm, "loop_gain": loop},
        symbols={**TIA_SYMBOLS, pm_sym: ("phase margin", "deg"),
                 u: ("omega squared", "rad^2/s^2"), t: ("tangent of the phase margin", "1"),
                 w: ("damping ratio squared", "1")},
        assumptions=("Dominant-pole amplifier and ideal diode for the exact TIA phase margin.",
                     "The classical relation holds exactly only for a two-pole loop without a "
                     "zero; the feedback zero 1/(R_f C_f) makes the TIA's phase margin larger "
                     "than the relation predicts for the same closed-loop Q.",),
        references=_REFS + ("G. F. Franklin, J. D. Powell, A. Emami-Naeini, Feedback Control of "
                            "Dynamic Systems (PM - damping relation for the two-pole loop).",),
    )
