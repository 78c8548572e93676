"""A second product in the same load: M pieces of another library product sharing the machine's medium.

A plan's ``[load.second_product]`` (a library product, its piece count and its temperature at loading) puts a
second product into the machine with the batch. In every loaded step (a machine with a thermal description,
``[load] model = "loaded"``) its field is solved with the main product's field and the medium node
(:mod:`procplan.conduction.fv_partner`): the medium balance takes both products' surface heat, so the second
product slows the main product's cooling or heating when it loads the plant (the unsafe direction is to leave
it out). Its h comes from the same machine and settings with its own shape and size. The time steps are
chosen on the larger temperature change of the two fields; the plan's checks (targets, rules, lethality) stay on the main product.

In a step that does not couple a medium (no thermal description, an empty-machine run, hot dry air) the
second product is not solved: its field carries unchanged into the next loaded step and a warning says so.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

__all__ = ["SecondLoad", "SecondProductStep", "SecondState", "initial_state", "second_load", "second_step"]


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


@dataclass(frozen=True)
class SecondLoad:
    """The second product in one loaded step: its state at the step start and its surface boundary."""

    state: SecondState
    boundary: Any  # procplan.conduction.fv_boundary.SurfaceBoundary (its h; the medium is the node's)

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


def initial_state(plan) -> SecondState | None:
    """The second product at loading (None without one or with no pieces)."""
    sp = plan.load.second_product
    if sp is None or sp.pieces == 0:
        return None
    props = sp.product.property_table()
    props.check_in_range("load.second_product.initial_temperature_C", sp.initial_temperature_C)
    t0 = sp.initial_temperature_C
    return SecondState(sp.product.name, sp.product, sp.pieces, props, t0, t0)


def second_load(state: SecondState | None, step, index: int, library) -> SecondLoad | None:
    """The second product's part of a loaded step: h from the step's machine and settings for its shape."""
    if state is None:
        return None
    from procplan.run.step_surface import resolve_step_surface

    surface = resolve_step_surface(step, index, state.product, state.mean_C, library)
    return SecondLoad(state, surface.boundary())


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


def second_step(node, stop_C: float | None, H_final: np.ndarray) -> SecondProductStep | None:
    """The second product's history over a coupled step from the medium node's accepted records."""
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
    )


def second_flow_at_start(node) -> float:
    """Heat into all the second product's pieces at the step start [W] (medium at loading)."""
    p = node.partner
    if p is None:
        return 0.0
    return p.model.heat_flow_W(0.0, p.H0, node.initial_C) / p.model.grid.piece_factor * p.weight


def partner_name(node) -> str:
    return node.partner.name or "second product"


def carried(state: SecondState | None, machine, step_name: str) -> tuple[SecondState | None, str | None]:
    """The second product after a step: its new field after a coupled step, else unchanged with a warning."""
    if state is None:
        return None, None
    second = machine.second if machine is not None else None
    if second is None:
        return state, (
            f"{step_name}: the second product ({state.name}) is not solved in this step (its medium is not "
            "coupled to the load); its temperatures carry unchanged into the next loaded step"
        )
    return (
        replace(state, start_C=second.core_C[-1], mean_C=second.mean_C[-1], field_H=second.final_field_H),
        None,
    )
