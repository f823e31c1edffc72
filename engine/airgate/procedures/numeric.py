"""Helpers shared by the procedures: input checks, the procedures' one hourly factor, and the
exponential kernels with their small-argument limits (plain floats and numpy arrays).

Internal to the procedures (they re-export nothing from here); the checks raise ValueError
naming the parameter, the policy of every procedure.

References
----------
.. [1] Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley,
   New York: the CMFR transient whose exponentials and their integrals these kernels are.
.. [2] de Boor, C. (2001). *A Practical Guide to Splines*, revised edition. Springer, New York:
   divided differences and the Hermite–Genocchi formula.
"""

from __future__ import annotations

import math

import numpy as np

#: The procedures take the engine's units (:mod:`airgate.units`): airflow [L/s], volume [m³],
#: time [h]. An airflow per volume is then in (L/s)/m³, and a first-order rate in 1/h is
#: ``PER_HOUR × airflow / volume``: 3600 s per hour over 1000 L per m³ (exact). This is where
#: the mass balance turns airflows into rates; nothing outside the procedures converts them.
PER_HOUR = 3600.0 / 1000.0

__all__ = ["check_breaks", "exp_and_integral", "exp_convolution", "exp_convolution_ramp",
           "finite", "fraction", "nonneg", "out", "phi", "positive", "psi"]


def nonneg(name, value, *, strict=False):
    """``value`` as a float array, or ValueError naming ``name`` unless finite and >= 0.

    Parameters
    ----------
    name : str
        The parameter's name, for the message.
    value : float or array_like
        The value to check. [any unit]
    strict : bool
        Require > 0 instead of >= 0.

    Returns
    -------
    ndarray
        ``value`` as floats (0-d for a scalar).

    References
    ----------
    Common practice (one invalid-input policy for floats and arrays alike).

    Examples
    --------
    >>> float(nonneg("volume", 3))
    3.0
    >>> nonneg("volume", [1.0, -2.0])
    Traceback (most recent call last):
    ...
    ValueError: volume must be finite and >= 0, got [1.0, -2.0]
    """
    a = np.asarray(value, dtype=float)
    if a.ndim == 0:  # the common scalar case, without numpy reductions
        x = float(a)
        ok = math.isfinite(x) and (x > 0 if strict else x >= 0)
    elif a.size:  # the least and largest value: NaN fails every comparison
        lo = a.min()
        ok = bool(lo > 0 if strict else lo >= 0) and bool(a.max() < math.inf)
    else:
        ok = True
    if not ok:
        raise ValueError(f"{name} must be finite and {'>' if strict else '>='} 0, got {value!r}")
    return a


def positive(name, value):
    """:func:`nonneg` with ``strict=True``: finite and > 0.

    Parameters
    ----------
    name : str
        The parameter's name, for the message.
    value : float or array_like
        The value to check. [any unit]

    Returns
    -------
    ndarray
        ``value`` as floats.

    References
    ----------
    Common practice.

    Examples
    --------
    >>> positive("ez", 0.0)
    Traceback (most recent call last):
    ...
    ValueError: ez must be finite and > 0, got 0.0
    """
    return nonneg(name, value, strict=True)


def fraction(name, value, *, open_top=False):
    """``value`` as a float array, or ValueError naming ``name`` unless in [0, 1] ([0, 1)).

    Parameters
    ----------
    name : str
        The parameter's name, for the message.
    value : float or array_like
        The fraction to check. [-]
    open_top : bool
        Exclude 1.

    Returns
    -------
    ndarray
        ``value`` as floats.

    References
    ----------
    Common practice.

    Examples
    --------
    >>> fraction("fraction", 1.0, open_top=True)
    Traceback (most recent call last):
    ...
    ValueError: fraction must lie in [0, 1), got 1.0
    """
    a = np.asarray(value, dtype=float)
    if a.ndim == 0:
        x = float(a)
        ok = 0 <= x < 1 if open_top else 0 <= x <= 1
    elif a.size:  # the least and largest value: NaN fails every comparison
        hi = a.max()
        ok = bool(a.min() >= 0) and bool(hi < 1 if open_top else hi <= 1)
    else:
        ok = True
    if not ok:
        allowed = "[0, 1)" if open_top else "[0, 1]"
        raise ValueError(f"{name} must lie in {allowed}, got {value!r}")
    return a


def out(a):
    """0-d arrays back to Python floats, so float inputs give float results; arrays as they are.

    Parameters
    ----------
    a : float or array_like
        A result. [any unit]

    Returns
    -------
    float or ndarray
        A Python float for a 0-d input, else the array.

    References
    ----------
    Common practice.

    Examples
    --------
    >>> type(out(np.float64(2.0))).__name__, out(np.array([1.0])).shape
    ('float', (1,))
    """
    a = np.asarray(a)
    return float(a) if a.ndim == 0 else a


def phi(x):
    """``φ(x) = (1 − e^(−x)) / x``, with its limit 1 at x = 0, accurate for small x >= 0.

    Parameters
    ----------
    x : float or array_like
        A rate times a time, λτ. [-]

    Returns
    -------
    ndarray
        φ(x). [-]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001): the CMFR approach to steady state, C_ss·λτ·φ(λτ).

    Examples
    --------
    >>> float(phi(0.0)), round(float(phi(1.0)), 12)  # 1 − 1/e
    (1.0, 0.632120558829)
    """
    x = np.asarray(x, dtype=float)
    small = x < 1e-8
    safe = np.where(small, 1.0, x)
    return np.where(small, 1.0 - 0.5 * x, -np.expm1(-safe) / safe)


def psi(x):
    """``ψ(x) = (x − 1 + e^(−x)) / x²``, with its limit 1/2 at x = 0 (series below 0.01).

    Parameters
    ----------
    x : float or array_like
        A rate times a time, λτ (>= 0). [-]

    Returns
    -------
    ndarray
        ψ(x), the time integral of φ-shaped growth. [-]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001): the CMFR transient, integrated over time.

    Examples
    --------
    >>> float(psi(0.0)), round(float(psi(1.0)), 12)  # 1/e
    (0.5, 0.367879441171)
    """
    x = np.asarray(x, dtype=float)
    small = x < 1e-2
    safe = np.where(small, 1.0, x)
    series = 0.5 + x * (-1 / 6 + x * (1 / 24 + x * (-1 / 120 + x / 720)))
    return np.where(small, series, (safe + np.expm1(-safe)) / safe**2)


def exp_and_integral(rate, tau):
    """``e^(−rτ)`` and its integral over [0, τ], ``τ·φ(rτ) = −expm1(−rτ)/r``.

    Accurate for every rτ >= 0 (expm1 keeps small products exact); τ where r < 1e-300 (r = 0
    and rates whose reciprocal would overflow; the relative error r·τ/2 is then below
    1e-300·τ).

    Parameters
    ----------
    rate : float or array_like
        Decay rate r. [1/h]
    tau : float or array_like
        Time τ. [h]

    Returns
    -------
    decay, integral : ndarray
        e^(−rτ) [-] and its integral over [0, τ]. [h]

    References
    ----------
    Nazaroff & Alvarez-Cohen (2001), CMFR transient.

    Examples
    --------
    >>> [round(float(v), 12) for v in exp_and_integral(2.0, 0.5)]  # e^-1, (1 − e^-1)/2
    [0.367879441171, 0.316060279414]
    """
    rate = np.asarray(rate, dtype=float)
    y = rate * tau
    tiny = rate < 1e-300
    if np.any(tiny):
        inv = np.where(tiny, 0.0, 1.0 / np.where(tiny, 1.0, rate))
        tphi = -np.expm1(-y) * inv + np.where(tiny, tau, 0.0)
    else:
        tphi = np.expm1(-y)
        tphi *= -1.0 / rate
    return np.exp(-y), tphi


def check_breaks(times_breaks):
    """The piece boundaries as floats, or ValueError naming ``times_breaks``.

    Parameters
    ----------
    times_breaks : array_like, shape (n_pieces + 1,)
        Strictly increasing finite times. [h]

    Returns
    -------
    ndarray
        The boundaries. [h]

    References
    ----------
    Common practice.

    Examples
    --------
    >>> check_breaks([0, 1, 1])
    Traceback (most recent call last):
    ...
    ValueError: times_breaks must be a strictly increasing 1-D array of >= 2 times
    """
    b = np.asarray(times_breaks, dtype=float)
    if b.ndim != 1 or b.size < 2 or not np.all(np.isfinite(b)) or np.any(np.diff(b) <= 0):
        raise ValueError("times_breaks must be a strictly increasing 1-D array of >= 2 times")
    return b


def exp_convolution(a, b, tau):
    """``∫₀^τ e^(−a(τ−s))·e^(−b·s) ds = τ·e^(−min(a, b)·τ)·φ(|a − b|·τ)``.

    The response of a first-order decay a to a decaying input b, in the form free of
    cancellation for every pair of rates (equal rates included).

    Parameters
    ----------
    a, b : float or array_like
        The two decay rates (broadcast). [1/h]
    tau : float or array_like
        Time τ. [h]

    Returns
    -------
    ndarray
        The integral. [h]

    References
    ----------
    de Boor (2001): a first divided difference of the exponential, τ·f[aτ, bτ].

    Examples
    --------
    Equal rates give τ·e^(−aτ):

    >>> round(float(exp_convolution(2.0, 2.0, 1.0)), 12)  # e^-2
    0.135335283237
    """
    a, b = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
    return tau * np.exp(-np.minimum(a, b) * tau) * phi(np.abs(a - b) * tau)


def _second_divided_difference(x, y):
    """The divided difference f[x, y, 0] of f(t) = e^(−t), for x, y >= 0 (arrays broadcast):
    ∫ over the simplex of e^(−(t₀x + t₁y)), between e^(−max)/2 and 1/2.

    Where max(x, y) >= 1, ``(φ(lo) − e^(−lo)·φ(hi − lo)) / hi`` (lo <= hi; the two terms differ
    by at least a third of the first, so at most a couple of bits are lost); below it the
    series Σ_m (−1)^m h_m(x, y)/(m + 2)!, h_m the complete homogeneous polynomial of degree
    m, whose 19 terms reach a relative 1e-17."""
    x, y = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
    hi, lo = np.maximum(x, y), np.minimum(x, y)
    big = hi >= 1.0
    hb = np.where(big, hi, 1.0)
    lb = np.where(big, lo, 0.0)
    far = phi(lb) - np.exp(-lb) * phi(hb - lb)
    far /= hb
    hs, ls = np.where(big, 0.0, hi), np.where(big, 0.0, lo)
    h_m, lo_m, fact, total = np.ones_like(hs), np.ones_like(hs), 2.0, np.full(hs.shape, 0.5)
    for m in range(1, 19):
        lo_m = lo_m * ls
        h_m = hs * h_m + lo_m
        fact *= m + 2
        total += (-1) ** m * h_m / fact
    return np.where(big, far, total)


def exp_convolution_ramp(a, b, tau):
    """``∫₀^τ e^(−a(τ−s))·s·φ(b·s) ds = τ²·f[aτ, bτ, 0]`` with ``f(t) = e^(−t)``.

    The response of a first-order decay a to an input that rises from 0 with rate b towards
    its steady value, accurate for every pair of rates >= 0 (Hermite–Genocchi: the double
    integral is the second divided difference).

    Parameters
    ----------
    a, b : float or array_like
        The two decay rates, >= 0 (broadcast). [1/h]
    tau : float or array_like
        Time τ. [h]

    Returns
    -------
    ndarray
        The integral. [h²]

    References
    ----------
    de Boor (2001), divided differences and the Hermite–Genocchi formula.

    Examples
    --------
    With no decay at all the input is s and the integral τ²/2:

    >>> float(exp_convolution_ramp(0.0, 0.0, 2.0))
    2.0
    """
    tau = np.asarray(tau, dtype=float)
    return tau**2 * _second_divided_difference(np.asarray(a, dtype=float) * tau,
                                               np.asarray(b, dtype=float) * tau)


def finite(name, value):
    """``value`` as a float array; ValueError naming ``name`` unless every element is finite.

    Parameters
    ----------
    name : str
        The parameter's name, for the message.
    value : float or array_like
        The value to check. [any unit]

    Returns
    -------
    ndarray
        ``value`` as floats.

    References
    ----------
    Common practice.

    Examples
    --------
    >>> finite("c0", float("inf"))
    Traceback (most recent call last):
    ...
    ValueError: c0 must be finite, got inf
    """
    a = np.asarray(value, dtype=float)
    if not (math.isfinite(float(a)) if a.ndim == 0 else bool(np.all(np.isfinite(a)))):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return a


def layout_pieces(n, zone_inputs, system_inputs):
    """Broadcast zone inputs to (n_pieces, n_zones) and system inputs to (n_pieces,)."""
    zone = {}
    for name, value in zone_inputs.items():
        a = np.asarray(value, dtype=float)
        if a.ndim > 2 or a.ndim == 2 and a.shape[0] not in (1, n):
            raise ValueError(f"{name}: shape {a.shape}, expected (n_zones,) or (n_pieces={n}, "
                             f"n_zones)")
        zone[name] = a.reshape((1,) * (2 - a.ndim) + a.shape)
    shape = (n, np.broadcast_shapes(*(a.shape for a in zone.values()))[1])
    zone = {k: np.broadcast_to(a, shape) for k, a in zone.items()}
    system = {}
    for name, value in system_inputs.items():
        a = np.asarray(value, dtype=float)
        if a.ndim > 1 or a.ndim == 1 and a.shape[0] not in (1, n):
            raise ValueError(f"{name}: shape {a.shape}, expected a scalar or (n_pieces={n},)")
        system[name] = np.broadcast_to(a, (n,))
    return zone, system


def in_room_loss(volume, cadr, k_deposition, k_inactivation):
    """L_z = CADR + (k_dep + k_inact)·V/PER_HOUR [L/s]."""
    v = positive("volume", volume)
    return (nonneg("cadr", cadr)
            + (nonneg("k_deposition", k_deposition)
               + nonneg("k_inactivation", k_inactivation)) * v / PER_HOUR)
