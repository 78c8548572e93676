"""A medium node solved with the pieces: N identical pieces in one well-mixed medium with a plant.

The medium temperature E is one more unknown of each implicit step, with the same time scheme as the pieces
(the same BDF2 coefficient a and history form, or backward Euler), so that the discrete balance of pieces +
medium is conservative::

    C (a E − hist_E)/Δt = − w Q_s(H, E) + P(E) + L(E),     w = N × (pieces the grid stands for)

with Q_s the heat into one grid's surface [W], P the plant duty and L the fixed loads [W into the medium].
Set-point control is an active set: the step is first solved with the medium held at the set point; when the
duty that takes is beyond the plant (or of the wrong sign), the step is solved again with E free and the plant
at its limit (or off), by Newton's method on the bordered system (Schur complement: two solves with the
pieces' matrix, :mod:`procplan.conduction.fv_newton`).

The node learns which of its solutions the time stepper accepted from the state it is next asked to step from
(a step is always taken from the last accepted field), so rejected and repeated attempts leave no trace.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["MediumCoupling", "MediumNode", "MediumRecord"]


@dataclass
class MediumCoupling:
    """The medium's part of one implicit step: E fixed at the set point (``free`` False) or an unknown."""

    E: float
    free: bool
    weight: float
    a_C_dt: float  # a C/Δt [W/K]
    hist_W: float  # C hist_E/Δt [W]
    plant: object
    mode: str = "hold"
    partner: object = None  # a second product's field (procplan.conduction.fv_partner.SecondField)

    def residual(self, Qs_W: float, hA_W_K: float) -> tuple[float, float]:
        """R_E [W] at the iterate E with Q_s [W] into one grid's surface and Σ h A [W/K], and dR_E/dE at fixed H."""
        P, dP = self.duty(self.E)
        L, dL = self.plant.fixed(self.E)
        R = self.a_C_dt * self.E - self.hist_W + self.weight * Qs_W - P - L
        dR = self.a_C_dt + self.weight * hA_W_K - dP - dL
        if self.partner is not None:  # the second product's field eliminated at this E (total derivative)
            Q2, dQ2 = self.partner.flow(self.E)
            R, dR = R + Q2, dR + dQ2
        return R, dR

    def duty(self, E: float) -> tuple[float, float]:
        """Plant duty [W into the medium] in the current mode and its derivative [W/K]."""
        if self.mode == "off":
            return 0.0, 0.0
        return self.plant.at_limit(E)


@dataclass(frozen=True)
class MediumRecord:
    """One accepted state of the medium: time [s], temperature [°C], plant duty and fixed loads [W into the
    medium], heat into all the pieces [W] and what the plant did ("hold", "limit", "off")."""

    time_s: float
    medium_C: float
    plant_W: float
    fixed_W: float
    pieces_W: float
    mode: str
    second_W: float = 0.0
    second_C: tuple[float, float, float] | None = None  # the second product's core, surface, mean [°C]


class MediumNode:
    """The medium of a loaded machine, carried through one finite-volume run.

    Parameters
    ----------
    plant : :class:`procplan.surface.plant.Plant` (heat capacity, duty at its limit, fixed loads, modes)
    pieces : number of pieces N in the medium
    initial_C : medium temperature at loading [°C]
    partner : optional second product in the same medium (:class:`procplan.conduction.fv_partner.SecondField`)
    """

    def __init__(self, plant, pieces: float, initial_C: float, partner=None) -> None:
        self.plant = plant
        self.partner = partner
        self.pieces = float(pieces)
        self.initial_C = float(initial_C)
        self.latest_C = float(initial_C)
        self._current = (None, float(initial_C), 0.0)  # (field, E, time)
        self._previous_E: float | None = None
        self._pending: list[tuple[np.ndarray, MediumRecord]] = []
        self.records: list[MediumRecord] = []
        self._first = True

    # -- which solution was accepted ------------------------------------------------------------
    def _accept(self, Hn: np.ndarray) -> None:
        if self._current[0] is Hn:
            return
        for H, rec in self._pending:
            if H is Hn or (H.shape == Hn.shape and np.array_equal(H, Hn)):
                self._previous_E = self._current[1]
                self._current = (Hn, rec.medium_C, rec.time_s)
                self.latest_C = rec.medium_C
                self.records.append(rec)
                self._pending.clear()
                return
        if self._first:  # the initial field
            self._current = (Hn, self._current[1], self._current[2])

    def finish(self, H_final: np.ndarray) -> None:
        """Take the run's final field as accepted (the last step is never followed by another)."""
        self._accept(np.asarray(H_final, dtype=float).ravel())

    def history_E(self, a: float) -> float:
        """hist_E of the time scheme with coefficient a (BDF2: a = (1 + 2w)/(1 + w); backward Euler: a = 1)."""
        E = self._current[1]
        if a == 1.0 or self._previous_E is None:
            return E
        w = (a - 1.0) / (2.0 - a)
        return (1.0 + w) * E - (w * w / (1.0 + w)) * self._previous_E

    def second_change_K(self, Hn: np.ndarray, H1: np.ndarray) -> float:
        """The largest temperature change [K] of the second product's field over the step Hn → H1 (0 without
        one), so that the time steps follow the faster-changing of the two fields."""
        if self.partner is None:
            return 0.0
        p = self.partner
        return float(
            np.max(np.abs(p.model.temperature(p.field_of(H1)) - p.model.temperature(p.field_of(Hn))))
        )

    # -- one step -------------------------------------------------------------------------------
    def solve_step(self, model, newton, t1: float, dt: float, a: float, hist, Hn, H0):
        """One implicit step of pieces + medium; returns (H, iterations) like ``newton(model, ...)``.

        The plant's mode of the last accepted step is tried first (a plant at its limit usually stays there
        for many steps); a solution whose medium lies on the wrong side of the set point for that mode is
        dropped and the step solved with the set point held, then in the mode the required duty calls for."""
        self._accept(Hn)
        self._first = False
        C = self.plant.heat_capacity_J_K
        weight = self.pieces * model.grid.piece_factor
        set_point = float(model.boundary.medium(t1))
        cp = MediumCoupling(
            set_point, False, weight, a * C / dt, C * self.history_E(a) / dt, self.plant, partner=self.partner
        )
        if self.partner is not None:
            self.partner.begin(t1, dt, a, hist, Hn)
        its = 0
        last = self.records[-1].mode if self.records else "hold"
        if last != "hold":
            H1, it = self._free(model, newton, cp, last, (t1, dt, a, hist, Hn, H0))
            its += it
            if H1 is not None and self._consistent(last, cp.E, set_point):
                return self._keep_free(model, cp, H1, t1, weight), its
            cp.free, cp.mode, cp.E = False, "hold", set_point
        H1, it = newton(model, t1, dt, a, hist, Hn, H0, coupling=cp)
        its += it
        if H1 is None:
            return None, its
        Qs = model.heat_flow_W(t1, H1, set_point) / model.grid.piece_factor
        L, _ = self.plant.fixed(set_point)
        Q2 = self.partner.flow(set_point)[0] if self.partner is not None else 0.0
        if not np.isfinite(Q2):
            return None, its
        required = cp.a_C_dt * set_point - cp.hist_W + weight * Qs + Q2 - L
        mode = self.plant.mode(required, set_point)
        if mode == "hold":
            return self._keep(H1, t1, set_point, required, L, weight * Qs, "hold"), its
        H2, it = self._free(model, newton, cp, mode, (t1, dt, a, hist, Hn, H1))
        if H2 is None:
            return None, its + it
        return self._keep_free(model, cp, H2, t1, weight), its + it

    def _free(self, model, newton, cp: MediumCoupling, mode: str, args):
        cp.free, cp.mode, cp.E = True, mode, self._current[1]
        return newton(model, *args, coupling=cp)

    def _consistent(self, mode: str, E: float, set_point: float) -> bool:
        """A medium on the side of the set point the mode implies (a chiller at its limit above it, a chiller
        switched off below it; the other way round for a heater)."""
        above = E >= set_point
        return above if (mode == "limit") == self.plant.refrigerating else not above

    def _keep_free(self, model, cp: MediumCoupling, H, t1: float, weight: float):
        Qs = model.heat_flow_W(t1, H, cp.E) / model.grid.piece_factor
        return self._keep(H, t1, cp.E, cp.duty(cp.E)[0], self.plant.fixed(cp.E)[0], weight * Qs, cp.mode)

    def _keep(self, H, t1, E, P, L, Q, mode):
        self.latest_C = float(E)
        Q2, second = 0.0, None
        if self.partner is not None:
            Q2 = self.partner.flow(float(E))[0]
            second = self.partner.state()
            self.partner.remember(H, self.partner.last)
        rec = MediumRecord(float(t1), float(E), float(P), float(L), float(Q), mode, float(Q2), second)
        self._pending.append((H, rec))
        del self._pending[:-8]
        return H
