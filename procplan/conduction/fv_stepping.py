"""Time-step control of the finite-volume solver: BDF2 or backward Euler with adaptive (or fixed) steps.

Steps land on the output times, the breakpoints of the surface condition and the end; after a step change
of the surface condition the scheme restarts by backward Euler. An adaptive step aims at a largest node
temperature change of ``target`` kelvin and a moderate relative change of the surface heat flow (whose
integral is taken by the trapezoidal rule). A stop on the core temperature is located by re-solving the
last step (secant on the step length), so the final state is at the crossing.

Variable-step BDF2: Hairer, E. & Wanner, G., Solving Ordinary Differential Equations II, 2nd ed., §III.5.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan.conduction.fv_error import ERROR_SHARE, kink_cells, local_error_K, near_kink
from procplan.conduction.fv_model import FVModel
from procplan.conduction.fv_result import ConductionSolverError, HistoryRecorder
from procplan.errors import InvalidInputError

__all__ = [
    "FLUX_CHANGE_PER_STEP",
    "FLUX_CHANGE_WITH_TOLERANCE",
    "SCHEMES",
    "STOP_DIRECTIONS",
    "StepControl",
    "TimeStepper",
]

#: Time-integration schemes.
SCHEMES: dict[str, str] = {
    "bdf2": "variable-step BDF2 (second order; backward-Euler start and restart after step changes)",
    "euler": "backward Euler (first order, monotone)",
}

#: Directions of the core-temperature stop condition.
STOP_DIRECTIONS: dict[str, str] = {
    "falling": "core drops to the target",
    "rising": "core rises to the target",
}

#: Largest relative change of the surface heat flow per adaptive step (trapezoidal heat integration), without
#: a tolerance and with one (then the error estimate follows the field; the energy balance of the 1-D freezing
#: benchmark stays below 1e-3 with it).
FLUX_CHANGE_PER_STEP = 0.1
FLUX_CHANGE_WITH_TOLERANCE = 0.5


@dataclass(frozen=True)
class StepControl:
    """The validated settings of the time stepping.

    end : end time [s]; target : aimed largest node change per adaptive step [K]; dt_s : fixed step [s] or
    None (adaptive); dt_cap : largest adaptive step [s]; use_bdf2 : BDF2 (else backward Euler);
    landings : times steps land on [s]; jumps : times of step changes of the surface condition [s];
    outs : output times [s] or None (every step); stop : core stop temperature [°C] or None;
    stop_direction : "falling" or "rising" (with ``stop``); max_steps : most time steps, accepted and
    rejected, before the run is given up (None: no limit); tolerance : the time-integration error aimed at
    [K] (None: steps by ``target`` alone, see :mod:`~procplan.conduction.fv_stepping`).
    """

    end: float
    target: float
    dt_s: float | None
    dt_cap: float
    use_bdf2: bool
    landings: np.ndarray
    jumps: np.ndarray
    outs: np.ndarray | None
    stop: float | None
    stop_direction: str | None
    max_steps: int | None = None
    tolerance: float | None = None
    flux_change: float = FLUX_CHANGE_PER_STEP

    @property
    def eps_t(self) -> float:
        """Time tolerance [s] for landing on a time."""
        return 1e-9 * self.end


class TimeStepper:
    """The state of a run (time, enthalpy fields, heat, counters) and the steps that advance it."""

    def __init__(
        self, model: FVModel, control: StepControl, H: np.ndarray, recorder: HistoryRecorder
    ) -> None:
        self.model, self.c, self.recorder = model, control, recorder
        self.grid = model.grid
        self.t = 0.0
        self.H = H
        self.q_now = model.heat_flow_W(0.0, H)
        self.q_peak = abs(self.q_now)  # largest |surface heat flow| so far [W]: the scale of flux changes
        self.heat = 0.0
        self.H0_total = float(np.dot(model.mass, H))
        self.T_cur = model.temperature(H)
        self.core_T = float(self.T_cur[self.grid.core_index])
        if control.outs is None or control.outs[0] == 0.0:
            recorder.record(0.0, H, self.T_cur, self.q_now, 0.0)
        self.H_prev: np.ndarray | None = None
        self.dt_prev: float | None = None
        self.H_prev2: np.ndarray | None = None  # the state before H_prev (error estimate of BDF2)
        self.dt_prev2: float | None = None
        self.last_a = 1.0  # the BDF coefficient of the last solved step (1: backward Euler)
        self.err = self.err_order = None  # local error estimate [K] per cell of the last solved step, and
        # the power of the step it scales with
        self.err_max = self.err_core_sum = 0.0  # largest accepted local estimate; sum at the core [K]
        self.dt = self.start_dt(0.0, H)
        self.n_steps = self.n_rej = self.n_it = 0
        self.dts: list[float] = []
        self.stopped_at: float | None = None
        self._T_of: tuple | None = None  # (H, T(H)) of the last field checked by attempt

    # -- step sizes ------------------------------------------------------------------------
    def start_dt(self, t: float, Hv: np.ndarray) -> float:
        """First step [s] at time t from the surface heating rate (or the fixed step)."""
        c, model = self.c, self.model
        if c.dt_s is not None:
            return c.dt_s
        qs, _ = model.surface_flux(t, model.temperature(Hv[self.grid.surface_cells]))
        rate = np.abs(qs) / (model.mass[self.grid.surface_cells] * model.cp_min)  # K/s
        r = float(rate.max())
        dt0 = 0.25 * c.target / r if r > 0 else c.dt_cap / 100.0
        return float(np.clip(dt0, 1e-7 * c.end, c.dt_cap))

    def _next_step(self) -> float:
        """The next step [s]: the wanted step, limited by BDF2's growth and landing on the next landing time."""
        c, t, eps_t = self.c, self.t, self.c.eps_t
        nxt = float(c.landings[np.searchsorted(c.landings, t + eps_t, side="right")])
        step = min(self.dt, c.dt_cap) if c.dt_s is None else min(self.dt, c.dt_s)
        if c.use_bdf2 and self.dt_prev is not None:
            step = min(step, 2.0 * self.dt_prev)
        if t + step >= nxt - eps_t:
            step = nxt - t
        elif t + 2 * step > nxt:
            step = 0.5 * (nxt - t)
        return step

    def _next_dt(self, step: float, change: float, q_change: float) -> None:
        """Set the wanted next step after an accepted step (restart after a jump of the surface condition)."""
        c = self.c
        if c.jumps.size and np.any(np.abs(c.jumps - self.t) <= c.eps_t):
            self.H_prev = self.dt_prev = self.H_prev2 = self.dt_prev2 = None
            self.dt = self.start_dt(self.t, self.H)
        elif c.dt_s is None:
            grow = min(2.0, 0.9 * c.target / max(change, 1e-12), 0.9 * c.flux_change / max(q_change, 1e-12))
            if self.err is not None:
                grow = min(grow, self._error_factor())
            self.dt = step * max(0.5, grow)
        else:
            self.dt = min(c.dt_s, 2.0 * step)  # back to the user's step after sub-steps

    # -- one step ---------------------------------------------------------------------------
    def coefficients(self, dtn: float):
        """BDF2 (or backward-Euler) coefficient a, history term and Newton start for a step of dtn [s]."""
        H, H_prev, dt_prev = self.H, self.H_prev, self.dt_prev
        if self.c.use_bdf2 and H_prev is not None:
            w = dtn / dt_prev
            a = (1 + 2 * w) / (1 + w)
            return a, (1 + w) * H - (w * w / (1 + w)) * H_prev, H + w * (H - H_prev)
        return 1.0, H, H if H_prev is None else H + (dtn / dt_prev) * (H - H_prev)

    def attempt(self, dtn: float):
        """Solve a step of dtn [s] from the current state. Returns (H, iterations), H None on failure."""
        model, t, H = self.model, self.t, self.H
        a, hist, guess = self.coefficients(dtn)
        self.last_a = a
        H1, it = model.solve_step(t + dtn, dtn, a, hist, H, guess)
        if H1 is None:  # the extrapolated guess may sit past a kink; retry from the old state
            H1, it2 = model.solve_step(t + dtn, dtn, a, hist, H, H)
            it += it2
        if a != 1.0 and H1 is not None and not model.has_q:
            # BDF2 is not monotone: where a step overshoots the range spanned by the old field and the medium
            # (typically a large step across the end of a freezing plateau) it is redone by backward Euler.
            # (With an extra surface flux there is no such simple bound, and no check.)
            tm = float(model.boundary.medium(t + dtn))
            lo, hi = min(self.T_cur.min(), tm), max(self.T_cur.max(), tm)
            T1 = model.temperature(H1)
            slack = 1e-6 * (hi - lo) + 1e-9
            if T1.min() < lo - slack or T1.max() > hi + slack:
                H1, it2 = model.solve_step(t + dtn, dtn, 1.0, H, H, H)
                it += it2
                self.last_a = 1.0
            else:
                self._T_of = (H1, T1)
        return H1, it

    def temperature_of(self, H1: np.ndarray) -> np.ndarray:
        """T(H1) [°C], the one :meth:`attempt` computed when H1 is its field."""
        kept = self._T_of
        return kept[1] if kept is not None and kept[0] is H1 else self.model.temperature(H1)

    # -- the local error (procplan.conduction.fv_error) -------------------------------------
    def doubled_first_step(self, dtn: float):
        """A first step (no history) by step doubling: one backward-Euler step of dtn [s] and two of dtn/2.
        Returns (the two half steps' H or None, iterations); sets the error estimate [K] (their difference)."""
        model, t, H = self.model, self.t, self.H
        H_full, it = model.solve_step(t + dtn, dtn, 1.0, H, H, H)
        if H_full is None:
            return None, it
        H_mid, it2 = model.solve_step(t + 0.5 * dtn, 0.5 * dtn, 1.0, H, H, H)
        it += it2
        if H_mid is None:
            return None, it
        H1, it3 = model.solve_step(t + dtn, 0.5 * dtn, 1.0, H_mid, H_mid, H_mid)
        if H1 is None:
            return None, it + it3
        err = np.abs(H1 - H_full) / model.cp_min
        err[near_kink(model, kink_cells(model.kinks, H, H_mid, H1, H_full))] = 0.0
        self.err, self.err_order, self.last_a = err, 2, 1.0
        return H1, it + it3

    def estimate_error(self, dtn: float, H1: np.ndarray) -> None:
        """Set the local error estimate [K] per cell of the step of dtn [s] to H1 (None without history)."""
        if self.H_prev is None:
            self.err = None
            return
        bdf2 = self.last_a != 1.0 and self.H_prev2 is not None
        history = [(self.H, dtn), (self.H_prev, self.dt_prev)]
        if bdf2:
            history.append((self.H_prev2, self.dt_prev2))
        self.err = local_error_K(self.model, H1, history, bdf2)
        self.err_order = 3 if bdf2 else 2

    def _error_ratio(self) -> float:
        """The largest local error estimate over what one step may take (≤ 1 accepts)."""
        return float(self.err.max()) / (ERROR_SHARE * self.c.tolerance)

    def _error_factor(self) -> float:
        """The factor on the step that puts the local error estimate at what a step may take."""
        return 0.9 * max(self._error_ratio(), 1e-12) ** (-1.0 / self.err_order)

    def _crosses_stop(self, core1: float) -> bool:
        c = self.c
        return c.stop is not None and (
            (c.stop_direction == "falling" and core1 <= c.stop < self.core_T)
            or (c.stop_direction == "rising" and core1 >= c.stop > self.core_T)
        )

    def _locate_stop(self, step: float, H1: np.ndarray, core1: float) -> tuple[float, np.ndarray]:
        """The step [s] (and its field) at which the core reaches the stop temperature: secant on the step."""
        stop = self.c.stop
        lo, flo, hi, fhi = 0.0, self.core_T - stop, step, core1 - stop
        reached = (step, H1)  # the earliest state known to have reached the stop (the bracket's far end)
        side = 0  # Illinois: halve the value at an end kept twice, so a bent curve still converges
        for _ in range(16):
            s = lo + (hi - lo) * flo / (flo - fhi)
            s = min(max(s, lo + 1e-3 * (hi - lo)), hi - 1e-3 * (hi - lo))
            Hs, its = self.attempt(s)
            self.n_it += its
            if Hs is None:
                break
            fs = float(self.model.temperature(Hs[self.grid.core_index])) - stop
            if abs(fs) < 1e-5:
                return s, Hs
            if (fs > 0) == (flo > 0):
                lo, flo = s, fs
                fhi = 0.5 * fhi if side == 1 else fhi
                side = 1
            else:
                hi, fhi = s, fs
                reached = (s, Hs)
                flo = 0.5 * flo if side == -1 else flo
                side = -1
        # not converged (a core on a phase-change plateau bends the secant): never stop short of the stop
        # temperature, take the earliest state that reached it
        return reached

    def _accept(self, step: float, H1: np.ndarray, T1: np.ndarray, core1: float, change: float) -> None:
        """Take the step: integrate the surface heat, shift the state, record, choose the next step."""
        c, grid = self.c, self.grid
        q_new = (
            float(self.model.surface_flux(self.t + step, T1[grid.surface_cells])[0].sum()) * grid.piece_factor
        )
        self.heat += 0.5 * (self.q_now + q_new) * step
        # the heat through the surface is integrated by the trapezoidal rule: keep the relative change of the
        # surface flux per step moderate, which matters on a phase-change plateau where temperatures barely move
        # relative to the step's largest flow so far: a flow passing through zero (a tempering product whose
        # surface warms past the medium) would otherwise halve the step for ever
        self.q_peak = max(self.q_peak, abs(q_new))
        q_change = abs(q_new - self.q_now) / max(abs(q_new), abs(self.q_now), 0.05 * self.q_peak, 1e-300)
        self.q_now = q_new
        self.H_prev2, self.dt_prev2 = self.H_prev, self.dt_prev
        self.H_prev, self.H, self.dt_prev, self.T_cur = self.H, H1, step, T1
        if self.err is not None:
            self.err_max = max(self.err_max, float(self.err.max()))
            self.err_core_sum += float(self.err[self.grid.core_index])
        self.t = self.t + step if self.stopped_at is None else self.stopped_at
        self.core_T = core1
        self.recorder.observe(T1)
        self.n_steps += 1
        self.dts.append(step)
        if self.stopped_at is not None or c.outs is None or np.any(np.abs(c.outs - self.t) <= c.eps_t):
            self.recorder.record(self.t, self.H, self.T_cur, self.q_now, self.heat)
        self._next_dt(step, change, q_change)

    # -- the run -----------------------------------------------------------------------------
    def run(self) -> None:
        """Advance to the end time or the stop on the core temperature."""
        c, model = self.c, self.model
        while self.t < c.end - c.eps_t and self.stopped_at is None:
            if c.max_steps is not None and self.n_steps + self.n_rej >= c.max_steps:
                raise InvalidInputError(
                    "max_steps",
                    c.max_steps,
                    f"enough time steps to reach {c.end:g} s",
                    f"stopped at t = {self.t:g} s of {c.end:g} s after {c.max_steps} time steps",
                )
            step = self._next_step()
            first = c.tolerance is not None and c.dt_s is None and self.H_prev is None
            H1, it = self.doubled_first_step(step) if first else self.attempt(step)
            self.n_it += it
            if H1 is None:
                self.n_rej += 1
                self.dt = 0.25 * step
                if self.dt < 1e-10 * c.end:
                    raise ConductionSolverError(
                        f"no convergence at t = {self.t:g} s even with dt = {step:g} s"
                    )
                continue
            T1 = self.temperature_of(H1)
            change = float(np.max(np.abs(T1 - self.T_cur)))
            if model.medium_node is not None:  # a second product in the medium: its change counts too
                change = max(change, model.medium_node.second_change_K(self.H, H1))
            if c.dt_s is None and change > 1.5 * c.target and step > 1e-7 * c.end:
                self.n_rej += 1
                self.dt = step * max(0.2, 0.9 * c.target / change)
                continue
            if c.tolerance is not None and c.dt_s is None:
                if not first:
                    self.estimate_error(step, H1)
                if self.err is not None and self._error_ratio() > 1.0 and step > 1e-7 * c.end:
                    self.n_rej += 1
                    self.dt = step * min(0.9, max(0.2, self._error_factor()))
                    continue
            core1 = float(T1[self.grid.core_index])
            if self._crosses_stop(core1):
                step, H1 = self._locate_stop(step, H1, core1)
                T1 = model.temperature(H1)
                core1 = float(T1[self.grid.core_index])
                self.stopped_at = self.t + step
            self._accept(step, H1, T1, core1, change)

    def energy_balance_error(self) -> float:
        """|∫Q dt − Δ(Σ m H)| / |Δ(Σ m H)| over the run so far (0 when nothing changed)."""
        dE = (float(np.dot(self.model.mass, self.H)) - self.H0_total) * self.grid.piece_factor
        return abs(self.heat - dE) / abs(dE) if abs(dE) > 0 else 0.0
