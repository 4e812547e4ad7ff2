"""Symbolic noise derivations of the transimpedance receiver.

* :func:`tia_input_noise` - the input-referred current noise density, from nodal analysis
  with every noise source injected (the e_n*C term appears by itself).
* :func:`tia_output_noise` - the output noise of the canonical second-order response
  integrated over all frequencies in closed form (Parseval's theorem via the Lyapunov
  equation of a state-space realisation; no numeric integration).
* :func:`nep` - noise-equivalent power from the signal-to-noise ratio of one.

Each function is derived once per process (``functools.lru_cache``).

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 4-6.
.. [2] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, ch. 18.
.. [3] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
   Wiley, 1993, ch. 1-2.
"""

from __future__ import annotations

from functools import lru_cache

import sympy as sp

from .derivation import Derivation, Step, c_0, eq, h, k_B, q
from .tia import TIA_SYMBOLS, tia_second_order
from .tia import A, C_d, C_f, C_i, C_in, R_f, R_sh, Q, e_n, s, v_n, v_o

__all__ = ["tia_input_noise", "tia_output_noise", "nep", "NOISE_SYMBOLS"]

f = sp.Symbol("f", positive=True)
T = sp.Symbol("T", positive=True)
I_dc, i_n = sp.symbols("I i_n", nonnegative=True)
e_nw = sp.Symbol("e_n", nonnegative=True)  # white density (the node-analysis e_n is a signal)
i_x = sp.Symbol("i_x")
Z_0, f_0, S_w, C_T = sp.symbols("Z_0 f_0 S_w C_T", positive=True)
eta, lam, P = sp.symbols("eta lambda_0 P", positive=True)
omega = sp.Symbol("omega", positive=True)
H_e, H_i, S_i, f_c, A_ss, I_0, I_2, v_rms = sp.symbols("H_e H_i S_i f_c A_ss I_0 I_2 v_rms")
H_f = sp.Function("H")(f)
P_ss, NEP, NEP_f = sp.symbols("P_ss NEP NEP_f")

#: meaning and SI unit of the symbols introduced by the noise derivations
NOISE_SYMBOLS = {
    **TIA_SYMBOLS,
    f: ("frequency", "Hz"),
    T: ("temperature of the resistors", "K"),
    I_dc: ("DC diode current whose shot noise counts (dark + signal + background)", "A"),
    i_n: ("amplifier input current noise density (white)", "A/rtHz"),
    e_nw: ("amplifier input voltage noise density (white)", "V/rtHz"),
    i_x: ("noise current drawn out of the summing node", "A"),
    Z_0: ("DC transimpedance", "ohm"),
    f_0: ("natural frequency of the second-order response", "Hz"),
    S_w: ("white part of the input-referred current noise PSD", "A^2/Hz"),
    C_T: ("total capacitance at the summing node C_d + C_in + C_f", "F"),
    eta: ("external quantum efficiency", "1"),
    lam: ("vacuum wavelength", "m"),
    P: ("optical power", "W"),
    H_e: ("output per unit voltage noise at the non-inverting input", "1"),
    H_i: ("output per unit noise current at the summing node", "ohm"),
    S_i: ("input-referred current noise PSD", "A^2/Hz"),
    f_c: ("noise corner where the e_n C_T term equals the rest", "Hz"),
    A_ss: ("state matrix of the second-order response", "rad/s"),
    I_0: ("integral of |H|^2 over 0 < f < infinity", "Hz"),
    I_2: ("integral of f^2 |H|^2 over 0 < f < infinity", "Hz^3"),
    v_rms: ("rms output noise voltage", "V"),
    P_ss: ("controllability Gramian of the state-space realisation", "-"),
    NEP: ("noise-equivalent power", "W"),
    NEP_f: ("noise-equivalent power per root hertz", "W/rtHz"),
}

_REFS = ("J. G. Graeme, Photodiode Amplifiers: Op Amp Solutions, McGraw-Hill, 1996, ch. 4-6.",
         "P. C. D. Hobbs, Building Electro-Optical Systems, 2nd ed., Wiley, 2009, ch. 18.",
         "C. D. Motchenbacher and J. A. Connelly, Low-Noise Electronic System Design, Wiley, "
         "1993, ch. 1-2.")


def _mag2(expr):
    """|expr(j omega)|^2 for a rational function of s with real coefficients."""
    return sp.factor(sp.expand(sp.cancel(expr.subs(s, sp.I * omega) * expr.subs(s, -sp.I * omega))))


@lru_cache(maxsize=None)
def tia_input_noise() -> Derivation:
    """Input-referred current noise PSD of the TIA (R_s = 0), for any amplifier gain A(s).

    Returns
    -------
    Derivation
        Results ``input_noise_psd`` S_i(f) [A^2/Hz] = 4kT/R_f + 4kT/R_sh + 2qI + i_n^2
        + e_n^2 ((1/R_f + 1/R_sh)^2 + (2 pi f C_T)^2), C_T = C_d + C_in + C_f;
        ``input_noise_density`` sqrt(S_i) [A/rtHz]; ``en_term`` the e_n part [A^2/Hz];
        ``en_transfer`` the input-referred transfer of e_n, (Y_f + Y_in) [S];
        ``noise_corner`` the frequency where the e_n*C term equals the white rest [Hz].

    Notes
    -----
    Exact for a linear amplifier of any A(s) when R_s = 0: every current source sits at the
    summing node, so its output transfer equals the transimpedance, and e_n reaches the
    output through A/(1 + T) = Z_t (Y_f + Y_in).
    """
    kcl = sp.Eq(v_n * (1 / R_sh + s * C_d + s * C_in) + (v_n - v_o) * (1 / R_f + s * C_f) + i_x, 0)
    amp = sp.Eq(v_o, A * (e_n - v_n))
    sol = sp.solve([kcl, amp], [v_n, v_o], dict=True)[0][v_o]
    h_i = sp.factor(sp.cancel(sp.diff(sol, i_x)))
    h_e = sp.factor(sp.cancel(sp.diff(sol, e_n)))
    referred = sp.factor(sp.cancel(h_e / h_i))
    mag2 = _mag2(referred)
    mag2_f = sp.expand(mag2.subs(omega, 2 * sp.pi * f))
    c_t_def = C_d + C_in + C_f
    en_term = e_nw ** 2 * mag2_f
    currents = 4 * k_B * T / R_f + 4 * k_B * T / R_sh + 2 * q * I_dc + i_n ** 2
    psd = currents + en_term
    en_tidy = e_nw ** 2 * ((1 / R_f + 1 / R_sh) ** 2 + (2 * sp.pi * f * C_T) ** 2)
    residual = sp.simplify(en_term - en_tidy.subs(C_T, c_t_def))
    rest = currents + e_nw ** 2 * (1 / R_f + 1 / R_sh) ** 2
    corner_eq = sp.Eq(e_nw ** 2 * (2 * sp.pi * f * C_T) ** 2, rest)
    # linear in f^2; keep the root as sqrt(rest)/(2 pi C_T e_n) so that R_sh = inf evaluates
    corner = sp.sqrt(rest) / (2 * sp.pi * C_T * e_nw)
    if sp.simplify(corner_eq.lhs.subs(f, corner) - corner_eq.rhs) != 0:  # pragma: no cover
        raise RuntimeError("noise corner: the root does not solve its equation")
    steps = [
        Step("Kirchhoff's current law at the summing node ($R_s = 0$) with a noise current "
             "$i_x$ drawn out of it", kcl),
        Step("Amplifier with its input voltage noise $e_n$ at the non-inverting input", amp),
        Step("Output per unit current: the transimpedance", sp.Eq(H_i, h_i)),
        Step("Output per unit $e_n$", sp.Eq(H_e, h_e)),
        Step("Referred to the input, $e_n$ becomes a current $e_n H_e/H_i$ (independent of A)",
             sp.Eq(H_e / H_i, referred)),
        Step("Its squared magnitude at $s = j\\omega$", sp.Eq(sp.Abs(H_e / H_i) ** 2, mag2)),
        Step("Uncorrelated sources add in power: Johnson noise of $R_f$ and $R_{sh}$, shot noise "
             "of the diode current, amplifier current noise, and the $e_n$ term",
             sp.Eq(S_i, psd)),
        Step("The $e_n$ term in the textbook form ($C_T = C_d + C_{in} + C_f$); the difference is",
             sp.Eq(en_term - en_tidy, residual)),
        Step("Frequency above which the $e_n C_T$ term exceeds the rest", corner_eq),
        Step("Its positive root", sp.Eq(f_c, corner)),
    ]
    return Derivation(
        title="Input-referred current noise of the transimpedance amplifier",
        steps=steps,
        results={"input_noise_psd": eq(S_i, psd), "input_noise_density": sp.sqrt(psd),
                 "en_term": en_term,
                 "en_transfer": referred, "input_noise_psd_tidy": currents + en_tidy,
                 "noise_corner": eq(f_c, corner)},
        symbols=NOISE_SYMBOLS,
        assumptions=("R_s = 0 (the series resistance adds its own term and splits the "
                     "injection points).",
                     "White amplifier densities; add the 1/f factors (1 + f_c/f) as needed.",
                     "Full shot noise 2qI of the diode's DC current; Johnson noise 4kT/R.",),
        references=_REFS,
    )


@lru_cache(maxsize=None)
def tia_output_noise() -> Derivation:
    """Total output noise of the canonical second-order TIA, integrated from 0 to infinity.

    Returns
    -------
    Derivation
        Results ``output_noise_ms`` v^2 [V^2] in terms of Z_0, f_0, Q, S_w, e_n, C_T:
        Z_0^2 (pi/2) Q f_0 (S_w + (2 pi f_0 e_n C_T)^2); ``output_noise_rms`` [V];
        ``output_noise_ms_circuit`` [V^2] in the circuit symbols (dominant-pole amplifier,
        R_s = 0, no shunt resistance); ``white_integral`` int_0^inf |H|^2 df = (pi/2) Q f_0 [Hz];
        ``f2_integral`` int_0^inf f^2 |H|^2 df = (pi/2) Q f_0^3 [Hz^3]; ``enbw`` (pi/2) Q f_0 [Hz];
        ``input_noise_rms`` v_rms/Z_0 [A].

    Notes
    -----
    H(s) = omega_0^2/(s^2 + s omega_0/Q + omega_0^2). Realised in controllable canonical
    form (A_ss, B, C), Parseval's theorem gives int_{-inf}^{inf} |C (j w - A_ss)^-1 B|^2 dw/2pi
    = C P C^T with A_ss P + P A_ss^T + B B^T = 0 (the Lyapunov equation); the one-sided
    integral over f is half of it. The white input-referred PSD S_w here includes e_n^2/R_f^2.
    """
    w0 = 2 * sp.pi * f_0
    a_ss = sp.Matrix([[0, 1], [-w0 ** 2, -w0 / Q]])
    b = sp.Matrix([0, 1])
    p11, p12, p22 = sp.symbols("p_11 p_12 p_22")
    p_mat = sp.Matrix([[p11, p12], [p12, p22]])
    lyap = a_ss * p_mat + p_mat * a_ss.T + b * b.T
    p_sol = sp.solve([lyap[0, 0], lyap[0, 1], lyap[1, 1]], [p11, p12, p22], dict=True)[0]
    p_num = p_mat.subs(p_sol)
    c_h = sp.Matrix([[w0 ** 2, 0]])          # H(s)
    c_sh = sp.Matrix([[0, w0 ** 2]])         # s H(s): its |.|^2 is omega^2 |H|^2
    # one-sided integrals over f: half the two-sided value; the s H term carries 1/(2 pi)^2
    white = sp.simplify((c_h * p_num * c_h.T)[0, 0] / 2)
    f2 = sp.simplify((c_sh * p_num * c_sh.T)[0, 0] / 2 / (2 * sp.pi) ** 2)
    ms = sp.factor(Z_0 ** 2 * (S_w * white + e_nw ** 2 * (2 * sp.pi * C_T) ** 2 * f2))
    so = tia_second_order()
    s_w_circuit = 4 * k_B * T / R_f + 2 * q * I_dc + i_n ** 2 + e_nw ** 2 / R_f ** 2
    circuit = ms.subs({Z_0: so["dc_transimpedance"], f_0: so["natural_frequency"], Q: so["q"],
                       S_w: s_w_circuit, C_T: C_i + C_f})
    steps = [
        Step("Output PSD: input-referred PSD times $|Z_t|^2$, with $Z_t = Z_0 H$ and the "
             "input PSD $S_w + e_n^2 (2\\pi f C_T)^2$ ($R_{sh} \\to \\infty$)",
             sp.Eq(v_rms ** 2, sp.Integral(Z_0 ** 2 * sp.Abs(H_f) ** 2
                                                  * (S_w + e_nw ** 2 * (2 * sp.pi * f * C_T) ** 2),
                                                  (f, 0, sp.oo)))),
        Step("State-space realisation of $H = \\omega_0^2/(s^2 + s\\omega_0/Q + \\omega_0^2)$: "
             "system matrix", sp.Eq(A_ss, a_ss, evaluate=False)),
        Step("Lyapunov equation $A P + P A^T + B B^T = 0$ (Parseval's theorem)",
             sp.Eq(lyap, sp.zeros(2, 2), evaluate=False)),
        Step("Its solution", sp.Eq(P_ss, p_num, evaluate=False)),
        Step("White part: $\\int_0^\\infty |H|^2 df = C P C^T / 2$",
             sp.Eq(I_0, white)),
        Step("$f^2$ part: $\\int_0^\\infty f^2 |H|^2 df$", sp.Eq(I_2, f2)),
        Step("Total output noise", sp.Eq(v_rms ** 2, ms)),
        Step("In the circuit symbols (dominant-pole amplifier, ideal diode)",
             sp.Eq(v_rms ** 2, circuit)),
    ]
    return Derivation(
        title="Integrated output noise of the second-order transimpedance response",
        steps=steps,
        results={"output_noise_ms": eq(v_rms ** 2, ms), "output_noise_rms": eq(v_rms, sp.sqrt(ms)),
                 "output_noise_ms_circuit": circuit, "white_integral": white, "f2_integral": f2,
                 "enbw": white, "input_noise_rms": sp.sqrt(ms) / Z_0},
        symbols={**NOISE_SYMBOLS, p11: ("Gramian entry", "-"), p12: ("Gramian entry", "-"),
                 p22: ("Gramian entry", "-")},
        assumptions=("Second-order closed loop (dominant-pole amplifier, R_s = 0, no shunt "
                     "resistance), white amplifier densities, Q > 0 (stable loop).",
                     "Integrated over 0 to infinity: the e_n C_T term converges only because "
                     "|H|^2 falls as f^-4; a post filter or a higher-order response changes it.",),
        references=_REFS,
    )


@lru_cache(maxsize=None)
def nep() -> Derivation:
    """Noise-equivalent power: the optical power whose photocurrent equals the noise current.

    Returns
    -------
    Derivation
        Results ``nep`` i_rms/R [W] (i_rms the input-referred rms noise current),
        ``nep_density`` sqrt(S_i)/R [W/rtHz], ``responsivity`` eta q lambda/(h c) [A/W].
    """
    i_rms, s_i, r = sp.symbols("i_rms S_i R", positive=True)
    responsivity = eta * q * lam / (h * c_0)
    snr = sp.Eq((r * P) ** 2 / i_rms ** 2, 1)
    p_sol = sp.solve(snr, P)[0]
    steps = [
        Step("Responsivity: $\\eta$ electrons per photon of energy $hc/\\lambda$",
             sp.Eq(r, responsivity)),
        Step("Signal current $RP$; signal-to-noise ratio of one", snr),
        Step("Noise-equivalent power", sp.Eq(NEP, p_sol)),
        Step("Per root hertz, from the input-referred PSD",
             sp.Eq(NEP_f, sp.sqrt(s_i) / r)),
    ]
    return Derivation(
        title="Noise-equivalent power",
        steps=steps,
        results={"nep": eq(NEP, p_sol.subs(r, responsivity)), "nep_density": sp.sqrt(s_i) / responsivity,
                 "responsivity": eq(r, responsivity), "nep_of_responsivity": p_sol},
        symbols={**NOISE_SYMBOLS, i_rms: ("input-referred rms noise current", "A"),
                 s_i: ("input-referred current noise PSD", "A^2/Hz"), r: ("responsivity", "A/W")},
        assumptions=("Power SNR of one in the electrical domain, (R P)^2 = i_rms^2; some texts "
                     "quote NEP per root hertz (nep_density).",),
        references=_REFS + ("B. E. A. Saleh and M. C. Teich, Fundamentals of Photonics, Wiley "
                            "(responsivity eta q lambda / h c).",),
    )
