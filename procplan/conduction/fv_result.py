"""The record of a finite-volume run: its history, collected step by step, and the result it becomes."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from procplan.conduction.fv_grid import FVGrid, probe_weights

__all__ = ["ConductionResult", "ConductionSolverError", "HistoryRecorder"]


class ConductionSolverError(RuntimeError):
    """The nonlinear iteration failed even at the smallest time step (a property table or input far outside sense)."""


@dataclass(frozen=True, eq=False)
class ConductionResult:
    """History and provenance of one finite-volume run (one piece of product).

    Attributes
    ----------
    time_s : times of the history [s]
    core_C : thermal-centre temperature [°C]
    surface_C : surface temperature at the fastest point [°C] (1-D: the surface; 2-D: the rim edge;
        3-D: the corner), the temperature of the node on the surface
    face_surface_C : surface temperature at the centre of the face on the shortest axis [°C]
    mean_C : mass-weighted mean temperature [°C], the temperature at the mean specific enthalpy
        T(Σ m_i H_i / Σ m_i) (this is the one to use for energy and "average product temperature")
    volume_mean_C : plain volume mean of the cell temperatures [°C] (differs from mean_C in a freezing range)
    heat_flow_W : heat flow into the piece through its surface [W] (per m² of face for an unbounded slab,
        per m of length for an unbounded cylinder, as ``Geometry.volume_m3`` and ``area_m2`` define)
    heat_J : cumulative heat into the piece since t = 0 [J] (trapezoidal rule over every accepted step)
    final_field : temperature field at the last time [°C], shaped like ``grid.shape``
    final_enthalpy_J_kg : specific-enthalpy field at the last time [J/kg]
    grid : the grid (axes, node positions, cell volumes)
    n_steps, n_rejected, n_iterations : accepted steps, rejected steps, Newton iterations
    dt_min_s, dt_max_s : smallest and largest accepted step [s]
    energy_balance_error : |∫Q dt − Δ(Σ m H)| / |Δ(Σ m H)| (0 when nothing changed)
    stopped_at_s : time the core crossed ``stop_when_core_C`` [s], or None
    method : description of the discretisation
    n_factorisations : sparse LU factorisations of the Newton matrix (2-D and 3-D; 0 in 1-D, whose
        tridiagonal systems are solved directly)
    n_reused_factorisations : Newton systems solved with a kept LU as GMRES preconditioner instead of a new one
    n_separable_solves : Newton systems of the separable form (one conductivity, one dT/dH, one h) solved by
        fast diagonalisation, without a factorisation (:mod:`procplan.conduction.fv_tensor`)
    time_tolerance_K : the time-integration tolerance the steps were chosen for [K], or None (steps by the
        largest node change)
    local_error_estimate_K : with a tolerance, the largest estimated local time-integration error of an
        accepted step [K] (any cell), and core_error_sum_K the sum of the core's estimates over the run [K]
        (a bound on its time-integration error if conduction damped nothing); None without a tolerance
    """

    time_s: np.ndarray
    core_C: np.ndarray
    surface_C: np.ndarray
    face_surface_C: np.ndarray
    mean_C: np.ndarray
    volume_mean_C: np.ndarray
    heat_flow_W: np.ndarray
    heat_J: np.ndarray
    final_field: np.ndarray
    final_enthalpy_J_kg: np.ndarray
    grid: FVGrid
    n_steps: int
    n_rejected: int
    n_iterations: int
    dt_min_s: float
    dt_max_s: float
    energy_balance_error: float
    stopped_at_s: float | None
    method: str
    n_factorisations: int = 0
    n_reused_factorisations: int = 0
    n_separable_solves: int = 0
    time_tolerance_K: float | None = None
    local_error_estimate_K: float | None = None
    core_error_sum_K: float | None = None
    #: the probe depths asked for [m] and the temperature there [°C], one column per depth (shape: times ×
    #: depths), linear between the two nodes around each depth (``fv_grid.probe_weights``)
    probe_depths_m: tuple[float, ...] = ()
    probe_C: np.ndarray | None = None
    #: with a ``peak_measure``: its value at each time of the history (None without one), and the hottest
    #: temperature each cell reached over the run [°C], shaped like ``grid.shape``
    peak_measure: np.ndarray | None = None
    peak_field: np.ndarray | None = None

    def to_frame(self) -> pd.DataFrame:
        """The history as a DataFrame with unit-suffixed columns."""
        return pd.DataFrame(
            {
                "time_s": self.time_s,
                "core_C": self.core_C,
                "surface_C": self.surface_C,
                "face_surface_C": self.face_surface_C,
                "mean_C": self.mean_C,
                "volume_mean_C": self.volume_mean_C,
                "heat_flow_W": self.heat_flow_W,
                "heat_J": self.heat_J,
            }
        )


class HistoryRecorder:
    """Collects the history of a run (one row per recorded time) and turns it into a ConductionResult."""

    def __init__(self, grid: FVGrid, temperature, probe_depths_m=(), peak_measure=None) -> None:
        self.grid = grid
        # the running hottest temperature of each cell (kept only for a peak measure), and the measure's values
        self.peak_measure = peak_measure
        self.peak: np.ndarray | None = None
        self.peak_rows: list[float] = []
        self.probe_depths_m = tuple(float(d) for d in probe_depths_m)
        self.probes = [probe_weights(grid, d, "probe_depths_m") for d in self.probe_depths_m]
        self.probe_rows: list[list[float]] = []
        self.temperature = temperature  # T(H), the model's look-up
        self.rows: dict[str, list] = {k: [] for k in ("t", "core", "surf", "face", "mean", "vmean", "q", "e")}
        self.volume = grid.volume_m3
        self.volume_sum = self.volume.sum()

    def record(self, t: float, Hv: np.ndarray, T: np.ndarray, q: float, e: float) -> None:
        """Add the row at time t [s] of enthalpy field Hv, temperature field T, heat flow q [W], heat e [J]."""
        grid, rec, V, Vsum = self.grid, self.rows, self.volume, self.volume_sum
        rec["t"].append(t)
        rec["core"].append(T[grid.core_index])
        rec["surf"].append(T[grid.corner_index])
        rec["face"].append(T[grid.face_centre_index])
        # products summed by numpy, not BLAS dot: on a large grid that spreads over threads whose wake-up, on
        # busy cores, cost milliseconds per row (31³: most of a run's time, measured)
        rec["mean"].append(float(self.temperature(np.add.reduce(V * Hv) / Vsum)))
        rec["vmean"].append(np.add.reduce(V * T) / Vsum)
        rec["q"].append(q)
        rec["e"].append(e)
        self.probe_rows.append([(1.0 - w) * T[i0] + w * T[i1] for i0, i1, w in self.probes])
        if self.peak_measure is not None:
            self.observe(T)
            self.peak_rows.append(float(self.peak_measure(self.peak, self.volume)))

    def observe(self, T: np.ndarray) -> None:
        """Raise the running peak field to the temperature field T of an accepted step (with a peak measure)."""
        if self.peak_measure is None:
            return
        if self.peak is None:
            self.peak = np.array(T, dtype=float).ravel()
        else:
            np.maximum(self.peak, np.ravel(T), out=self.peak)

    def result(
        self,
        H: np.ndarray,
        *,
        n_steps: int,
        n_rejected: int,
        n_iterations: int,
        dts: list[float],
        energy_balance_error: float,
        stopped_at_s: float | None,
        method: str,
        n_factorisations: int = 0,
        n_reused_factorisations: int = 0,
        n_separable_solves: int = 0,
        error_estimates: tuple[float | None, float | None, float | None] = (None, None, None),
    ) -> ConductionResult:
        """The ConductionResult of the recorded history with the final enthalpy field H [J/kg]."""
        grid = self.grid
        Tfin = self.temperature(H).reshape(grid.shape)
        Hfin = H.reshape(grid.shape).copy()
        Tfin.setflags(write=False)
        Hfin.setflags(write=False)
        arr = {k: np.asarray(v, dtype=float) for k, v in self.rows.items()}
        return ConductionResult(
            time_s=arr["t"],
            core_C=arr["core"],
            surface_C=arr["surf"],
            face_surface_C=arr["face"],
            mean_C=arr["mean"],
            volume_mean_C=arr["vmean"],
            heat_flow_W=arr["q"],
            heat_J=arr["e"],
            final_field=Tfin,
            final_enthalpy_J_kg=Hfin,
            grid=grid,
            n_steps=n_steps,
            n_rejected=n_rejected,
            n_iterations=n_iterations,
            dt_min_s=float(min(dts)) if dts else 0.0,
            dt_max_s=float(max(dts)) if dts else 0.0,
            energy_balance_error=float(energy_balance_error),
            stopped_at_s=stopped_at_s,
            method=method,
            n_factorisations=n_factorisations,
            n_reused_factorisations=n_reused_factorisations,
            n_separable_solves=n_separable_solves,
            time_tolerance_K=error_estimates[0],
            local_error_estimate_K=error_estimates[1],
            core_error_sum_K=error_estimates[2],
            probe_depths_m=self.probe_depths_m,
            probe_C=np.asarray(self.probe_rows, dtype=float).reshape(len(self.probe_rows), len(self.probes)),
            peak_measure=None if self.peak_measure is None else np.asarray(self.peak_rows, dtype=float),
            peak_field=None if self.peak is None else self.peak.reshape(grid.shape).copy(),
        )
