"""Study panels of the Compare & studies page: required setting, variability, logger data and calibration."""

from __future__ import annotations

import math

import pandas as pd
import streamlit as st

from procplan.ui import adapter, charts, state, widgets
from procplan.ui.fmt import Units


def _step_names(plan) -> list[str]:
    return [f"{i + 1}: {s.name}" for i, s in enumerate(plan.steps)]


def required_setting(text: str, u: Units) -> None:
    mod = adapter.studies_module("inverse")
    st.subheader("Required setting")
    st.caption("Which value of one setting just meets a goal? The answer is confirmed by a forward run.")
    parsed = adapter.parse_plan(text, state.generation())
    if not parsed.ok:
        widgets.problems(parsed.problems, "The plan has invalid input:")
        return
    plan = parsed.value
    c = st.columns(4)
    names = _step_names(plan)
    step_index = names.index(c[0].selectbox("Step", names, key="rs_step"))
    params = list(mod.PARAMETERS)
    parameter = c[1].selectbox(
        "Setting to find",
        params,
        key="rs_param",
        format_func=lambda p: f"{p}: {mod.PARAMETERS[p].description}",
    )
    goals = list(mod.GOALS)
    goal = c[2].selectbox(
        "Goal", goals, key="rs_goal", format_func=lambda g: f"{g}: {mod.GOALS[g].description}"
    )
    target_min = None
    if mod.GOALS[goal].needs_target_min:
        with c[3]:
            target_min = widgets.duration(
                "Allowed time (margin included)", 180.0, "rs_target", minimum_min=1.0
            )
    if st.button("Find the required setting", key="rs_go"):
        st.session_state["rs_request"] = (text, step_index, parameter, goal, target_min)
    req = st.session_state.get("rs_request")
    if not req or req[0] != text:
        return
    out = adapter.required_setting(*req, generation=state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The study refused these inputs:")
        return
    r = out.value
    unit = r.unit
    shown = r.value
    if unit == "°C" and shown is not None:
        shown_text = u.temp(shown, 2)
    elif unit == "min" and shown is not None:
        shown_text = u.duration_min(shown)
    else:
        shown_text = "—" if shown is None else f"{shown:.4g} {unit}"
    k = st.columns(3)
    k[0].metric(f"Required {r.parameter}", shown_text if r.achievable else "not achievable")
    k[1].metric("Meets the goal", {"above": "at or above", "below": "at or below"}.get(r.passes, r.passes))
    k[2].metric("Confirmed by a forward run", "yes" if r.confirmed else "no")
    (st.success if r.achievable else st.warning)(r.message)
    for note in r.notes:
        (st.warning if "would freeze the surface" in note else st.caption)(note)
    ev = pd.DataFrame(r.evaluations, columns=[f"{r.parameter} [{unit}]", "goal measure (≥ 0 meets)"])
    with st.expander(f"{len(ev)} forward runs"):
        st.dataframe(ev, hide_index=True)


DEFAULT_SPECS = {
    "start_C": lambda plan: f"normal:{plan.start_temperature_C:g},2",
    "size_factor": lambda plan: "normal:1,0.03@0.9,1.1",
    "h_W_m2K": lambda plan: "lognormal:20,0.2",
    "h_factor": lambda plan: "uniform:0.8,1.2",
    "water_fraction": lambda plan: f"normal:{dict(plan.product.composition).get('water', 0.7):.3f},0.01",
}


def variability(text: str, u: Units) -> None:
    mod = adapter.studies_module("variability")
    st.subheader("Variability")
    st.caption(
        "Distributions as kind:parameters[@low,high] in library units (°C, W/m²K, factors): "
        "normal:mean,sd · uniform:low,high · triangular:low,mode,high · lognormal:median,sigma_log."
    )
    parsed = adapter.parse_plan(text, state.generation())
    if not parsed.ok:
        widgets.problems(parsed.problems, "The plan has invalid input:")
        return
    plan = parsed.value
    variables = list(mod.VARIABLES)
    chosen = st.multiselect(
        "Inputs that vary",
        variables,
        default=["h_factor"],
        key="mc_vars",
        format_func=lambda v: f"{v}: {mod.VARIABLES[v][0]}",
    )
    specs = []
    cols = st.columns(max(len(chosen), 1))
    for col, name in zip(cols, chosen, strict=False):
        specs.append(
            (
                name,
                col.text_input(
                    name, value=DEFAULT_SPECS.get(name, lambda p: "")(plan), key=f"mc_spec_{name}"
                ),
            )
        )
    c = st.columns(4)
    with c[0]:
        n = int(widgets.number("Samples", 200, "mc_n", minimum=1, maximum=100000, step=50, fmt="%.0f"))
    with c[1]:
        seed = int(widgets.number("Seed", 0, "mc_seed", minimum=0, maximum=2**31 - 1, step=1, fmt="%.0f"))
    method = c[2].selectbox(
        "Method",
        ["auto", "exact", "run"],
        key="mc_method",
        help="exact: vectorised series (one step, constant properties); run: the full model per sample",
    )
    names = _step_names(plan)
    step_index = names.index(c[3].selectbox("Step whose h varies", names, key="mc_step"))
    if st.button("Run the variability study", key="mc_go", disabled=not chosen):
        st.session_state["mc_request"] = (text, tuple(specs), n, seed, step_index, method)
    req = st.session_state.get("mc_request")
    if not req or req[0] != text:
        return
    out = adapter.variability(*req, generation=state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The study refused these inputs:")
        return
    r = out.value
    st.caption(f"{r.n_samples} samples, method {r.method}, seed {r.seed}, {r.seconds:.1f} s")
    rows = []
    for metric, pct in r.percentiles.items():
        row = {"quantity": metric}
        for k, v in pct.items():
            if metric.endswith("_min") and metric.startswith("time"):
                row[k] = "not reached" if not math.isfinite(v) else u.duration_min(v)
            else:
                row[k] = "—" if not math.isfinite(v) else f"{v:.4g}"
        rows.append(row)
    st.dataframe(pd.DataFrame(rows), hide_index=True, width="stretch")
    k = st.columns(3)
    for col, label, p in (
        (k[0], "Target not reached", r.p_not_reached),
        (k[1], "Rule fails", r.p_rule_fail),
        (k[2], "Lethality short", r.p_lethality_fail),
    ):
        col.metric(label, "—" if p is None else f"{p:.1%}")
    if "time_to_target_min" in r.samples:
        times = r.samples["time_to_target_min"].dropna().to_numpy() * 60.0
        if times.size:
            st.plotly_chart(
                charts.histogram_figure(times, u, "Time to target over the samples"),
                width="stretch",
                key="mc_hist",
            )
    for note in r.notes:
        st.caption(note)


def logger(text: str, u: Units) -> None:
    lmod = adapter.studies_module("logger")
    st.subheader("Logger data and calibration")
    st.caption("Upload a probe logger file (CSV), check the column mapping, and fit the step's h to it.")
    up = st.file_uploader("Logger file (.csv, .txt)", type=["csv", "txt"], key="log_upload")
    pasted = st.text_area("…or paste the logger text", key="log_paste", height=120)
    raw = None
    if up is not None:
        try:
            raw = up.getvalue().decode("utf-8-sig")
        except UnicodeDecodeError:
            raw = up.getvalue().decode("cp1252", errors="replace")
    elif pasted.strip():
        raw = pasted
    if raw is None:
        return
    pv = adapter.logger_preview(raw)
    if not pv.ok:
        widgets.problems(pv.problems, "The logger file could not be read:")
        return
    prev = pv.value
    st.caption(
        f"{prev.n_rows} rows; separator {prev.separator!r}, decimal {prev.decimal!r}, encoding {prev.encoding}"
    )
    st.dataframe(prev.rows, hide_index=True, width="stretch")
    cols = list(prev.columns)
    m = prev.mapping
    c = st.columns(4)
    time_col = c[0].selectbox(
        "Time column", cols, index=cols.index(m.time) if m.time in cols else 0, key="log_time"
    )
    units = list(lmod.TIME_UNITS)
    time_unit = c[1].selectbox(
        "Time unit", units, index=units.index(m.time_unit) if m.time_unit in units else 0, key="log_tunit"
    )
    others = [x for x in cols if x != time_col]
    channels = c[2].multiselect(
        "Probe columns", others, default=[x for x in m.channels if x in others], key="log_channels"
    )
    tunits = list(lmod.TEMPERATURE_UNITS)
    temp_unit = c[3].selectbox(
        "Probe unit",
        tunits,
        index=tunits.index(m.temperature_unit) if m.temperature_unit in tunits else 0,
        format_func=lambda x: f"°{x}",
        key="log_cunit",
    )
    if not channels:
        st.info("Choose at least one probe column.")
        return
    channel = st.selectbox("Probe to fit", channels, key="log_fit_channel")
    if st.button("Fit h to this probe", key="log_fit"):
        st.session_state["log_request"] = (
            text,
            raw,
            (time_col, time_unit, tuple(channels), temp_unit),
            channel,
        )
    req = st.session_state.get("log_request")
    if not req or req[0] != text or req[1] != raw:
        return
    out = adapter.calibrate(*req, generation=state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The fit refused these inputs:")
        return
    cal = out.value
    k = st.columns(3)
    k[0].metric(
        "Fitted h", f"{cal.h_W_m2K:.1f} W/m²K", help=f"95 % interval {cal.h_ci95[0]:.1f}…{cal.h_ci95[1]:.1f}"
    )
    k[1].metric("h of the plan", f"{cal.plan_h_W_m2K:.1f} W/m²K")
    k[2].metric("RMS residual", f"{u.dt(cal.rmse_K):.2f} {u.temperature}")
    res = cal.residuals
    fig = charts.logger_figure(res["time_s"], res["measured_C"], cal.prediction, u, "core")
    fig.add_scatter(
        x=u.time_value(res["time_s"].to_numpy()),
        y=u.t(res["fitted_C"].to_numpy()),
        mode="lines",
        line=dict(color="#1b7837", dash="dash", width=2.5),
        name=f"fitted, h = {cal.h_W_m2K:.1f} W/m²K",
    )
    st.plotly_chart(fig, width="stretch", key="log_chart")
    for note in cal.notes:
        st.caption(note)
    source = st.text_input("Data source (trial, logger, date)", key="log_source", max_chars=120)
    if st.button("Save this h to the library as a measured value", key="log_save"):
        saved = adapter.save_measured_h(text, cal, source, generation=state.generation())
        if saved.ok:
            state.reload_library()
            st.success(
                f"Saved to {saved.value.name}: steps of this product in this machine at these settings now use it."
            )
        else:
            widgets.problems(saved.problems, "Not saved:")


def catalogue_sweep() -> None:
    st.subheader("Catalogue sweep")
    st.caption(
        "Every chosen product in every chosen suitable machine, each with its machine kind's task "
        "(chillers 74 → 5 °C under the two-stage cooling rule, freezers to −18 °C, ovens and baths to a cooked core)."
    )
    lib = adapter.library(state.generation())
    c1, c2 = st.columns(2)
    with c1:
        products = st.multiselect(
            "Products", sorted(lib.products), default=sorted(lib.products)[:3], key="sw_products"
        )
    with c2:
        machines = st.multiselect(
            "Machines", sorted(lib.equipment), default=sorted(lib.equipment)[:3], key="sw_machines"
        )
    if not st.button("Run the sweep", key="sw_go", disabled=not (products and machines)):
        return
    out = adapter.sweep(tuple(products), tuple(machines), generation=state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The sweep could not run:")
        return
    table, skipped = out.value
    st.dataframe(table, hide_index=True, use_container_width=True)
    if skipped:
        st.caption("Machines without a sweep task, skipped: " + ", ".join(skipped))
    st.download_button(
        "Download the sweep (CSV)",
        table.to_csv(index=False).encode("utf-8"),
        "sweep.csv",
        "text/csv",
        key="sw_csv",
    )
