"""A second product in the same load: M pieces of another library product sharing the machine's medium.

A plan's ``[load.second_product]`` (a library product, its piece count and its temperature at loading) puts a
second product into the machine with the batch. In every loaded step (a machine with a thermal description,
``[load] model = "loaded"``) its field is solved with the main product's field and the medium node
(:mod:`procplan.conduction.fv_partner`): the medium balance takes both products' surface heat, so the second
product slows the main product's cooling or heating when it loads the plant (the unsafe direction is to leave
it out). Its h comes from the same machine and settings, evaluated by the machine's correlation for its own
shape, size and packaging (or a measured h of that product in that machine), first at the temperature halfway
between its mean at the step start and the medium, then, as for the main product, again at its time-averaged
surface temperature, the step solved once more when that moves its h by more than 3 %; a packed load's air-flow
factor does not apply to it (it sees the machine's setting). The time
steps are chosen on the larger temperature change of the two fields; the plan's checks (targets, rules,
lethality) stay on the main product. An optional core target of its own (``target_core_C``) is reported: the
time its core reaches it (per step and on the plan's clock), with a warning when it does not.

In a step that does not couple a medium (a machine without a thermal description, an empty-machine run, h
given in the plan) the second product is solved alone in the step's medium (held as the step gives it) with its
own h: the machine's correlation for its own shape and size, or the plan's h as given (with its own packaging
in series, and a note: a given h is not re-evaluated for its size). In hot dry air or brine (the moisture or
salt the step couples) it is not solved: its field carries unchanged and a warning says so.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

__all__ = [
    "SecondLoad",
    "SecondProductStep",
    "SecondState",
    "SecondTarget",
    "initial_state",
    "second_load",
    "second_step",
    "second_target",
    "target_warnings",
]


@dataclass(frozen=True)
class SecondState:
    """The second product between steps: its record, pieces, property table and field (None: uniform)."""

    name: str
    product: Any  # procplan.model.Product
    pieces: int
    props: Any  # PropertyTable
    start_C: float
    mean_C: float
    field_H: Any = None  # enthalpy field [J/kg] on its grid (None: uniform at start_C)
    target_C: float | None = None  # its core target [°C] (None: none)
    machine_steps: tuple = ()  # the steps as set on the machine, for its h (empty: the plan's)
    target_falling: bool = True  # the target lies below its temperature at loading (a cooling target)


@dataclass(frozen=True)
class SecondLoad:
    """The second product in one loaded step: its state at the step start and its surface boundary."""

    state: SecondState
    boundary: Any  # procplan.conduction.fv_boundary.SurfaceBoundary (its h; the medium is the node's)
    h_W_m2K: float = float("nan")  # its effective h at the step's first setting point [W/m²K]
    h_source: str = ""  # where that h came from (the machine's correlation, a measurement)

    def partner(self):
        """A fresh :class:`procplan.conduction.fv_partner.SecondField` for the step."""
        from procplan.conduction.fv_grid import build_grid
        from procplan.conduction.fv_model import FVModel
        from procplan.conduction.fv_partner import SecondField

        st = self.state
        grid = build_grid(st.product.geometry, None, 0.5)
        model = FVModel(grid, st.props, self.boundary)
        H0 = (
            st.field_H
            if st.field_H is not None
            else np.full(grid.n_cells, float(st.props.enthalpy(st.start_C)))
        )
        field2 = SecondField(model, st.pieces, H0)
        field2.name = st.name
        return field2


@dataclass(frozen=True)
class SecondProductStep:
    """The second product over one loaded step (times from the step start).

    Attributes
    ----------
    name : the product's name
    pieces : its pieces in the load
    time_s, core_C, surface_C, mean_C : its history [s], [°C] (surface: the corner or rim, as the main one)
    heat_kJ : heat into all its pieces over the step [kJ]
    stop_C : the step's stop temperature of the core [°C] (None: the step has none)
    stop_time_s : when its core reached the stop temperature [s from the step start] (None: not within the step)
    h_W_m2K, h_source : its effective h at the step's first setting point [W/m²K] and where it came from
    target_C : its own core target [°C] (None: none)
    target_time_s : when its core crossed the target in this step [s from the step start] (None: it did not
        cross it within the step: not yet, or already before the step)
    """

    name: str
    pieces: int
    time_s: tuple[float, ...]
    core_C: tuple[float, ...]
    surface_C: tuple[float, ...]
    mean_C: tuple[float, ...]
    heat_kJ: float
    stop_C: float | None
    stop_time_s: float | None
    final_field_H: Any = field(default=None, compare=False, repr=False)
    h_W_m2K: float = float("nan")
    h_source: str = ""
    target_C: float | None = None
    target_time_s: float | None = None


@dataclass(frozen=True)
class SecondTarget:
    """The second product's core target over the plan.

    Attributes
    ----------
    target_C : the core target [°C]
    time_s : when its core reached it on the plan's clock [s] (None: not reached)
    step : the name of the step it was reached in (None: not reached)
    at_loading : True when it was at or past the target when loaded
    end_core_C : its core at the end of the last step it was solved in [°C]
    last_step : the name of that step
    """

    target_C: float
    time_s: float | None
    step: str | None
    at_loading: bool
    end_core_C: float
    last_step: str

    @property
    def reached(self) -> bool:
        return self.time_s is not None


def initial_state(plan) -> SecondState | None:
    """The second product at loading (None without one or with no pieces)."""
    sp = plan.load.second_product
    if sp is None or sp.pieces == 0:
        return None
    props = sp.product.property_table()
    props.check_in_range("load.second_product.initial_temperature_C", sp.initial_temperature_C)
    t0 = sp.initial_temperature_C
    target = sp.target_core_C
    falling = target is not None and target < t0
    return SecondState(
        sp.product.name, sp.product, sp.pieces, props, t0, t0, None, target, tuple(sp.machine_steps), falling
    )


def second_load(
    state: SecondState | None, step, index: int, library, surface_C: float | None = None
) -> SecondLoad | None:
    """The second product's part of a loaded step: h from the step's machine and settings (as set on the
    machine, without a packed load's air-flow factor) for its own shape, size and packaging, at its
    time-averaged surface temperature ``surface_C`` of an earlier pass (None: halfway between its mean at the
    step start and the medium)."""
    if state is None:
        return None
    from procplan.run.step_surface import resolve_step_surface

    own = state.machine_steps[index] if state.machine_steps else step
    surface = resolve_step_surface(own, index, state.product, state.mean_C, library, surface_C=surface_C)
    b = surface.breakdown
    return SecondLoad(state, surface.boundary(), float(b.h_eff_W_m2K), b.source)


def _stop_time(t: np.ndarray, core: np.ndarray, stop: float | None) -> float | None:
    """First time the core crosses ``stop`` (linear between records) in the direction it starts from."""
    if stop is None or core.size < 2:
        return None
    falling = core[0] > stop
    # the main core stops within 1e-5 K of the stop temperature: an equal second product reaches it there too
    past = core <= stop + 1e-4 if falling else core >= stop - 1e-4
    if not past.any():
        return None
    j = int(np.argmax(past))
    if j == 0:
        return 0.0
    d0, d1 = core[j - 1] - stop, core[j] - stop
    f = min(d0 / (d0 - d1), 1.0) if d0 != d1 else 1.0
    return float(t[j - 1] + f * (t[j] - t[j - 1]))


def _crossing(t: np.ndarray, core: np.ndarray, target: float, falling: bool) -> float | None:
    """When ``core`` crosses ``target`` in the direction of the target (linear between records); None when it
    does not within the records or is already at or past it at the first one (reached in an earlier step)."""
    from procplan.run.packing import time_to_reach_s

    if core.size < 2 or (core[0] <= target if falling else core[0] >= target):
        return None
    return time_to_reach_s(t, core, target, float(core[0]))


def _falling(state: SecondState) -> bool:
    """True for a target below the temperature at loading (a cooling target)."""
    return state.target_falling


def second_step(node, stop_C: float | None, H_final: np.ndarray, second: SecondLoad | None = None):
    """The second product's history over a coupled step from the medium node's accepted records
    (:class:`SecondProductStep`, None without one); ``second`` gives its h and its core target."""
    partner = node.partner
    if partner is None:
        return None
    H0 = partner.H0
    m = partner.model
    T0 = m.temperature(H0)
    V = m.grid.volume_m3
    first = (
        float(T0[m.grid.core_index]),
        float(T0[m.grid.corner_index]),
        float(m.temperature(V @ H0 / V.sum())),
    )
    rows = [first] + [r.second_C for r in node.records]
    t = np.array([0.0] + [r.time_s for r in node.records])
    arr = np.array(rows, dtype=float)
    q = np.array([second_flow_at_start(node)] + [r.second_W for r in node.records])
    heat = float(np.trapezoid(q, t)) if t.size > 1 else 0.0
    target = second.state.target_C if second is not None else None
    return SecondProductStep(
        name=partner_name(node),
        pieces=int(partner.pieces),
        time_s=tuple(t),
        core_C=tuple(arr[:, 0]),
        surface_C=tuple(arr[:, 1]),
        mean_C=tuple(arr[:, 2]),
        heat_kJ=heat / 1e3,
        stop_C=stop_C,
        stop_time_s=_stop_time(t, arr[:, 0], stop_C),
        final_field_H=partner.field_of(np.asarray(H_final, dtype=float).ravel()),
        h_W_m2K=second.h_W_m2K if second is not None else float("nan"),
        h_source=second.h_source if second is not None else "",
        target_C=target,
        target_time_s=None if target is None else _crossing(t, arr[:, 0], target, _falling(second.state)),
    )


def second_target(plan, steps) -> SecondTarget | None:
    """The second product's core target over the plan's step results ``steps`` (each with ``name``,
    ``start_s`` and ``machine_load``): when its core first reached it on the plan's clock; None without a
    target or without a step that solved it."""
    state = initial_state(plan)
    if state is None or state.target_C is None:
        return None
    solved = [(sr, step_second(sr)) for sr in steps if step_second(sr) is not None]
    if not solved:
        return None
    last_sr, last = solved[-1]
    end = dict(end_core_C=float(last.core_C[-1]), last_step=last_sr.name)
    target = state.target_C
    at_loading = state.start_C <= target if _falling(state) else state.start_C >= target
    if at_loading:
        first_sr = solved[0][0]
        return SecondTarget(target, float(first_sr.start_s), first_sr.name, True, **end)
    for sr, second in solved:
        if second.target_time_s is not None:
            return SecondTarget(target, float(sr.start_s + second.target_time_s), sr.name, False, **end)
    return SecondTarget(target, None, None, False, **end)


def target_warnings(plan, steps) -> list[str]:
    """A warning when the second product's core does not reach its target (the unsafe side is to read the
    main product's time as the load's: the second product needs longer, or a smaller load)."""
    tg = second_target(plan, steps)
    if tg is None or tg.reached:
        return []
    name = plan.load.second_product.product.name
    return [
        f"second product ({name}): its core does not reach its target {tg.target_C:g} °C; it is "
        f"{tg.end_core_C:.1f} °C at the end of '{tg.last_step}' (the steps stop on the main product's core): "
        "it needs a longer step or a smaller load"
    ]


def step_second(sr):
    """The second product in a step result: solved with the medium, or alone (None: not solved)."""
    ml = getattr(sr, "machine_load", None)
    if ml is not None and ml.second is not None:
        return ml.second
    return getattr(sr, "second_alone", None)


def _alone(
    state: SecondState, step, index: int, library, duration_s: float, dt_s: float | None = None
) -> SecondProductStep | None:
    """The second product alone over an uncoupled step of ``duration_s`` [s] (time step ``dt_s`` [s], None:
    adaptive), None where the step couples moisture or salt, which it does not solve."""
    from procplan.conduction.finite_volume import solve_conduction
    from procplan.conduction.fv_grid import build_grid
    from procplan.run.step_surface import resolve_step_surface

    if step.brine is not None or not duration_s > 0:
        return None
    surface = resolve_step_surface(step, index, state.product, state.mean_C, library)
    if surface.drying_air is not None:
        return None
    grid = build_grid(state.product.geometry, None, 0.5)
    start = (
        state.start_C if state.field_H is None else state.props.temperature(state.field_H).reshape(grid.shape)
    )

    def solve(surf):
        return solve_conduction(
            state.product.geometry, state.props, start, surf.boundary(), duration_s, dt_s=dt_s
        )

    res = solve(surface)
    # a second pass at its time-averaged surface temperature, as the main product has
    again = resolve_step_surface(
        step, index, state.product, state.mean_C, library, surface_C=time_mean(res.time_s, res.surface_C)
    )
    if h_moved(surface.breakdown.h_eff_W_m2K, again.breakdown.h_eff_W_m2K):
        surface, res = again, solve(again)
    mass = state.props.mass_density_kg_m3 * state.product.geometry.volume_m3
    heat_J = (
        state.pieces
        * mass
        * float(state.props.enthalpy(res.mean_C[-1]) - state.props.enthalpy(res.mean_C[0]))
    )
    b = surface.breakdown
    source = (
        b.source
        if step.equipment is not None
        else "h given in the plan for the main product, applied as given: not evaluated for its own size, its "
        "own packaging in series"
    )
    t = np.asarray(res.time_s, dtype=float)
    core = np.asarray(res.core_C, dtype=float)
    return SecondProductStep(
        name=state.name,
        pieces=state.pieces,
        time_s=tuple(t),
        core_C=tuple(core),
        surface_C=tuple(res.surface_C),
        mean_C=tuple(res.mean_C),
        heat_kJ=heat_J / 1e3,
        stop_C=step.stop_when_core_C,
        stop_time_s=_stop_time(t, core, step.stop_when_core_C),
        final_field_H=np.asarray(res.final_enthalpy_J_kg, dtype=float).ravel(),
        h_W_m2K=float(b.h_eff_W_m2K),
        h_source=source,
        target_C=state.target_C,
        target_time_s=None
        if state.target_C is None
        else _crossing(t, core, state.target_C, state.target_falling),
    )


#: Relative change of h, re-evaluated at the step's mean surface temperature, above which a step runs again
#: (the main product's and the second product's second pass alike; the engine reads it from here).
H_SURFACE_TOLERANCE = 0.03


def time_mean(time_s, values) -> float:
    """Time-averaged value of a history (trapezoid rule); the last value for a history of no duration."""
    t, v = np.asarray(time_s, dtype=float), np.asarray(values, dtype=float)
    return float(np.trapezoid(v, t) / (t[-1] - t[0])) if t[-1] > t[0] else float(v[-1])


def h_moved(h_first: float, h_again: float) -> bool:
    """Whether the second product's h moved by more than :data:`H_SURFACE_TOLERANCE` on its second pass."""
    return bool(abs(float(h_again) / float(h_first) - 1.0) > H_SURFACE_TOLERANCE)


def second_surface_pass(second: SecondLoad, machine, step, index: int, library) -> SecondLoad | None:
    """The second product's load evaluated again at its time-averaged surface temperature over a coupled
    step's result ``machine`` (a machine-load result with its history), or None when its h moved by no more
    than the tolerance (or the step holds no history of it)."""
    hist = getattr(machine, "second", None)
    if hist is None or len(hist.time_s) < 2:
        return None
    again = second_load(second.state, step, index, library, surface_C=time_mean(hist.time_s, hist.surface_C))
    return again if h_moved(second.h_W_m2K, again.h_W_m2K) else None


def second_product_pass(ctx, index: int, step, run, solve):
    """A second product coupled in the step gets the main product's second pass: its h evaluated again at its
    own time-averaged surface temperature, and the step solved once more (``solve(ctx)``) when it moved by
    more than the tolerance (its first h, halfway between its start and the medium, runs high in a chill: the
    unsafe side for its own target). ``ctx`` is the engine's step context (its ``load`` and ``library``).
    Returns the run and the context with the load it ran with."""

    load = ctx.load
    if load is None or getattr(load, "second", None) is None or run.machine is None:
        return run, ctx
    again = second_surface_pass(load.second, run.machine, step, index, ctx.library)
    if again is None:
        return run, ctx
    ctx = replace(ctx, load=replace(load, second=again))
    return solve(ctx), ctx


def second_flow_at_start(node) -> float:
    """Heat into all the second product's pieces at the step start [W] (medium at loading)."""
    p = node.partner
    if p is None:
        return 0.0
    return p.model.heat_flow_W(0.0, p.H0, node.initial_C) / p.model.grid.piece_factor * p.weight


def partner_name(node) -> str:
    return node.partner.name or "second product"


def carried(
    state: SecondState | None, sr, step, library, dt_s: float | None = None
) -> tuple[SecondState | None, str | None, Any]:
    """The second product after the step result ``sr``: its new state, a warning (None) and its history over
    the step when solved alone (None after a coupled step, or where it is not solved: then a warning); ``dt_s``
    the engine's fixed time step (None: adaptive)."""
    if state is None:
        return None, None, None
    second = sr.machine_load.second if sr.machine_load is not None else None
    alone = None
    if second is None:
        second = alone = _alone(state, step, sr.index, library, sr.end_s - sr.start_s, dt_s)
    if second is None:
        return (
            state,
            (
                f"{sr.name}: the second product ({state.name}) is not solved in this step (it couples moisture or "
                "salt to the main product); its temperatures carry unchanged into the next step"
            ),
            None,
        )
    new = replace(state, start_C=second.core_C[-1], mean_C=second.mean_C[-1], field_H=second.final_field_H)
    return new, None, alone
