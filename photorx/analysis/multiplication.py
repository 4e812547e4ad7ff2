"""Avalanche multiplication in the receiver: multiplied signal and the multiplied shot noise.

One routing function, :func:`multiplied_currents`, turns a photodiode's primary
photocurrents and dark current into what the noise and sensitivity stages need. A
photodiode without a ``multiplication`` method (a PIN) has gain M = 1, excess noise
factor F = 1 and no k (NaN: at M = 1, F(1) = 1 for every k, so k does not apply); its dark
current is all unmultiplied. An avalanche photodiode (duck typing:
``multiplication(v_r)``, see :meth:`photorx.device.apd_receiver.ApdAtTemperature.multiplication`)
gives M, F, k_eff and the split I_ds (surface, unmultiplied) and I_dm (bulk, multiplied).

Signal current at the amplifier: M R P. White shot-noise density (McIntyre 1966;
Personick 1973):

    S_i = 2 q I_ds + 2 q (I_ph + I_bg + I_dm) M^2 F(M),

written as equivalent full-shot currents (2 q I_eq is the density): signal M F (M R P),
background M F (M R P_bg), dark I_ds + M^2 F I_dm.
"""

from __future__ import annotations

import numpy as np

__all__ = ["multiplied_currents", "PIN_K_EFFECTIVE"]

#: k_effective reported for a photodiode without gain: NaN, "does not apply".
PIN_K_EFFECTIVE = np.nan


def multiplied_currents(photodiode, reverse_bias, responsivity, optical_power,
                        background_power, dark_current):
    """Multiplied currents and shot-noise equivalents of a photodiode at its operating point.

    Parameters
    ----------
    photodiode : object
        A photodiode (``dark_current`` is all unmultiplied) or a view with a
        ``multiplication(v_r)`` method (an avalanche photodiode).
    reverse_bias : float or array_like
        Reverse bias [V].
    responsivity : array_like
        Primary (unity-gain) responsivity [A/W], > 0.
    optical_power : array_like
        Signal optical power [W], >= 0.
    background_power : array_like
        Background optical power [W], >= 0.
    dark_current : array_like
        Total dark current at the amplifier [A] (negative in forward bias).

    Returns
    -------
    dict of numpy.ndarray
        ``gain`` M, ``excess_noise_factor`` F, ``k_effective`` (NaN for a PIN),
        ``noise_factor`` M F (shot-noise density per unit multiplied current over 2 q),
        ``signal_current`` M R P [A], ``background_current`` M R P_bg [A],
        ``shot_signal``, ``shot_background``, ``shot_dark`` (equivalent full-shot
        currents [A]: M F M R P, M F M R P_bg, I_ds + M^2 F I_dm) and
        ``shot_dark_multiplied`` (M^2 F I_dm [A], the multiplied part of ``shot_dark``).

    References
    ----------
    .. [1] R. J. McIntyre, Multiplication noise in uniform avalanche diodes, IEEE Trans.
       Electron Devices 13, 164 (1966).
    .. [2] S. D. Personick, Receiver design for digital fiber optic communication systems,
       Bell Syst. Tech. J. 52, 843 (1973).
    """
    r = np.asarray(responsivity, dtype=float)
    mult = getattr(photodiode, "multiplication", None)
    if callable(mult):
        d = mult(reverse_bias)
        m, f, k = d["gain"], d["excess_noise_factor"], d["k_effective"]
        i_ds, i_dm = d["surface_dark_current"], d["bulk_dark_current"]
    else:
        m = f = np.ones(np.shape(dark_current))
        k = np.full(np.shape(dark_current), PIN_K_EFFECTIVE)
        # shot noise of |I|: the forward-biased dark current is negative (Schottky 1918)
        i_ds, i_dm = np.abs(np.asarray(dark_current, dtype=float)), 0.0
    m, f = np.asarray(m, dtype=float), np.asarray(f, dtype=float)
    nf = m * f
    i_sig = m * r * np.asarray(optical_power, dtype=float)
    i_bg = m * r * np.asarray(background_power, dtype=float)
    dark_mult = m**2 * f * np.asarray(i_dm, dtype=float)
    return {"gain": m, "excess_noise_factor": f, "k_effective": np.asarray(k, dtype=float),
            "noise_factor": nf, "signal_current": i_sig, "background_current": i_bg,
            "shot_signal": nf * i_sig, "shot_background": nf * i_bg,
            "shot_dark": np.asarray(i_ds, dtype=float) + dark_mult,
            "shot_dark_multiplied": dark_mult}
