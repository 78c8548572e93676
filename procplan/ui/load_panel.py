"""The batch in its machines: each loaded step's peak load against the plant's capacity (Result page), the packed
load's positions, and the largest batch that still meets a goal (studies page). Words and numbers come from the
library (run.machine_load, run.packing, studies.batch_size); nothing is computed here."""

from __future__ import annotations

import streamlit as st

from procplan.ui import adapter, charts, state, widgets
from procplan.ui.fmt import Units


def machine_load(result, u: Units) -> None:
    """One block per step that ran in a loaded machine: a capacity bar and the library's sentence."""
    loaded = [(sr, sr.machine_load) for sr in result.steps if getattr(sr, "machine_load", None) is not None]
    notes = [(sr.name, sr.load_note) for sr in result.steps if getattr(sr, "load_note", None)]
    alone = any(getattr(sr, "second_alone", None) is not None for sr in result.steps)
    if not loaded and not notes and not alone and result.packing is None:
        return
    st.subheader("The batch in the machine")
    from procplan.output.report import batch_label

    batch = batch_label(result) if result.packing is not None else None
    for sr, ml in loaded:
        share = ml.peak_load_kW / ml.capacity_kW if ml.capacity_kW > 0 else float("inf")
        st.markdown(f"**{sr.name}**: {ml.machine}, {batch or f'{ml.pieces} pieces'}")
        st.progress(
            min(1.0, share),
            text=f"Peak load {ml.peak_load_kW:.1f} kW against a {ml.capacity_kW:.1f} kW plant ({share:.0%} of its capacity)",
        )
        c = st.columns(3)
        c[0].metric("Plant at its limit", u.duration(ml.time_at_limit_s))
        c[1].metric("Medium furthest from the set point", u.temp(ml.worst_medium_C))
        c[2].metric(
            "Back at the set point after", "never" if ml.pull_down_s is None else u.duration(ml.pull_down_s)
        )
        (st.caption if ml.held else st.warning)(ml.describe(batch))
        if ml.second is not None:
            _second(result, ml.second, u)
    for name, note in notes:
        st.caption(note if note.startswith(f"{name}:") else f"{name}: {note}")
    for sr in result.steps:
        if getattr(sr, "second_alone", None) is not None:
            st.markdown(f"**{sr.name}** (the second product alone in the step's medium)")
            _second(result, sr.second_alone, u)
    if result.packing is not None:
        packed(result, u)


def _second(result, second, u: Units) -> None:
    """The second product in the step: its h, its core at the end and when its core reached its own target
    (procplan.run.second_product)."""
    from procplan.run.second_product import second_target

    st.markdown(f"Second product in the load: {second.pieces} × {second.name}")
    c = st.columns(3)
    c[0].metric("Its surface coefficient", f"{second.h_W_m2K:.1f} W/m²K", help=second.h_source)
    c[1].metric("Its core at the end of the step", u.temp(second.core_C[-1]))
    tg = second_target(result.plan, result.steps)
    if tg is None:
        return
    label = f"Its core reaches {u.temp(tg.target_C)} after"
    if tg.reached:
        c[2].metric(label, u.duration(tg.time_s))
    else:
        c[2].metric(label, "not reached")
        missed = [w for w in result.warnings if "does not reach its target" in w]
        if missed:
            st.warning(missed[0])


def packed(result, u: Units) -> None:
    """The packed load's slowest and fastest positions beside the single free piece: times to the target,
    the load in words and a chart of the three (procplan.run.packing)."""
    from procplan.properties.packing import PACKED_MODEL_LABELS

    pk = result.packing
    load = pk.load
    g = load.geometry
    st.markdown(f"**Packed load: {load.description}**")
    wall = "" if load.wall is None else f"; case wall {load.wall.name} {load.wall.thickness_m * 1000:g} mm"
    st.caption(
        f"{load.pieces} pieces, {load.load_mass_kg:.1f} kg of product in "
        f"{g.length_m * 1000:.0f} × {g.width_m * 1000:.0f} × {g.height_m * 1000:.0f} mm; air fraction "
        f"{load.void_fraction:.2f} ({load.void_fraction_from}); conductivity {load.k_W_mK:.3f} W/mK "
        f"({PACKED_MODEL_LABELS[load.conductivity_model]}; {load.k_low_W_mK:.3f} W/mK if the pieces touch "
        f"less){wall}; air speed at the load {load.air_flow_factor:g} × the machine's setting."
    )
    goal = "Time to reach " + u.temp(pk.target_C) if pk.target_C is not None else "Temperature at the end"
    st.markdown(goal)
    cols = st.columns(len(pk.positions))
    for col, p in zip(cols, pk.positions, strict=True):
        if pk.target_C is None:
            col.metric(p.name.capitalize(), u.temp(p.end_C))
        else:
            col.metric(
                p.name.capitalize(),
                "not reached" if p.time_to_target_s is None else u.duration(p.time_to_target_s),
                help=f"At the end of its run: {u.temp(p.end_C)}",
            )
    charts.show(charts.packed_figure(result, u), "packed_chart", "packed-load")


def largest_batch(text: str, u: Units) -> None:
    """How many pieces a loaded machine can take and still meet the time, rule or lethality goal."""
    st.subheader("Largest batch")
    st.caption(
        "How many pieces can the machine take and still meet the goal? The machine's medium is solved with the "
        "batch and limited by its plant, so a larger batch warms a chiller (or cools an oven) and takes longer."
    )
    parsed = adapter.parse_plan(text, state.generation())
    if not parsed.ok:
        widgets.problems(parsed.problems, "The plan has invalid input:")
        return
    plan = parsed.value
    names = [f"{i + 1}: {s.name}" for i, s in enumerate(plan.steps)]
    goals = {"time": "Stop temperature in time", "rule": "Cooling rule passes", "lethality": "Lethality met"}
    c = st.columns(3)
    step_index = names.index(c[0].selectbox("Step in the machine", names, key="lb_step"))
    goal = c[1].selectbox("Goal", list(goals), key="lb_goal", format_func=goals.get)
    target_min = None
    if goal == "time":
        with c[2]:
            target_min = widgets.duration(
                "Allowed time (margin included)", 240.0, "lb_target", minimum_min=1.0
            )
    if st.button("Find the largest batch", key="lb_go"):
        st.session_state["lb_request"] = (text, step_index, goal, target_min)
    req = st.session_state.get("lb_request")
    if not req or req[0] != text:
        return
    out = adapter.largest_batch(*req, generation=state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The study refused these inputs:")
        return
    r = out.value
    k = st.columns(2)
    k[0].metric("Largest batch", "none" if r.pieces is None else f"{r.pieces} pieces")
    k[1].metric(
        "Smallest batch that fails", "not found" if r.first_failing is None else f"{r.first_failing} pieces"
    )
    (st.success if r.pieces else st.warning)(r.message)
    if r.machine_load is not None:
        st.caption(r.machine_load.describe())
