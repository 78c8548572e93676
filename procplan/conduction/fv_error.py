"""The local time-integration error of a finite-volume step, estimated from the step's own history.

BDF2 (variable steps, step h after h₁, ratio w = h/h₁) has the local error

    y_c − y(t+h) ≈ C h³ y‴,   C = (1 + w)² / (6 w (1 + 2w))            (2/9 at constant steps)

and the quadratic through the three previous states, extrapolated to t+h, misses y(t+h) by
P y‴ with P = h (h + h₁)(h + h₁ + h₂)/6. So the local error of the corrector is estimated from the
difference between corrector and predictor (Milne's device):

    est = C h³ / (C h³ + P) · (y_c − p)                                  (2/11 · (y_c − p) at constant steps)

Backward Euler (start, restart, or a step redone by it) has y_c − y ≈ h² y″/2, and the line through the two
previous states misses by h (h + h₁) y″/2, so est = h / (2h + h₁) · (y_c − p). The first step after a start
or a step change of the surface condition has no history: it is estimated by step doubling (one backward-Euler
step against two of half the length; the two half steps are kept, with an error of about their difference).

The estimates are made on the enthalpy of each cell and turned into kelvin by the smallest sensible heat
capacity (an enthalpy error on a freezing plateau becomes a temperature error of that size once the cell
leaves the plateau). A cell whose enthalpy crossed a strong kink of T(H) (the ends of a freezing range)
within the predictor's window, and its neighbours, have H(t) with a jump of H″ there: the polynomial
predictor does not hold across it and the difference would be mistaken for a large error, so these cells are
left out of the estimate (they stay under the step's largest-change limit). Measured on the 1-D freezing
case, the crossings add far less error than the smooth parts of the run.

References: Hairer, E., Nørsett, S. P. & Wanner, G., Solving Ordinary Differential Equations I, 2nd ed.,
§III.5 (variable-step multistep methods) and §II.4 (step-size control, step doubling); Milne's device as in
Shampine, L. F. & Reichelt, M. W. (1997), The MATLAB ODE suite, SIAM J. Sci. Comput. 18:1–22, §2.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "ERROR_SHARE",
    "bdf2_error_factor",
    "euler_error_factor",
    "kink_cells",
    "local_error_K",
    "near_kink",
]

#: Share of the tolerance the local error estimate of one step may take (the errors of many steps add up,
#: partly damped by conduction). Chosen so that the measured core error of the 1-D freezing benchmark stays
#: below the tolerance from 0.5 K to 0.01 K (tests/conduction/test_fv_error_control.py).
ERROR_SHARE = 0.05


def bdf2_error_factor(h: float, h1: float, h2: float) -> float:
    """C h³ / (C h³ + P) for variable-step BDF2 with a quadratic predictor (steps h, h₁, h₂ [s], newest first).

    >>> round(bdf2_error_factor(1.0, 1.0, 1.0), 6) == round(2 / 11, 6)
    True
    """
    w = h / h1
    c = (1.0 + w) ** 2 / (6.0 * w * (1.0 + 2.0 * w)) * h**3
    return c / (c + h * (h + h1) * (h + h1 + h2) / 6.0)


def euler_error_factor(h: float, h1: float) -> float:
    """h / (2h + h₁): backward Euler with a linear predictor (steps h, h₁ [s]).

    >>> euler_error_factor(1.0, 1.0) == 1 / 3
    True
    """
    return h / (2.0 * h + h1)


def kink_cells(kinks: np.ndarray, *states: np.ndarray) -> np.ndarray:
    """Cells whose enthalpy, over ``states`` [J/kg], lies on both sides of one of ``kinks`` [J/kg]."""
    lo = np.minimum.reduce(states)
    hi = np.maximum.reduce(states)
    out = np.zeros(lo.shape, dtype=bool)
    for k in kinks:
        out |= (lo < k) & (hi > k)
    return out


def local_error_K(model, H1: np.ndarray, history: list[tuple[np.ndarray, float]], bdf2: bool) -> np.ndarray:
    """The estimated local error [K] of each cell for the step to H1 [J/kg]; 0 on the cells next to a kink
    of T(H) crossed within the predictor's window.

    ``history`` holds the earlier states with the step that led *from* each to the next, newest first:
    [(H_n, h), (H_{n-1}, h₁), (H_{n-2}, h₂)] (the third only with ``bdf2``).
    """
    (Hn, h), (Hm, h1) = history[0], history[1]
    w = h / h1
    if bdf2:
        Hmm, h2 = history[2]
        # quadratic through (−h₁−h₂, Hmm), (−h₁, Hm), (0, Hn) at +h, in Lagrange form
        t0, t1, t2, x = -(h1 + h2), -h1, 0.0, h
        l0 = (x - t1) * (x - t2) / ((t0 - t1) * (t0 - t2))
        l1 = (x - t0) * (x - t2) / ((t1 - t0) * (t1 - t2))
        l2 = (x - t0) * (x - t1) / ((t2 - t0) * (t2 - t1))
        pred = l0 * Hmm + l1 * Hm + l2 * Hn
        est = bdf2_error_factor(h, h1, h2) * (H1 - pred)
        states = (H1, Hn, Hm, Hmm)
    else:
        pred = Hn + w * (Hn - Hm)
        est = euler_error_factor(h, h1) * (H1 - pred)
        states = (H1, Hn, Hm)
    err = np.abs(est) / model.cp_min
    err[near_kink(model, kink_cells(model.kinks, *states))] = 0.0
    return err


def near_kink(model, kink: np.ndarray) -> np.ndarray:
    """``kink`` and the cells sharing a face with one of them (whose net inflow has the same jump of slope)."""
    out = kink.copy()
    out[model.fi[kink[model.fj]]] = True
    out[model.fj[kink[model.fi]]] = True
    return out
