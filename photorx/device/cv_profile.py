"""Doping profile from a measured C-V curve (the standard C-V profiling method).

N(W) = 2 / (q eps A^2 d(1/C^2)/dV_R) at the depth W = eps A / C, with the derivative of
1/C^2 taken from a smoothing spline (or a Savitzky-Golay filter) so that measurement
noise is not amplified by differencing.
"""

from __future__ import annotations

import numpy as np

from .._validate import require_positive
from ..constants import q as Q_E
from ..errors import DesignError
from .junction_base import check_material

__all__ = ["doping_profile", "profile_from_capacitance"]


def _as_cv(cv):
    """(bias [V], capacitance [F], temperature or None) of a C-V table or (bias, C) pair."""
    if hasattr(cv, "columns"):
        for col in ("reverse_bias", "capacitance"):
            if col not in cv.columns:
                raise DesignError(f"cv has no column {col!r}; read it with photorx.read_cv or "
                                  "give a table with reverse_bias [V] and capacitance [F]",
                                  parameter="cv")
        t = cv["temperature"].to_numpy(float) if "temperature" in cv.columns else None
        return cv["reverse_bias"].to_numpy(float), cv["capacitance"].to_numpy(float), t
    try:
        v, c = cv
    except (TypeError, ValueError):
        raise DesignError("cv must be a C-V table (photorx.read_cv) or a pair (bias [V], "
                          "capacitance [F])", parameter="cv") from None
    return (np.asarray(v, dtype=float).ravel(),
            np.asarray(require_positive("capacitance", c, "F"), dtype=float).ravel(), None)


def profile_from_capacitance(bias, capacitance, area, permittivity, method="spline",
                             smoothing=None, window=7):
    """C-V profile (depth, doping, slope) from arrays; the core of :func:`doping_profile`.

    Parameters
    ----------
    bias : array_like
        Reverse bias [V], strictly increasing, >= 5 points.
    capacitance : array_like
        Junction capacitance [F] at ``bias``, > 0.
    area : float
        Junction area [m^2], > 0.
    permittivity : float
        Permittivity of the semiconductor [F/m], > 0.
    method : {"spline", "savgol"}, optional
        Differentiation of 1/C^2: a cubic smoothing spline
        (:func:`scipy.interpolate.make_smoothing_spline`, smoothing chosen by generalised
        cross-validation unless ``smoothing`` is given) or a Savitzky-Golay filter
        (:func:`scipy.signal.savgol_filter`, quadratic, ``window`` points; needs evenly
        spaced bias).
    smoothing : float, optional
        Smoothing parameter of the spline (``lam`` of make_smoothing_spline), >= 0.
    window : int, optional
        Window length of the Savitzky-Golay filter [points], odd, >= 5.

    Returns
    -------
    depth, doping, slope : numpy.ndarray
        W = eps A / C [m] (from the smoothed curve), N = 2 / (q eps A^2 slope) [m^-3], and
        slope = d(1/C^2)/dV [F^-2 V^-1], at each bias.
    """
    v = np.asarray(bias, dtype=float)
    c = np.asarray(capacitance, dtype=float)
    if v.size < 5:
        raise DesignError.out_of_range("cv", v.size, "points", ">= 5 points to differentiate")
    if np.any(np.diff(v) <= 0):
        raise DesignError("reverse_bias must be strictly increasing for the profile",
                          parameter="cv")
    area = float(require_positive("area", area, "m^2"))
    y = 1.0 / c**2
    scale = float(np.max(y))
    yn = y / scale
    if method == "spline":
        from scipy.interpolate import make_smoothing_spline

        lam = None if smoothing is None else float(require_positive("smoothing", smoothing))
        spline = make_smoothing_spline(v, yn, lam=lam)
        smooth, slope = spline(v), spline.derivative()(v)
    elif method == "savgol":
        from scipy.signal import savgol_filter

        step = np.diff(v)
        if np.ptp(step) > 1e-6 * np.mean(step):
            raise DesignError("method='savgol' needs evenly spaced reverse_bias; use "
                              "method='spline'", parameter="method")
        w = int(window)
        if w < 5 or w % 2 == 0 or w > v.size:
            raise DesignError.out_of_range("window", w, "points",
                                           f"odd, 5 to {v.size} (number of points)")
        smooth = savgol_filter(yn, w, 2, mode="interp")
        slope = savgol_filter(yn, w, 2, deriv=1, delta=float(np.mean(step)), mode="interp")
    else:
        raise DesignError(f"method = {method!r} is invalid; valid: 'spline' or 'savgol'",
                          parameter="method")
    smooth, slope = smooth * scale, slope * scale
    with np.errstate(divide="ignore", invalid="ignore"):
        depth = permittivity * area * np.sqrt(np.where(smooth > 0, smooth, np.nan))
        doping = 2.0 / (Q_E * permittivity * area**2 * slope)
    return depth, doping, slope


def doping_profile(cv, area, material, method="spline", smoothing=None, window=7, trim=2):
    """Apparent doping against depth from a C-V measurement (C-V profiling).

    Parameters
    ----------
    cv : pandas.DataFrame or (array_like, array_like)
        C-V table from :func:`~photorx.device.measurements.read_cv` (columns
        ``reverse_bias`` [V], ``capacitance`` [F], optional ``temperature`` [K]; one
        profile per temperature), or a pair (bias [V], capacitance [F]). At least 5
        points per temperature.
    area : float
        Junction area [m^2], > 0.
    material : Material or str
        Semiconductor (its permittivity is used), e.g. ``"Si"``.
    method : {"spline", "savgol"}, optional
        How 1/C^2 is differentiated (see :func:`profile_from_capacitance`).
    smoothing : float, optional
        Spline smoothing parameter, >= 0; default by generalised cross-validation.
    window : int, optional
        Savitzky-Golay window [points], odd, >= 5 (``method="savgol"`` only).
    trim : int, optional
        Points left out at each end of the bias range, >= 0 (default 2): there the
        smoothing spline's natural end condition (zero curvature) or the filter's end fit
        biases the slope (by about 10 % at the first point of a graded junction).

    Returns
    -------
    pandas.DataFrame
        Columns ``reverse_bias`` [V], ``depth`` [m] and ``doping`` [m^-3] (and
        ``temperature`` [K] when the table has it), one row per bias where the slope of
        1/C^2 is positive; ``attrs["units"]`` gives the units and
        ``attrs["dropped_bias"]`` the biases left out (the ``trim`` end points, and
        points with slope <= 0, e.g. noise, or past punch-through).

    Notes
    -----
    For a one-sided junction in the depletion approximation, 1/C^2 = 2 (Vbi + V_R) /
    (q eps N A^2), so N(W) = 2 / (q eps A^2 d(1/C^2)/dV_R) at W = eps A / C. For a
    two-sided junction the result is the series combination N+ N- / (N+ + N-) of the
    dopings at the two depletion edges, at the total width W (a linearly graded junction
    of gradient a gives a W / 4). The method cannot resolve features finer than a few
    Debye lengths L_D = sqrt(eps kT / (q^2 N)) (Debye averaging), and near zero bias the
    mobile carriers at the depletion edges (the -2kT/q shift of the 1/C^2 intercept) make
    the first points approximate.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section 2.3.2 (C-V profiling, Eq. (33)-(34)) (from memory).
    .. [2] D. K. Schroder, *Semiconductor Material and Device Characterization*, 3rd ed.,
       Wiley, 2006, ch. 2 (differential capacitance profiling, Debye length limit).
    .. [3] W. C. Johnson and P. T. Panousis, "The influence of Debye length on the C-V
       measurement of doping profiles", IEEE Trans. Electron Devices 18, 965 (1971).
    """
    import pandas as pd

    mat = check_material(material)
    v, c, t = _as_cv(cv)
    trim = int(trim)
    if trim < 0:
        raise DesignError.out_of_range("trim", trim, "points", ">= 0")
    groups = [(None, np.ones(v.size, dtype=bool))] if t is None else [
        (float(tt), t == tt) for tt in np.unique(t)]
    frames, dropped = [], []
    for temp, sel in groups:
        depth, doping, _ = profile_from_capacitance(v[sel], c[sel], area, mat.permittivity,
                                                    method, smoothing, window)
        ok = np.isfinite(doping) & (doping > 0) & np.isfinite(depth)
        inner = np.zeros(ok.size, dtype=bool)
        inner[trim:ok.size - trim] = True
        ok &= inner
        dropped.extend(v[sel][~ok].tolist())
        part = {"reverse_bias": v[sel][ok], "depth": depth[ok], "doping": doping[ok]}
        if temp is not None:
            part["temperature"] = np.full(int(ok.sum()), temp)
        frames.append(pd.DataFrame(part))
    out = pd.concat(frames, ignore_index=True)
    out.attrs["units"] = {"reverse_bias": "V", "depth": "m", "doping": "m^-3",
                          "temperature": "K"}
    out.attrs["dropped_bias"] = dropped
    return out
