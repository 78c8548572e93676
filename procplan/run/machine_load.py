"""The batch in the machine: N pieces pull the medium, the plant's capacity limits it.

A step in a machine with a thermal description (:class:`procplan.surface.plant.MachineThermal`) and a plan
whose load model is ``"loaded"`` (the default) runs the pieces and the medium together
(:mod:`procplan.conduction.fv_medium`): the medium starts at its state at loading (the step's
``loading_medium_C``, default the set point), the plant holds the set point while it can and otherwise runs
at its limit, and the fixed loads (fans, lights, defrost, doors, walls) enter the medium's balance. The exact
series solution needs a medium given in advance, so a loaded step runs on finite volumes (the solver reason
says so). With ``model = "set-point"`` (or a machine without a thermal description) the medium is held at
the set point whatever the load: the empty-machine run, labelled as such.

Modelling choices (each errs to the safe side or is stated): one well-mixed medium node (the air or water
at the product is the node's temperature); h is evaluated at the set point, not at the drifting medium;
with radiation to walls at another temperature than the air the node carries the sink temperature; the
latent (humidity) part of a coil's load and an ice bank's store are not modelled.

Per step the result gives the medium history, the plant duty against its capacity, the time at the limit,
the pull-down time (back within :data:`PULL_DOWN_BAND_K` of the set point), the energy of pieces, medium and
structure, plant and fixed loads with the balance error over all of them, and a warning whenever the plant
cannot hold the set point.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from procplan.conduction.fv_medium import MediumNode, MediumRecord
from procplan.model import Plan, Step
from procplan.outcomes.energy import peak_duty_W

__all__ = [
    "LOAD_MODELS",
    "PULL_DOWN_BAND_K",
    "MachineLoadResult",
    "StepLoad",
    "coupled_frame",
    "coupled_solver_choice",
    "held_frame",
    "held_result",
    "holds_throughout",
    "load_result",
    "set_point_columns",
    "step_load",
    "step_loads",
    "with_held",
    "with_medium_node",
]

#: Load models of a plan (``[load] model``).
LOAD_MODELS: dict[str, str] = {
    "loaded": "the batch in the machine: the medium temperature is solved with the pieces, limited by the plant",
    "set-point": "empty machine: the medium is held at its set point whatever the load",
}
#: The medium is back at its set point when within this band [K] (pull-down time).
PULL_DOWN_BAND_K = 0.5


@dataclass(frozen=True)
class StepLoad:
    """What a loaded step couples: the plant at the set point, the pieces, the medium at loading."""

    machine: str
    plant: object  # procplan.surface.plant.Plant
    pieces: int
    loading_C: float
    set_point_C: float
    medium: str = ""
    second: Any = None  # procplan.run.second_product.SecondLoad: a second product in the same medium
    stop_C: float | None = None  # the step's stop temperature of the core [°C]

    def node(self) -> MediumNode:
        partner = self.second.partner() if self.second is not None else None
        return MediumNode(self.plant, self.pieces, self.loading_C, partner)


@dataclass(frozen=True)
class MachineLoadResult:
    """How the machine carried the batch over one step (powers positive as the plant works: removal for a
    chiller, supply for a heater).

    Attributes
    ----------
    machine : the machine's name
    pieces : pieces in the batch
    refrigerating : True for a chiller
    set_point_C, loading_C : the set point and the medium at loading [°C]
    capacity_kW : the plant's capacity [kW]
    peak_duty_kW : the largest plant duty over the step [kW]
    peak_load_kW : the largest heat the batch and the fixed loads give the medium (chiller) or take from it
        (heater) as a 1-min mean (:func:`procplan.outcomes.energy.peak_duty_W`) [kW]
    time_at_limit_s : time the plant ran at its limit [s]
    pull_down_s : time until the medium is back within 0.5 K of the set point for good [s] (None: never)
    worst_medium_C : the medium temperature furthest from the set point [°C]
    end_medium_C : the medium at the end of the step [°C]
    pieces_kJ, medium_structure_kJ, plant_kJ, fixed_kJ : heat into the pieces, into the medium and structure,
        from the plant and from the fixed loads over the step [kJ] (plant and fixed loads into the medium)
    energy_balance_error : |pieces (both products) + medium and structure − plant − fixed| / the largest [-]
    steam : True for a steam medium (whose drop below the set point means air in the cabinet)
    second : the second product in the same medium (:class:`procplan.run.second_product.SecondProductStep`),
        None without one; ``pieces_kJ`` is the main product's heat, the second's is ``second.heat_kJ``
    """

    machine: str
    pieces: int
    refrigerating: bool
    set_point_C: float
    loading_C: float
    capacity_kW: float
    peak_duty_kW: float
    peak_load_kW: float
    time_at_limit_s: float
    pull_down_s: float | None
    worst_medium_C: float
    end_medium_C: float
    pieces_kJ: float
    medium_structure_kJ: float
    plant_kJ: float
    fixed_kJ: float
    energy_balance_error: float
    steam: bool = False
    second: Any = None

    @property
    def held(self) -> bool:
        """True when the plant held the set point throughout (never at its limit)."""
        return self.time_at_limit_s <= 0.0

    def describe(self, batch: str | None = None) -> str:
        """One line for the summary text and the sheet: what the batch asked and what the plant did.

        ``batch`` names the batch in words (e.g. "25 cases (5000 pieces)" for a packed load, whose machine
        takes cases); default "<pieces> pieces"."""
        duty = "removal" if self.refrigerating else "supply"
        if self.held:
            limit = "held the set point throughout"
        else:
            limit = f"at its limit for {self.time_at_limit_s / 60:.0f} min, medium to {self.worst_medium_C:.1f} °C"
        if self.pull_down_s is None:
            back = "; not back within 0.5 K of the set point"
        elif self.pull_down_s > 0:
            back = f"; back within 0.5 K of the set point after {self.pull_down_s / 60:.0f} min"
        else:
            back = ""
        return (
            f"{self.machine}, {batch or f'{self.pieces} pieces'}{self._with_second()}, medium at loading {self.loading_C:g} °C: peak load "
            f"{self.peak_load_kW:.1f} kW against {self.capacity_kW:.1f} kW {duty}; plant {limit}{back}; heat "
            f"into the pieces {self.pieces_kJ / 3600:.2f} kWh, medium and structure "
            f"{self.medium_structure_kJ / 3600:.2f} kWh, from the plant {self.plant_kJ / 3600:.2f} kWh, fixed loads "
            f"{self.fixed_kJ / 3600:.2f} kWh (balance {self.energy_balance_error:.2%})"
        )

    def _with_second(self) -> str:
        """ " with M × second product" when a second product shares the medium ("" otherwise)."""
        s = self.second
        return "" if s is None else f" and {s.pieces} × {s.name} ({s.heat_kJ / 3600:.2f} kWh into them)"

    def warning(self, step_name: str) -> str | None:
        """The capacity warning of the step (None when the plant held the set point)."""
        if self.held:
            return None
        what = "warmed" if self.refrigerating else "cooled"
        back = (
            f"back within {PULL_DOWN_BAND_K:g} K of the set point after {self.pull_down_s / 60:.0f} min"
            if self.pull_down_s is not None
            else "not back at the set point by the end of the step"
        )
        steam = (
            "; below the steam's set point the cabinet holds an air–steam mixture, whose condensation "
            "coefficient is far below pure steam's: the predicted heating is optimistic, confirm by probing"
            if self.steam
            else ""
        )
        return (
            f"{step_name}: {self.machine} cannot hold {self.set_point_C:g} °C with {self.pieces} pieces"
            f"{self._with_second()}: the batch "
            f"draws up to {self.peak_load_kW:.1f} kW against a {self.capacity_kW:.1f} kW plant, which ran at its "
            f"limit for {self.time_at_limit_s / 60:.0f} min; the medium {what} to {self.worst_medium_C:.1f} °C, "
            f"{back}{steam}"
        )


def step_load(
    plan: Plan, step: Step, index: int, library, set_point_C: float
) -> tuple[StepLoad | None, str | None]:
    """The load a step couples (None when it runs at the set point) and a note saying why it does not."""
    load = plan.load
    if step.equipment is None or library is None or step.equipment not in library.equipment:
        return None, None
    if load.model == "set-point":
        return None, f"{step.name}: empty-machine run (set point held whatever the load)"
    eq = library.equipment[step.equipment]
    if eq.thermal is None:
        return None, (
            f"{step.name}: {eq.name} has no thermal description, so the medium is held at its set point "
            f"whatever the load (an empty-machine run)"
        )
    from procplan.surface.plant import Plant

    loading = step.loading_medium_C if step.loading_medium_C is not None else set_point_C
    return StepLoad(eq.name, Plant.of(eq, set_point_C), plan.pieces, loading, set_point_C, eq.medium), None


def holds_throughout(load: StepLoad, surface, field_C, area_m2: float) -> bool:
    """True when the plant surely holds the set point over the whole step, so that the loaded step is the
    set-point step and needs no coupling (nor finite volumes).

    Bound: with a constant medium and h and no extra surface flux, the surface lies between the extremes of
    the field at the start and the medium (maximum principle), so the heat the N pieces give the medium lies
    in [−N h A (T_sp − T_min)⁺, N h A (T_max − T_sp)⁺]; with the fixed loads at the set point, the plant holds
    when every value in that range is within what it can remove (or supply) at the set point.
    """
    if field_C is None or not surface.constant or surface.radiates_to_other_walls:
        return False
    if load.loading_C != load.set_point_C:
        return False
    sp = load.set_point_C
    T = np.asarray(getattr(field_C, "final_field", field_C), dtype=float)
    hA = load.pieces * float(surface.h_W_m2K[0]) * area_m2
    g_max, g_min = hA * max(float(T.max()) - sp, 0.0), -hA * max(sp - float(T.min()), 0.0)
    L, _ = load.plant.fixed(sp)
    avail = load.plant.available_W(sp)
    if load.plant.refrigerating:
        return g_min + L >= 0.0 and g_max + L <= avail
    return -(g_max + L) >= 0.0 and -(g_min + L) <= avail


def held_result(load: StepLoad, time_s: np.ndarray, heat_flow_W: np.ndarray):
    """The machine-load result of a step whose plant held the set point throughout (:func:`holds_throughout`):
    the medium at the set point, the plant taking what the batch and the fixed loads give it."""
    node = load.node()
    L, _ = load.plant.fixed(load.set_point_C)
    q = load.pieces * np.asarray(heat_flow_W, dtype=float)
    node.records = [
        MediumRecord(float(t), load.set_point_C, float(qi - L), L, float(qi), "hold")
        for t, qi in zip(time_s[1:], q[1:], strict=True)
    ]
    return load_result(load, node, np.asarray(time_s, dtype=float), heat_flow_W, lambda t: load.set_point_C)


def held_frame(load: StepLoad, frame) -> dict:
    """The step history (a DataFrame) of a held load with its medium and plant columns, and its result."""
    frame = frame.copy()
    machine, frame["medium_C"], frame["plant_W"] = held_result(
        load, frame["time_s"].to_numpy(), frame["heat_flow_W"].to_numpy()
    )
    return {"machine": machine, "frame": frame}


def with_medium_node(boundary, load: StepLoad | None):
    """The step's boundary with a fresh medium node for ``load`` (unchanged without one), and the node."""
    if load is None:
        return boundary, None
    node = load.node()
    return replace(boundary, medium_node=node), node


def coupled_frame(load: StepLoad | None, node, res, frame, set_point):
    """After a finite-volume run ``res``: its machine-load result (None without a load), with the medium and
    plant columns added to the step's ``frame``, and the energy-balance error over pieces, medium, structure,
    plant and fixed loads (the pieces' alone without a load)."""
    if node is None:
        return None, res.energy_balance_error
    node.finish(res.final_enthalpy_J_kg)
    machine, frame["medium_C"], frame["plant_W"] = load_result(
        load, node, res.time_s, res.heat_flow_W, set_point
    )
    if node.partner is not None:
        from procplan.run.second_product import second_step

        second = second_step(node, load.stop_C, res.final_enthalpy_J_kg, load.second)
        machine = replace(machine, second=second)
    return machine, max(res.energy_balance_error, machine.energy_balance_error)


def set_point_columns(frame, surface) -> None:
    """The medium at its set point (the fluid, for walls at another temperature) and no plant figure, for a
    step's frame that has no medium column yet."""
    if "medium_C" in frame:
        return
    medium = np.asarray(surface.fluid_temperature_C, dtype=float)
    frame["medium_C"] = np.interp(frame["time_s"], np.asarray(surface.medium_time_s), medium)
    frame["plant_W"] = np.nan


def step_loads(ctx, step: Step, index: int, surface, field_C):
    """For the engine's step context ``ctx`` (plan, library, ``load``): the context with the load to couple
    (None: none), the load the plant surely holds at its set point, which then runs as the set-point step
    (:func:`holds_throughout`), and the note of an empty-machine run."""
    plan = ctx.plan
    load, note = step_load(plan, step, index, ctx.library, surface.medium_C[0])
    if load is not None and ctx.second is not None:
        from procplan.run.second_product import second_load

        second = second_load(ctx.second, step, index, ctx.library)
        return replace(ctx, load=replace(load, second=second, stop_C=step.stop_when_core_C)), None, note
    if load is not None and holds_throughout(load, surface, field_C, plan.product.geometry.area_m2):
        return replace(ctx, load=None), load, note
    return replace(ctx, load=load), None, note


def with_held(run, held: StepLoad | None, surface):
    """The engine's step run with the machine-load result of a held load, and the medium and plant columns
    of a step at its set point (unchanged otherwise)."""
    if held is not None:
        run = replace(run, **held_frame(held, run.frame))
    set_point_columns(run.frame, surface)
    return run


def coupled_solver_choice(choice, load: StepLoad | None):
    """The solver choice of a loaded step: finite volumes, with the reason (unchanged without a load)."""
    if load is None:
        return choice
    reason = (
        f"finite volume: the medium temperature is solved with the {load.pieces} pieces of the batch (a medium "
        "that depends on the load is not known in advance, which the exact series solution needs)"
    )
    return replace(choice, solver="finite-volume", reason=reason)


def _rows(node: MediumNode, q0_W: float) -> list[MediumRecord]:
    """The accepted states of the medium with the loading state at t = 0 in front (the plant in the first
    step's mode: holding, it takes what the batch and the fixed loads give the medium)."""
    mode = node.records[0].mode if node.records else "hold"
    from procplan.run.second_product import second_flow_at_start

    L0, _ = node.plant.fixed(node.initial_C)
    Q0 = q0_W * node.pieces
    Q2 = second_flow_at_start(node)
    P0 = (
        {"hold": Q0 + Q2 - L0, "off": 0.0}.get(mode)
        if mode != "limit"
        else node.plant.at_limit(node.initial_C)[0]
    )
    start = MediumRecord(0.0, node.initial_C, P0, L0, Q0, mode, Q2)
    return [start, *node.records]


def _pull_down_s(t: np.ndarray, E: np.ndarray, set_point: np.ndarray) -> float | None:
    outside = np.abs(E - set_point) > PULL_DOWN_BAND_K
    if not outside.any():
        return 0.0
    last = int(np.nonzero(outside)[0][-1])
    if last == t.size - 1:
        return None
    # the crossing into the band, linearly between the last point outside and the next one
    d0 = abs(E[last] - set_point[last]) - PULL_DOWN_BAND_K
    d1 = abs(E[last + 1] - set_point[last + 1]) - PULL_DOWN_BAND_K
    f = d0 / (d0 - d1) if d0 != d1 else 1.0
    return float(t[last] + f * (t[last + 1] - t[last]))


def load_result(load: StepLoad, node: MediumNode, time_s: np.ndarray, heat_flow_W: np.ndarray, set_point):
    """The step's machine-load result and the medium and plant histories at ``time_s`` (from the step start).

    ``heat_flow_W`` is the heat into one piece at those times (the solver's history); ``set_point`` gives the
    set point at a time [°C].
    """
    rows = _rows(node, float(heat_flow_W[0]))
    t = np.array([r.time_s for r in rows])
    E = np.array([r.medium_C for r in rows])
    P = np.array([r.plant_W for r in rows])
    L = np.array([r.fixed_W for r in rows])
    Q2 = np.array([r.second_W for r in rows])
    medium = np.interp(time_s, t, E)
    plant = np.interp(time_s, t, P)
    sp = np.asarray(set_point(t), dtype=float) * np.ones_like(t)
    sign = -1.0 if load.plant.refrigerating else 1.0
    at_limit = np.array([r.mode == "limit" for r in rows])
    dt = np.diff(t)
    time_at_limit = float(dt[at_limit[1:]].sum()) if dt.size else 0.0
    pieces_J = load.pieces * float(np.trapezoid(heat_flow_W, time_s)) if time_s.size > 1 else 0.0
    plant_J = float(np.trapezoid(P, t)) if t.size > 1 else 0.0
    fixed_J = float(np.trapezoid(L, t)) if t.size > 1 else 0.0
    second_J = float(np.trapezoid(Q2, t)) if t.size > 1 else 0.0
    medium_J = load.plant.heat_capacity_J_K * (E[-1] - E[0])
    scale = max(abs(pieces_J), abs(second_J), abs(plant_J), abs(fixed_J), abs(medium_J), 1e-300)
    error = abs(pieces_J + second_J + medium_J - plant_J - fixed_J) / scale
    # what the batch and the fixed loads ask of the plant, as a 1-min mean like the energy outcome's peak duty
    loads = -sign * (
        -load.pieces * np.asarray(heat_flow_W) - np.interp(time_s, t, Q2) + np.interp(time_s, t, L)
    )
    peak_load_W = peak_duty_W(time_s, np.maximum(loads, 0.0))[0] if time_s.size > 1 else float(loads[0])
    dev = np.abs(E - sp)
    res = MachineLoadResult(
        machine=load.machine,
        pieces=load.pieces,
        refrigerating=load.plant.refrigerating,
        set_point_C=float(sp[0]),
        loading_C=float(E[0]),
        capacity_kW=load.plant.capacity_W / 1e3,
        peak_duty_kW=float(np.max(sign * P)) / 1e3,
        peak_load_kW=float(peak_load_W) / 1e3,
        time_at_limit_s=time_at_limit,
        pull_down_s=_pull_down_s(t, E, sp),
        worst_medium_C=float(E[int(np.argmax(dev))]),
        end_medium_C=float(E[-1]),
        pieces_kJ=pieces_J / 1e3,
        medium_structure_kJ=medium_J / 1e3,
        plant_kJ=plant_J / 1e3,
        fixed_kJ=fixed_J / 1e3,
        energy_balance_error=float(error),
        steam=load.medium == "steam",
    )
    return res, medium, plant
