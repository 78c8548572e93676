"""A second product in the same medium: its field solved with the medium node and the main product's field.

M pieces of a second product share a loaded machine's medium with the N pieces of the main product. Each
implicit step solves the main field H₁, the second field H₂ and the medium E together::

    m₁ (a H₁ − hist₁)/Δt = F₁(H₁, E)
    m₂ (a H₂ − hist₂)/Δt = F₂(H₂, E)
    C (a E − hist_E)/Δt = − w₁ Q₁(H₁, E) − w₂ Q₂(H₂, E) + P(E) + L(E)

with the same time scheme for all three (BDF2 coefficient a and history form, or backward Euler), so the
discrete balance of both products and the medium is conservative. The second field is eliminated by block
Gaussian elimination: at each Newton iterate of E, H₂(E) solves its own implicit step with E fixed (Newton's
method of :mod:`procplan.conduction.fv_newton`), and the medium's residual gains w₂ Q₂(H₂(E), E) with its total
derivative d(w₂ Q₂)/dE (a second solve at E + δ). At convergence all three equations hold: the coupled
implicit system, solved by a nested (Schur-complement) Newton iteration (Saad, Iterative Methods for Sparse
Linear Systems, 2nd ed., SIAM 2003, §14.2, block elimination of a bordered system).

The second field follows the main field's time steps, whose length is chosen on the larger temperature change
of the two fields (fv_stepping, MediumNode.second_change_K); its
history form is rebuilt from the states the main stepper keeps (each main state remembers the second field
solved with it), so both fields use the same past states.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["SecondField"]

#: Step in E [K] of the finite-difference derivative of the second product's heat flow.
_DELTA_E_K = 1e-3
#: States remembered (main field → second field): more than the attempts of one step (a located stop takes up
#: to 16, each possibly redone), so the state a step starts from is still known.
_KEEP = 96


@dataclass
class _FixedMedium:
    """The medium held at E in the second field's Newton iteration (fv_newton reads ``E`` and ``free``)."""

    E: float
    free: bool = False


class SecondField:
    """The field of one piece of the second product (``model``: its FVModel) standing for ``pieces`` pieces.

    Parameters
    ----------
    model : :class:`procplan.conduction.fv_model.FVModel` of the second product (its boundary gives h)
    pieces : number of pieces M of the second product
    H0 : its initial enthalpy field [J/kg]
    """

    def __init__(self, model, pieces: float, H0: np.ndarray) -> None:
        from procplan.conduction.fv_newton import solve_step

        self._newton = solve_step
        self.model = model
        self.pieces = float(pieces)
        self.weight = self.pieces * model.grid.piece_factor
        self.H0 = np.asarray(H0, dtype=float).copy()
        self._known: list[tuple[np.ndarray, np.ndarray]] = []  # (main field, second field) of kept states
        self._step = None  # (t1, dt, a, hist₂, Hn₂)
        self._cache: dict[float, tuple[np.ndarray, float]] = {}
        self.last: np.ndarray = self.H0
        self.failed = False
        self.name = ""

    # -- which second field belongs to a main state ------------------------------------------------
    def remember(self, H_main: np.ndarray, H2: np.ndarray) -> None:
        self._known.append((H_main, H2))
        del self._known[:-_KEEP]

    def field_of(self, H_main: np.ndarray) -> np.ndarray:
        """The second field solved with the main state ``H_main`` (the nearest remembered one)."""
        for Hm, H2 in reversed(self._known):
            if Hm is H_main:
                return H2
        if not self._known:
            return self.H0
        errs = [
            float(np.max(np.abs(Hm - H_main))) if Hm.shape == H_main.shape else np.inf
            for Hm, _ in self._known
        ]
        return self._known[int(np.argmin(errs))][1]

    def begin(self, t1: float, dt: float, a: float, hist_main: np.ndarray, Hn_main: np.ndarray) -> None:
        """Set up the step to t1 of dt [s] with coefficient a from the main state Hn (history ``hist``)."""
        if not self._known:
            self.remember(Hn_main, self.H0)
        Hn2 = self.field_of(Hn_main)
        if a == 1.0:
            hist2 = Hn2
        else:
            w = (a - 1.0) / (2.0 - a)
            # the main stepper's previous state, from its history form: hist = (1+w) Hn − w²/(1+w) H_prev
            H_prev = ((1.0 + w) * Hn_main - hist_main) * (1.0 + w) / (w * w)
            hist2 = (1.0 + w) * Hn2 - (w * w / (1.0 + w)) * self.field_of(H_prev)
        self._step = (t1, dt, a, hist2, Hn2)
        self._cache.clear()
        self.last = Hn2
        self.failed = False

    # -- the second field at a medium temperature -----------------------------------------------
    def _solve(self, E: float) -> tuple[np.ndarray | None, float]:
        if E in self._cache:
            return self._cache[E]
        t1, dt, a, hist2, Hn2 = self._step
        H2, _ = self._newton(self.model, t1, dt, a, hist2, Hn2, self.last, coupling=_FixedMedium(E))
        if H2 is None:
            H2, _ = self._newton(self.model, t1, dt, a, hist2, Hn2, Hn2, coupling=_FixedMedium(E))
        if H2 is None:
            return None, float("nan")
        Q = self.model.heat_flow_W(t1, H2, E) / self.model.grid.piece_factor * self.weight
        self._cache[E] = (H2, Q)
        return H2, Q

    def flow(self, E: float) -> tuple[float, float]:
        """Heat into all M pieces [W] after the step with the medium at E, and its derivative [W/K]."""
        H2, Q = self._solve(E)
        if H2 is None:
            self.failed = True
            return float("nan"), float("nan")
        self.last = H2
        H2b, Qb = self._solve(E + _DELTA_E_K)
        self.last = H2
        return Q, (Qb - Q) / _DELTA_E_K

    def state(self) -> tuple[float, float, float]:
        """Core, surface (corner) and mean temperature [°C] of the last solved field."""
        m, g = self.model, self.model.grid
        T = m.temperature(self.last)
        V = g.volume_m3
        mean = float(m.temperature(np.dot(V, self.last) / V.sum()))
        return float(T[g.core_index]), float(T[g.corner_index]), mean
