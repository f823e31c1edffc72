"""The coupled modes of :mod:`airgate.procedures.coupled` in time: the pieces that share one
set of modes evaluated together.

Internal to :func:`airgate.procedures.coupled.coupled_piecewise_transient` (no public
functions; the equations and their sources are in the comment above ``_modes`` there). The
closed form of a piece splits into time functions of the modes alone (``e^(−ν τ)``,
``τ·φ(ν τ)`` and the convolution kernels of :mod:`airgate.procedures.numeric`, which hold
nearly all of the work) and the linear combination of them set by the piece's start state and
right-hand side. The time functions of every output time of a run of pieces with the same
modes are computed in one pass; the start states are carried from piece to piece one row
each. Units as in :mod:`airgate.procedures.coupled`: times in h, rates in 1/h, concentrations
in [C].

References
----------
Nazaroff, W.W. and Alvarez-Cohen, L. (2001). *Environmental Engineering Science*. Wiley, New
York: material balance on a completely mixed flow reactor (CMFR); Golub, G.H. (1973). Some
modified matrix eigenvalue problems. *SIAM Review* 15(2): 318–334.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from airgate.procedures.numeric import (
    exp_and_integral as _exp_and_integral,
    exp_convolution as _exp_convolution,
    exp_convolution_ramp as _exp_convolution_ramp,
)

__all__: list[str] = []

_CHUNK = 1 << 21  # values per block of the (output times × zones) arrays


class Basis(NamedTuple):
    """The time functions of one set of modes at the times τ (rows,) after a piece's start;
    they do not depend on the piece's start state or right-hand side, so the rows of every
    piece that shares the modes are computed in one pass."""

    e_nu: np.ndarray  # (rows, K) e^(−ν τ)
    i_nu: np.ndarray  # (rows, K) τ·φ(ν τ)
    e_p: np.ndarray  # (rows, K) e^(−p τ)
    i_p: np.ndarray  # (rows, K) τ·φ(p τ)
    e_o: np.ndarray | None  # (rows, K_o) e^(−d τ) of the zones that return no air
    i_o: np.ndarray | None  # (rows, K_o) τ·φ(d τ)
    conv: np.ndarray | None  # (rows, K_o, K) conv(d, ν, τ)
    ramp: np.ndarray | None  # (rows, K_o, K) ramp(d, ν, τ)


def basis(m, tau):
    """:class:`Basis` of the modes ``m`` (``coupled._Modes``) at the times ``tau`` (rows,). [h]"""
    tt = tau[:, None]
    e_nu, i_nu = _exp_and_integral(m.nu[None, :], tt)
    e_p, i_p = _exp_and_integral(m.p[None, :], tt)
    if not m.others.size:
        return Basis(e_nu, i_nu, e_p, i_p, None, None, None, None)
    e_o, i_o = _exp_and_integral(m.o_rates[None, :], tt)
    t3, d3, nu3 = tt[:, :, None], m.o_rates[None, :, None], m.nu[None, None, :]
    return Basis(e_nu, i_nu, e_p, i_p, e_o, i_o, _exp_convolution(d3, nu3, t3),
                  _exp_convolution_ramp(d3, nu3, t3))


class Start(NamedTuple):
    """What a piece's start state c0 and right-hand side b contribute, per piece (P, ·) or
    gathered per output row (rows, ·)."""

    zeta0: np.ndarray  # (·, K) Qᵀ·S·X(0)
    g: np.ndarray  # (·, K) Qᵀ·S·β
    alpha: np.ndarray  # (·, n_ret) C_z(0) − ρ_z·X_k(0)
    delta: np.ndarray  # (·, n_ret) b_z − ρ_z·β_k
    c0_o: np.ndarray  # (·, n_o) C_z(0) of the zones that return no air
    b_o: np.ndarray  # (·, n_o) their b_z


def start(m, c0, b):
    """:class:`Start` of one piece, each field (1, ·), from its start state ``c0`` (n,) and
    right-hand side ``b`` (n,)."""
    wr = m.w[m.ret]
    x0 = np.bincount(m.group, weights=wr * c0[m.ret], minlength=m.p.size)
    beta = np.bincount(m.group, weights=wr * b[m.ret], minlength=m.p.size)
    return Start(*(v[None, :] for v in (
        m.q.T @ (x0 / m.sqrt_c), m.q.T @ (beta / m.sqrt_c), c0[m.ret] - m.rho * x0[m.group],
        b[m.ret] - m.rho * beta[m.group], c0[m.others], b[m.others])))


def combine(m, f, s):
    """Zone concentrations (rows, n) and coupling signal y = wᵀC (rows,) from the time
    functions ``f`` (:class:`Basis`) and the starts ``s`` (:class:`Start`, rows or 1)."""
    x = ((f.e_nu * s.zeta0 + f.i_nu * s.g) @ m.q.T) * m.sqrt_c  # (rows, K) aggregates X_k(τ)
    out = np.empty((x.shape[0], m.d.size))
    out[:, m.ret] = (f.e_p[:, m.group] * s.alpha + f.i_p[:, m.group] * s.delta
                     + x[:, m.group] * m.rho)
    if m.others.size:
        drive = (f.conv * (m.h * s.zeta0)[:, None, :]
                 + f.ramp * (m.h * s.g)[:, None, :]).sum(axis=2)
        og = m.o_group
        out[:, m.others] = (f.e_o[:, og] * s.c0_o + f.i_o[:, og] * s.b_o
                            + drive[:, og] * m.u[m.others])
    return out, x.sum(axis=1)


def run(m, c, rhs, dur, tau, row_piece, out_zone, out_supply, sel, a):
    """The pieces of one run that share the modes ``m``: their start states in turn from
    ``c`` (each the end of the one before, one row each), then every output row of the run
    in blocks. ``rhs`` (P, n) and ``dur`` (P,) per piece; ``tau`` (rows,) the output times
    after their piece's start, ``row_piece`` (rows,) their piece, ``sel`` (rows,) where
    they go in ``out_zone``/``out_supply``, ``a`` (P,) the supply's outdoor part. Returns
    the state at the end of the run."""
    rows = max(1, _CHUNK // max(m.d.size, m.p.size, m.o_rates.size * m.p.size, 1))
    ends = basis(m, dur) if dur.size <= rows else None  # else one piece's end at a time
    starts = []
    for j in range(dur.size):
        s = start(m, c, rhs[j])
        starts.append(s)
        f = (basis(m, dur[j:j + 1]) if ends is None
             else Basis(*(None if v is None else v[j:j + 1] for v in ends)))
        c = combine(m, f, s)[0][0]
    per_piece = Start(*(np.concatenate(v) for v in zip(*starts)))
    for lo in range(0, tau.size, rows):
        piece = row_piece[lo:lo + rows]
        values, y = combine(m, basis(m, tau[lo:lo + rows]),
                            Start(*(v[piece] for v in per_piece)))
        out_zone[sel[lo:lo + rows]] = values
        out_supply[sel[lo:lo + rows]] = a[piece] + y
    return c
