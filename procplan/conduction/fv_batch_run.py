"""Many 1-D finite-volume runs at once: :func:`solve_conduction_batch`, its time steps and its result.

The samples share one sequence of time steps: a fixed step, given step times, or adaptive steps chosen for
the batch's worst sample by the rules of :class:`procplan.conduction.fv_stepping.TimeStepper` (each
sample's largest node change aimed at its own target, BDF2 with variable steps, a step redone by backward
Euler for a sample it overshoots, the trapezoidal heat kept accurate by limiting the change of the surface
flow). With the same step sequence a sample's temperatures are those of
:func:`procplan.conduction.finite_volume.solve_conduction` to round-off (the tests hold them within 1e-8 K).
A stop on the core temperature is found per sample by linear interpolation in its history; the run ends when
every sample has crossed it.

The medium temperature and h of each sample are constant over the run (no extra surface flux, no coupled
medium); those problems stay with the single-sample solver.

References
----------
Hairer, E. & Wanner, G., Solving Ordinary Differential Equations II, 2nd ed., §III.5 (variable-step BDF2).
Voller, V.R. & Swaminathan, C.R. (1991), Numerical Heat Transfer B 19:175–189.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.conduction.finite_volume import SPAN_SHARE, STEP_CHANGE_K
from procplan.conduction.fv_batch import BatchModel, solve_rows
from procplan.conduction.fv_result import ConductionSolverError
from procplan.conduction.fv_stepping import FLUX_CHANGE_PER_STEP
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

__all__ = ["BatchConductionResult", "solve_conduction_batch"]


@dataclass(frozen=True, eq=False)
class BatchConductionResult:
    """The histories of S samples on a common time axis.

    time_s : times of the history [s] (every accepted step), shape (m,)
    core_C, surface_C, mean_C : core, surface and mass-weighted mean temperature [°C], shape (S, m)
    heat_flow_W, heat_J : heat flow into each piece [W] and its integral since 0 [J] (trapezoidal), (S, m)
    final_enthalpy_J_kg, final_field : the last fields [J/kg], [°C], shape (S, nodes)
    energy_balance_error : |∫Q dt − Δ(Σ m H)| / |Δ(Σ m H)| per sample
    stop_time_s : time each core crossed the stop temperature [s] (NaN: not reached, or no stop)
    n_steps, n_rejected, n_iterations : accepted and rejected common steps, Newton iterations of all samples
    method : the discretisation in words
    """

    time_s: np.ndarray
    core_C: np.ndarray
    surface_C: np.ndarray
    mean_C: np.ndarray
    heat_flow_W: np.ndarray
    heat_J: np.ndarray
    final_enthalpy_J_kg: np.ndarray
    final_field: np.ndarray
    energy_balance_error: np.ndarray
    stop_time_s: np.ndarray
    n_steps: int
    n_rejected: int
    n_iterations: int
    method: str

    def time_to_core(self, temperature_C) -> np.ndarray:
        """Time [s] each sample's core first reaches ``temperature_C`` (scalar or per sample), by linear
        interpolation in its history; NaN where it does not within the run."""
        return _crossing_times(self.time_s, self.core_C, temperature_C)


def _crossing_times(time_s: np.ndarray, core: np.ndarray, level) -> np.ndarray:
    level = np.broadcast_to(np.asarray(level, dtype=float), (core.shape[0],))[:, None]
    side0 = np.sign(core[:, :1] - level)
    crossed = np.sign(core - level) != side0
    crossed[:, 0] = side0[:, 0] == 0
    j = np.argmax(crossed, axis=1)
    hit = crossed[np.arange(core.shape[0]), j]
    out = np.full(core.shape[0], np.nan)
    r = np.nonzero(hit)[0]
    jj = j[r]
    start = jj == 0
    lo = np.maximum(jj - 1, 0)
    c0, c1 = core[r, lo], core[r, jj]
    t0, t1 = time_s[lo], time_s[jj]
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.where(c1 != c0, (level[r, 0] - c0) / (c1 - c0), 1.0)
    out[r] = np.where(start, time_s[0], t0 + frac * (t1 - t0))
    return out


def _per_sample(name: str, value, S: int, unit: str, positive: bool = False) -> np.ndarray:
    arr = validate.array(name, np.broadcast_to(np.asarray(value, dtype=float), (S,)), unit=unit)
    if positive and np.any(arr <= 0):
        raise InvalidInputError(name, float(arr.min()), f"> 0 {unit}".rstrip())
    return np.array(arr, dtype=float)


def solve_conduction_batch(
    geometry: Geometry,
    props: PropertyTable,
    initial_C,
    medium_C,
    h_W_m2K,
    end_time_s: float,
    *,
    size_factor=1.0,
    k_factor=1.0,
    enthalpy_factor=1.0,
    density_factor=1.0,
    n_nodes: int = 41,
    surface_refinement: float = 0.5,
    dt_s: float | None = None,
    step_times_s=None,
    max_step_change_K: float | None = None,
    max_dt_s: float | None = None,
    stop_when_core_C=None,
    max_steps: int | None = None,
) -> BatchConductionResult:
    """Transient conduction with phase change in S pieces of one 1-D shape at once (see the module).

    Parameters
    ----------
    geometry : a slab, infinite cylinder or sphere; ``size_factor`` (per sample) scales every dimension
    props : the product's property table; ``k_factor``, ``enthalpy_factor``, ``density_factor`` (per sample)
        scale its conductivity, enthalpy (specific and latent heat) and density
    initial_C, medium_C, h_W_m2K : uniform initial temperature [°C], medium temperature [°C] and surface
        coefficient [W/m²K] per sample (scalars apply to every sample; the number of samples is the longest)
    end_time_s : duration [s]
    n_nodes, surface_refinement : the grid of every sample (as :func:`solve_conduction`)
    dt_s : fixed step [s]; ``step_times_s``: the times [s] the steps end on (increasing, the last the end);
        neither: adaptive steps for the worst sample, aiming at ``max_step_change_K`` (default 0.5 K, capped
        at 2 % of each sample's temperature span) and at most ``max_dt_s`` (default end/20)
    stop_when_core_C : core temperature [°C] (scalar or per sample) whose crossing time is found in each
        history; the run ends once every sample has crossed it
    max_steps : most steps (accepted and rejected) before an InvalidInputError on ``max_steps``

    >>> from procplan.properties.table import PropertyTable
    >>> p = PropertyTable.constant(0.5, 1000.0, 4000.0)
    >>> r = solve_conduction_batch(Geometry("slab", thickness_m=0.04), p, [20.0, 30.0], 0.0, 50.0, 3600.0)
    >>> r.core_C.shape[0], bool(np.all(r.energy_balance_error < 5e-3))
    (2, True)
    """
    S = max(
        np.size(x)
        for x in (
            initial_C,
            medium_C,
            h_W_m2K,
            size_factor,
            0.0 if stop_when_core_C is None else stop_when_core_C,
        )
    )
    end = validate.positive("end_time_s", end_time_s, "s")
    start = _per_sample("initial_C", initial_C, S, "°C")
    props.check_in_range("initial_C", start)
    factors = [
        _per_sample(n, v, S, "", positive=True)
        for n, v in (("size_factor", size_factor), ("k_factor", k_factor))
        + (("enthalpy_factor", enthalpy_factor), ("density_factor", density_factor))
    ]
    bm = BatchModel(
        geometry,
        props,
        n_nodes,
        surface_refinement,
        factors[0],
        _per_sample("medium_C", medium_C, S, "°C"),
        _per_sample("h_W_m2K", h_W_m2K, S, "W/m²K", positive=True),
        tuple(factors[1:]),
    )
    H = np.repeat((props.enthalpy(start) * bm.fc)[:, None], bm.n, axis=1)
    stepper = _BatchStepper(bm, H, end, _Steps.make(end, dt_s, step_times_s, max_dt_s), max_steps)
    stepper.set_targets(STEP_CHANGE_K if max_step_change_K is None else max_step_change_K)
    stop = None if stop_when_core_C is None else _per_sample("stop_when_core_C", stop_when_core_C, S, "°C")
    stepper.run(stop)
    return stepper.result(stop)


@dataclass(frozen=True)
class _Steps:
    """The step sequence: fixed (dt_s), given (times), or adaptive (neither) with its largest step."""

    end: float
    dt_s: float | None
    times: np.ndarray | None
    dt_cap: float

    @classmethod
    def make(cls, end, dt_s, step_times_s, max_dt_s) -> _Steps:
        if dt_s is not None:
            dt_s = validate.number("dt_s", dt_s, minimum=0.0, min_inclusive=False, maximum=end, unit="s")
        times = None
        if step_times_s is not None:
            times = validate.increasing("step_times_s", step_times_s, "s")
            times = times[times > 0]
            if times.size == 0 or abs(times[-1] - end) > 1e-9 * end:
                raise InvalidInputError("step_times_s", step_times_s, f"increasing times ending at {end:g} s")
        cap = end / 20.0 if max_dt_s is None else validate.positive("max_dt_s", max_dt_s, "s")
        return cls(end, dt_s, times, cap)

    @property
    def adaptive(self) -> bool:
        return self.dt_s is None and self.times is None


class _BatchStepper:
    """The state of the batch (time, fields, heat, history) and the common steps that advance it."""

    def __init__(self, bm: BatchModel, H: np.ndarray, end: float, steps: _Steps, max_steps) -> None:
        self.bm, self.steps, self.end, self.max_steps = bm, steps, end, max_steps
        self.eps_t = 1e-9 * end
        self.t, self.H = 0.0, H
        self.T_cur = bm.temperature(H)
        self.q_now = bm.surface_heat_W(self.T_cur[:, -1])
        self.q_peak = np.abs(self.q_now)
        self.heat = np.zeros(bm.S)
        self.H0_total = np.einsum("ij,ij->i", bm.mass, H)
        self.H_prev: np.ndarray | None = None
        self.dt_prev: float | None = None
        self.n_steps = self.n_rej = self.n_it = 0
        self.rows = {"t": [0.0], "core": [], "surf": [], "mean": [], "q": [], "e": []}
        self._record()

    def set_targets(self, step_change_K: float) -> None:
        """Each sample's step target [K]: ``step_change_K`` capped at a share of its temperature span (the rule
        of ``finite_volume._span_target``), and the first step."""
        bm, T = self.bm, self.T_cur
        span = np.maximum(bm.medium_C, T.max(axis=1)) - np.minimum(bm.medium_C, T.min(axis=1))
        target = validate.positive("max_step_change_K", step_change_K, "K")
        self.target = np.where(span > 1e-6, np.minimum(target, SPAN_SHARE * span), target)
        self.dt = self._start_dt()

    def _start_dt(self) -> float:
        s, bm = self.steps, self.bm
        if s.dt_s is not None:
            return s.dt_s
        if s.times is not None:
            return float(s.times[0])
        qs = bm.area * (bm.h * (bm.medium_C - self.T_cur[:, -1]))
        rate = np.abs(qs) / (bm.mass[:, -1] * bm.cp_min)
        with np.errstate(divide="ignore"):
            dt0 = np.where(rate > 0, 0.25 * self.target / rate, s.dt_cap / 100.0)
        return float(np.clip(dt0, 1e-7 * self.end, s.dt_cap).min())

    def _next_step(self) -> float:
        s, t, eps_t = self.steps, self.t, self.eps_t
        if s.times is not None:
            return float(s.times[np.searchsorted(s.times, t + eps_t, side="right")]) - t
        step = min(self.dt, s.dt_cap) if s.dt_s is None else min(self.dt, s.dt_s)
        if self.dt_prev is not None:
            step = min(step, 2.0 * self.dt_prev)
        nxt = self.end
        if t + step >= nxt - eps_t:
            step = nxt - t
        elif t + 2 * step > nxt:
            step = 0.5 * (nxt - t)
        return step

    def _coefficients(self, dtn: float):
        H, H_prev, dt_prev = self.H, self.H_prev, self.dt_prev
        if H_prev is not None:
            w = dtn / dt_prev
            a = (1 + 2 * w) / (1 + w)
            return a, (1 + w) * H - (w * w / (1 + w)) * H_prev, H + w * (H - H_prev)
        return 1.0, H, H

    def attempt(self, dtn: float):
        """Every sample's step of dtn [s] as ``TimeStepper.attempt`` takes it. Returns (H, T, converged)."""
        bm, H, S = self.bm, self.H, self.bm.S
        a, hist, guess = self._coefficients(dtn)
        every = np.arange(S)
        H1, it, ok = solve_rows(bm, every, dtn, np.full(S, a), hist, H, guess)
        bad = np.nonzero(~ok)[0]
        if bad.size:  # the extrapolated guess may sit past a kink; retry from the old state
            H1[bad], it2, ok[bad] = solve_rows(bm, bad, dtn, np.full(bad.size, a), hist[bad], H[bad], H[bad])
            it[bad] += it2
        T1 = bm.temperature(H1)
        if a != 1.0:
            # BDF2 is not monotone: a sample overshooting the range of its old field and its medium is redone
            # by backward Euler
            lo = np.minimum(self.T_cur.min(axis=1), bm.medium_C)
            hi = np.maximum(self.T_cur.max(axis=1), bm.medium_C)
            slack = 1e-6 * (hi - lo) + 1e-9
            over = np.nonzero(ok & ((T1.min(axis=1) < lo - slack) | (T1.max(axis=1) > hi + slack)))[0]
            if over.size:
                Ho = H[over]
                H1[over], it2, ok[over] = solve_rows(bm, over, dtn, np.ones(over.size), Ho, Ho, Ho)
                it[over] += it2
                T1[over] = bm.temperature(H1[over], over)
        self.n_it += int(it.sum())
        return H1, T1, ok

    def run(self, stop: np.ndarray | None) -> None:
        """Advance to the end, or until every core has crossed its stop temperature."""
        s = self.steps
        core0 = self.T_cur[:, 0]
        falling = None if stop is None else core0 > stop
        while self.t < self.end - self.eps_t:
            if self.max_steps is not None and self.n_steps + self.n_rej >= self.max_steps:
                raise InvalidInputError(
                    "max_steps", self.max_steps, f"enough time steps to reach {self.end:g} s"
                )
            step = self._next_step()
            H1, T1, ok = self.attempt(step)
            if not ok.all():
                if not s.adaptive:
                    raise ConductionSolverError(f"no convergence at t = {self.t:g} s with dt = {step:g} s")
                self.n_rej += 1
                self.dt = 0.25 * step
                if self.dt < 1e-10 * self.end:
                    raise ConductionSolverError(
                        f"no convergence at t = {self.t:g} s even with dt = {step:g} s"
                    )
                continue
            change = np.max(np.abs(T1 - self.T_cur), axis=1)
            over = change > 1.5 * self.target
            if s.adaptive and over.any() and step > 1e-7 * self.end:
                self.n_rej += 1
                self.dt = step * max(0.2, float(np.min(0.9 * self.target[over] / change[over])))
                continue
            self._accept(step, H1, T1, change)
            if stop is not None and np.all(np.where(falling, T1[:, 0] <= stop, T1[:, 0] >= stop)):
                break

    def _accept(self, step: float, H1: np.ndarray, T1: np.ndarray, change: np.ndarray) -> None:
        q_new = self.bm.surface_heat_W(T1[:, -1])
        self.heat = self.heat + 0.5 * (self.q_now + q_new) * step
        self.q_peak = np.maximum(self.q_peak, np.abs(q_new))
        scale = np.maximum(
            np.maximum(np.abs(q_new), np.abs(self.q_now)), np.maximum(0.05 * self.q_peak, 1e-300)
        )
        q_change = np.abs(q_new - self.q_now) / scale
        self.q_now = q_new
        self.H_prev, self.H, self.dt_prev, self.T_cur = self.H, H1, step, T1
        self.t += step
        self.n_steps += 1
        self.rows["t"].append(self.t)
        self._record()
        s = self.steps
        if s.adaptive:
            grow = np.minimum(
                np.minimum(2.0, 0.9 * self.target / np.maximum(change, 1e-12)),
                0.9 * FLUX_CHANGE_PER_STEP / np.maximum(q_change, 1e-12),
            )
            self.dt = step * max(0.5, float(grow.min()))
        elif s.dt_s is not None:
            self.dt = min(s.dt_s, 2.0 * step)

    def _record(self) -> None:
        rec, T = self.rows, self.T_cur
        rec["core"].append(T[:, 0])
        rec["surf"].append(T[:, -1])
        rec["mean"].append(self.bm.mean_C(self.H))
        rec["q"].append(self.q_now)
        rec["e"].append(self.heat)

    def result(self, stop: np.ndarray | None) -> BatchConductionResult:
        bm, rec = self.bm, self.rows
        time_s = np.asarray(rec["t"])
        hist = {k: np.stack(rec[k], axis=1) for k in ("core", "surf", "mean", "q", "e")}
        dE = (np.einsum("ij,ij->i", bm.mass, self.H) - self.H0_total) * bm.piece_factor
        with np.errstate(divide="ignore", invalid="ignore"):
            balance = np.where(np.abs(dE) > 0, np.abs(self.heat - dE) / np.abs(dE), 0.0)
        s = self.steps
        steps = (
            f"fixed dt {s.dt_s:g} s"
            if s.dt_s is not None
            else "given step times"
            if s.times is not None
            else f"adaptive dt for the worst sample (at most {s.dt_cap:g} s)"
        )
        return BatchConductionResult(
            time_s=time_s,
            core_C=hist["core"],
            surface_C=hist["surf"],
            mean_C=hist["mean"],
            heat_flow_W=hist["q"],
            heat_J=hist["e"],
            final_enthalpy_J_kg=self.H,
            final_field=self.T_cur,
            energy_balance_error=balance,
            stop_time_s=np.full(bm.S, np.nan)
            if stop is None
            else _crossing_times(time_s, hist["core"], stop),
            n_steps=self.n_steps,
            n_rejected=self.n_rej,
            n_iterations=self.n_it,
            method=(
                f"finite volume, {bm.S} samples batched, {bm.grid.describe()}; enthalpy unknown, "
                f"harmonic-mean face conductivity; BDF2, {steps}; Newton per sample, one stacked tridiagonal "
                "solve per iteration"
            ),
        )
