"""Editors inside the plan: a step's targets at the core, surface, mean or a depth below the surface (where a
probe goes in), and a custom lethality requirement
(reference temperature, z-value, and the required F, or a D-value with the log reduction wanted).

They edit the plan dict in file units; the plan's parser (procplan.files.plan) judges the edit, and its
problems are shown under the fields they name.
"""

from __future__ import annotations

import pandas as pd
import streamlit as st

from procplan.ui import state, widgets

POINT_LABELS = {
    "core": "core",
    "surface": "surface",
    "mean": "mean (volume average)",
    "depth": "depth below the surface",
}
REQUIREMENT_FORMS = {
    "F": "a required F",
    "D": "a D-value and the log reduction wanted",
}


def targets(step: dict, i: int, errs: widgets.FieldErrors | None = None) -> None:
    """The step's targets: temperatures to reach at a point, reported with their time (the step does not
    stop on them; 'stop when the core reaches' does)."""
    rows = [dict(t) for t in step.get("targets", [])]
    remove = None
    points = list(POINT_LABELS)
    for j, t in enumerate(rows):
        c = st.columns([2, 2, 2, 1], vertical_alignment="bottom")
        t["point"] = c[0].selectbox(
            f"Target {j + 1} at the",
            points,
            index=points.index(t.get("point", "core")) if t.get("point", "core") in points else 0,
            format_func=POINT_LABELS.get,
            key=state.key("s.tg.pt", i, j),
        )
        if t["point"] == "depth":
            # no upper limit here: the plan names a depth beyond the centre at its field, with the allowed range
            with c[1]:
                t["depth_mm"] = widgets.number(
                    "Depth below the surface [mm]",
                    t.get("depth_mm", 10.0),
                    f"s.tg.d.{i}.{j}",
                    step=1.0,
                    help="Where the probe tip sits, measured from the centre of the face on the product's "
                    "shortest side toward its centre",
                )
        else:
            t.pop("depth_mm", None)
        with c[2]:
            t["temperature_C"] = widgets.temperature(
                "Temperature to reach", t.get("temperature_C", 5.0), f"s.tg.t.{i}.{j}"
            )
        if c[3].button("✕", key=state.key("s.tg.rm", i, j), help=f"Remove target {j + 1}"):
            remove = j
        if errs is not None:
            errs.mark(f"steps[{i}].targets[{j}]")
    if st.button("Add a target at the surface, mean, core or a depth", key=state.key("s.tg.add", i)):
        rows.append({"point": "surface", "temperature_C": 5.0})
        remove = -1
    if remove is not None and remove >= 0:
        rows.pop(remove)
    if rows:
        step["targets"] = rows
    else:
        step.pop("targets", None)
    if remove is not None:
        state.touch()
        st.rerun()


def lethality(ch: dict, errs: widgets.FieldErrors | None = None) -> None:
    """A custom lethality requirement in the plan's checks (file keys reference_C, z_C, required_F_min,
    d_value_min, point)."""
    from procplan.outcomes.lethality import log_reduction

    leth = ch.get("lethality") if isinstance(ch.get("lethality"), dict) else {}
    leth = {k: v for k, v in leth.items() if k != "preset"}
    with st.container(border=True):
        st.markdown("**Custom lethality requirement**")
        c = st.columns(4)
        with c[0]:
            leth["reference_C"] = widgets.temperature(
                "Reference temperature", leth.get("reference_C", 70.0), "c.leth.ref", minimum_C=-40.0, maximum_C=150.0
            )  # fmt: skip
        with c[1]:
            u = state.units()
            z_shown = widgets.number(
                f"z-value [{'°F' if u.fahrenheit else 'K'}]",
                u.dt(leth.get("z_C", 7.5)),
                "c.leth.z",
                step=0.1,
                fmt="%.1f",
                help="Temperature rise that makes the process ten times faster.",
            )
            leth["z_C"] = z_shown / u.dt(1.0)
        points = list(POINT_LABELS)
        leth["point"] = c[2].selectbox(
            "Checked at the",
            points,
            index=points.index(leth.get("point", "core")) if leth.get("point", "core") in points else 0,
            format_func=POINT_LABELS.get,
            key=state.key("c.leth.point"),
        )
        forms = list(REQUIREMENT_FORMS)
        form = c[3].radio(
            "Requirement as",
            forms,
            index=1 if leth.get("d_value_min") is not None else 0,
            format_func=REQUIREMENT_FORMS.get,
            key=state.key("c.leth.form"),
        )
        c = st.columns(4)
        if form == "F":
            with c[0]:
                leth["required_F_min"] = widgets.number(
                    "Required F [min]", leth.get("required_F_min", 2.0), "c.leth.F", step=0.1, fmt="%.2f"
                )
            leth.pop("d_value_min", None)
        else:
            with c[0]:
                d = widgets.number(
                    "D-value at the reference temperature [min]",
                    leth.get("d_value_min", 0.2),
                    "c.leth.D",
                    step=0.01,
                    fmt="%.3f",
                )
            f_old = leth.get("required_F_min")
            n_old = log_reduction(f_old, d) if f_old and d > 0 else 6.0
            with c[1]:
                n = widgets.number(
                    "Log reduction wanted", round(float(n_old), 2), "c.leth.n", step=0.5, fmt="%.1f"
                )
            leth["d_value_min"] = d
            leth["required_F_min"] = round(n * d, 6)  # F = n·D: n decimal reductions of D minutes each
            c[2].caption(f"Required F = {leth['required_F_min']:.3g} min")
        if leth.get("point") == "core":
            leth.pop("point")
        ch["lethality"] = leth
        if errs is not None:
            errs.mark("checks.lethality")


MEDIUM_FORMS = {"constant": "constant", "profile": "changing over the step (a profile)"}


def medium(step: dict, i: int) -> None:
    """The medium temperature of a step with a given h: constant, or a profile of (time from the step's
    start, temperature) points, each temperature holding until the next point."""
    u = state.units()
    forms = list(MEDIUM_FORMS)
    form = st.radio(
        "Medium temperature",
        forms,
        index=1 if step.get("medium_profile") else 0,
        format_func=MEDIUM_FORMS.get,
        horizontal=True,
        key=state.key("s.medform", i),
    )
    if form == "constant":
        first = step["medium_profile"][0][1] if step.get("medium_profile") else step.get("medium_C", 20.0)
        step.pop("medium_profile", None)
        step["medium_C"] = widgets.temperature(
            "Medium temperature", first, f"s.med.{i}", minimum_C=-80.0, maximum_C=300.0
        )
        return
    profile = step.get("medium_profile") or [
        [0.0, step.get("medium_C", 20.0)],
        [30.0, step.get("medium_C", 20.0)],
    ]
    step.pop("medium_C", None)
    time_col, temp_col = f"time from the step start [{u.time}]", f"medium [{u.temperature}]"
    shown = pd.DataFrame(
        {
            time_col: [round(u.minutes_to_shown(float(t)), 4) for t, _ in profile],
            temp_col: [round(float(u.t(float(v))), 2) for _, v in profile],
        }
    )
    edited = st.data_editor(
        shown,
        num_rows="dynamic",
        hide_index=True,
        key=state.key("s.prof", i),
        column_config={
            time_col: st.column_config.NumberColumn(format="%.1f", required=True),
            temp_col: st.column_config.NumberColumn(format="%.1f", required=True),
        },
    )
    rows = edited.dropna()
    step["medium_profile"] = [
        [u.shown_to_minutes(float(t)), u.t_in(float(v))]
        for t, v in zip(rows[time_col], rows[temp_col], strict=True)
    ]
    st.caption("Each temperature holds until the next time; add or remove rows at the table's edge.")
