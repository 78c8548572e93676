"""Study panels of the Compare & studies page: required setting, variability, logger data and calibration."""

from __future__ import annotations

import math

import pandas as pd
import streamlit as st

from procplan.errors import InvalidInputError
from procplan.output.report import format_f
from procplan.ui import adapter, adapter_outputs, charts, state, study_progress, widgets
from procplan.ui.fmt import Units, round_to


def _step_names(plan) -> list[str]:
    return [f"{i + 1}: {s.name}" for i, s in enumerate(plan.steps)]


#: Readable names of the inverse study's parameters and goals, and the step a machine can be set in.
PARAMETER_LABELS = {
    "medium_C": "Medium temperature",
    "speed_m_s": "Air or liquid speed",
    "h_W_m2K": "Surface coefficient h",
    "dimension_mm": "Product size (controlling dimension)",
    "hold_min": "Step time",
}
PARAMETER_STEPS = {"°C": 0.5, "m/s": 0.1, "W/m²K": 1.0, "mm": 1.0, "min": 1.0}
GOAL_LABELS = {
    "time": "Stop temperature in time",
    "rule": "Cooling rule passes",
    "lethality": "Lethality met",
}


def _parameter_label(p: str, mod) -> str:
    return PARAMETER_LABELS.get(p) or mod.PARAMETERS[p].description.capitalize()


def settable(value: float, unit: str, passes: str, u: Units) -> tuple[float, str]:
    """The answer rounded to a step a machine can be set to, on the side that meets the goal; and its text."""
    direction = {"above": "up", "below": "down"}.get(passes, "nearest")
    if unit == "°C":
        step = 1.0 if u.fahrenheit else PARAMETER_STEPS["°C"]
        shown = round_to(float(u.t(value)), step, direction)
        return u.t_in(shown), f"{shown:.1f} {u.temperature}"
    if unit == "min":
        minutes = round_to(value, PARAMETER_STEPS["min"], direction)
        return minutes, u.duration_min(minutes)
    step = PARAMETER_STEPS.get(unit, 0.1)
    v = round_to(value, step, direction)
    return v, f"{v:.{1 if step < 1 else 0}f} {unit}"


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
        format_func=lambda p: _parameter_label(p, mod),
        help="; ".join(f"{_parameter_label(p, mod)}: {mod.PARAMETERS[p].description}" for p in params),
    )
    goals = list(mod.GOALS)
    goal = c[2].selectbox(
        "Goal",
        goals,
        key="rs_goal",
        format_func=lambda g: GOAL_LABELS.get(g, g),
        help="; ".join(f"{GOAL_LABELS.get(g, g)}: {mod.GOALS[g].description}" for g in goals),
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
    name = _parameter_label(r.parameter, mod)
    k = st.columns(3)
    if r.value is not None and r.achievable:
        _, shown_text = settable(r.value, unit, r.passes, u)
    else:
        shown_text = "not achievable"
    k[0].metric(f"Required {name.lower()}", shown_text)
    k[1].metric("Meets the goal", {"above": "at or above", "below": "at or below"}.get(r.passes, r.passes))
    k[2].metric("Confirmed by a forward run", "yes" if r.confirmed else "no")
    if r.value is not None and r.achievable:
        st.caption(
            f"Rounded to a setting the machine can take, on the side that meets the goal "
            f"(the boundary itself: {_parameter_value(r.value, unit, u, 2)})."
        )
    (st.success if r.achievable else st.warning)(r.message)
    for note in r.notes:
        (st.warning if "would freeze the surface" in note else st.caption)(note)
    shown_unit = u.temperature if unit == "°C" else u.time if unit == "min" else unit
    ev = pd.DataFrame(
        {
            f"{name} [{shown_unit}]": [_parameter_value(v, unit, u, 2, bare=True) for v, _ in r.evaluations],
            "Goal measure (≥ 0 meets)": [round(float(m), 2) for _, m in r.evaluations],
        }
    )
    with st.expander(f"{len(ev)} forward runs"):
        st.dataframe(ev, hide_index=True)


def _parameter_value(value: float, unit: str, u: Units, digits: int, bare: bool = False):
    """A parameter value in the display unit (temperatures and times converted)."""
    if unit == "°C":
        v = round(float(u.t(value)), digits)
        return v if bare else f"{v:.{digits}f} {u.temperature}"
    if unit == "min":
        v = round(u.minutes_to_shown(value), digits)
        return v if bare else f"{v:.{digits}f} {u.time}"
    v = round(float(value), digits)
    return v if bare else f"{v:.{digits}f} {unit}"


#: Inputs of the variability study: readable name, how they are shown ("temperature", "percent" of a
#: fraction or factor, or "plain" library units) and the default distribution (kind, params, bounds).
VARIABLE_VIEW = {
    "start_C": ("Start temperature", "temperature"),
    "size_factor": ("Product size, % of the plan's", "percent"),
    "h_W_m2K": ("Surface coefficient h [W/m²K]", "plain"),
    "h_factor": ("Surface coefficient, % of the plan's", "percent"),
    "water_fraction": ("Water content, % by mass", "percent"),
    "salt_D_factor": ("Salt diffusivity, % of the published value", "percent"),
    "brine_percent": ("Brine strength [% salt]", "plain"),
}
DEFAULT_DISTRIBUTIONS = {
    "start_C": lambda plan: ("normal", (plan.start_temperature_C, 2.0), None),
    "size_factor": lambda plan: ("normal", (1.0, 0.03), (0.9, 1.1)),
    "h_W_m2K": lambda plan: ("lognormal", (20.0, 0.2), None),
    "h_factor": lambda plan: ("uniform", (0.8, 1.2), None),
    "water_fraction": lambda plan: ("normal", (dict(plan.product.composition).get("water", 0.7), 0.01), None),
    "salt_D_factor": lambda plan: ("lognormal", (1.0, 0.25), None),
    "brine_percent": lambda plan: ("normal", (_brine_percent(plan), 0.5), None),
}
KIND_LABELS = {
    "normal": "normal (mean, standard deviation)",
    "uniform": "uniform (between two limits)",
    "triangular": "triangular (lowest, most likely, highest)",
    "lognormal": "log-normal (median, spread)",
}
#: The inputs each kind asks for: (label, "value" in the variable's unit, "spread" of it, or "ratio").
KIND_FIELDS = {
    "normal": (("Mean", "value"), ("Standard deviation", "spread")),
    "uniform": (("Lowest", "value"), ("Highest", "value")),
    "triangular": (("Lowest", "value"), ("Most likely", "value"), ("Highest", "value")),
    "lognormal": (("Median", "value"), ("Spread of the logarithm", "ratio")),
}
#: How the study ran its samples, as the caption says it.
METHOD_TEXT = {"exact": "exact series", "batch": "batched full model", "run": "full model per sample"}
QUANTITY_LABELS = {
    "time_to_target_min": "Time to target",
    "lethality_F_min": "Lethality F",
    "salt_core_percent": "Salt at the core, end of brining (low tail)",
    "salt_mean_percent": "Mean salt, end of brining (low tail)",
    "salt_time_min": "Time to the salt stop",
}


def _brine_percent(plan) -> float:
    """The brine strength of the plan's first brining step [%] (10 % when none is given)."""
    fractions = [s.brine.brine_fraction for s in plan.steps if s.brine is not None and s.brine.brine_fraction]
    return 100.0 * fractions[0] if fractions else 10.0


def _centre_spread(kind: str, params) -> tuple[float, float]:
    if kind == "normal":
        return params[0], params[1]
    if kind == "uniform":
        return (params[0] + params[1]) / 2, (params[1] - params[0]) / 4
    if kind == "triangular":
        return params[1], (params[2] - params[0]) / 4
    return params[0], params[0] * params[1]


def _params_for(kind: str, default) -> tuple[float, ...]:
    """Start values of a kind's inputs from the default distribution (its own when the kinds match)."""
    d_kind, d_params, _ = default
    if kind == d_kind:
        return tuple(d_params)
    c, sp = _centre_spread(d_kind, d_params)
    return {
        "normal": (c, sp),
        "uniform": (c - 2 * sp, c + 2 * sp),
        "triangular": (c - 2 * sp, c, c + 2 * sp),
        "lognormal": (c, sp / c if c else 0.1),
    }[kind]


def _view(view: str, u: Units):
    """(library → shown, shown → library, spread library → shown, unit text, step, spread step)."""
    if view == "temperature":
        return u.t, u.t_in, u.dt, f" [{u.temperature}]", 0.5, 0.1
    if view == "percent":
        return (lambda v: v * 100.0), (lambda v: v / 100.0), (lambda v: v * 100.0), " [%]", 1.0, 0.5
    return (lambda v: v), (lambda v: v), (lambda v: v), "", 1.0, 0.5


def distribution_input(name: str, plan, u: Units) -> str:
    """Widgets for one varying input: distribution, its parameters and optional limits → 'kind:p,…@lo,hi'."""
    from procplan.studies.distributions import DISTRIBUTIONS

    label, view = VARIABLE_VIEW.get(name, (name.replace("_", " "), "plain"))
    default = DEFAULT_DISTRIBUTIONS.get(name, lambda p: ("normal", (1.0, 0.1), None))(plan)
    to_shown, to_lib, spread_shown, unit, step, spread_step = _view(view, u)
    kinds = [k for k in KIND_LABELS if k in DISTRIBUTIONS]
    st.markdown(f"**{label}**")
    kind = st.selectbox(
        "Distribution",
        kinds,
        index=kinds.index(default[0]),
        format_func=KIND_LABELS.get,
        key=f"mc_kind_{name}_{u.temperature}",
    )
    values = []
    for (field_label, role), start in zip(KIND_FIELDS[kind], _params_for(kind, default), strict=True):
        if role == "ratio":
            shown = widgets.number(
                field_label, start, f"mc_{name}_{kind}_{field_label}", minimum=0.001, step=0.01, fmt="%.2f",
                help="Standard deviation of the natural logarithm (0.2 is about ±20 %).",
            )  # fmt: skip
            values.append(shown)
            continue
        conv = spread_shown if role == "spread" else to_shown
        shown = widgets.number(
            field_label + unit,
            round(float(conv(start)), 3),
            f"mc_{name}_{kind}_{field_label}",
            minimum=0.0 if role == "spread" else None,
            step=spread_step if role == "spread" else step,
            fmt="%.1f",
        )
        # a spread converts by the scale alone (no offset): divide by the scale of one library unit
        values.append(shown / spread_shown(1.0) if role == "spread" else to_lib(shown))
    spec = f"{kind}:" + ",".join(repr(round(float(v), 9)) for v in values)
    if kind in ("normal", "lognormal"):
        limits = default[2] or (None, None)
        if st.checkbox("Cut off outside limits", value=default[2] is not None, key=f"mc_cut_{name}_{kind}"):
            c, sp = _centre_spread(kind, values if kind == "normal" else (values[0], values[1]))
            lo_lib = limits[0] if limits[0] is not None else c - 3 * sp
            hi_lib = limits[1] if limits[1] is not None else c + 3 * sp
            lo = widgets.number(
                "Lowest" + unit, round(float(to_shown(lo_lib)), 3), f"mc_{name}_lo", step=step, fmt="%.1f"
            )
            hi = widgets.number(
                "Highest" + unit, round(float(to_shown(hi_lib)), 3), f"mc_{name}_hi", step=step, fmt="%.1f"
            )
            spec += f"@{round(float(to_lib(lo)), 9)!r},{round(float(to_lib(hi)), 9)!r}"
    with st.expander("Type the distribution instead"):
        typed = st.text_input(
            "Distribution as text, in library units",
            value="",
            key=f"mc_spec_{name}",
            placeholder=spec,
            help="kind:parameters, optionally @lowest,highest, e.g. normal:74,2@68,80 (°C, W/m²K, fractions).",
        )
    return typed.strip() or spec


def variability(text: str, u: Units) -> None:
    mod = adapter.studies_module("variability")
    st.subheader("Variability")
    st.caption(
        "Choose the inputs that vary between batches and how they are spread; the study samples them and "
        "shows how far the time to target and the checks move."
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
        format_func=lambda v: VARIABLE_VIEW.get(v, (v.replace("_", " "),))[0],
    )
    specs = []
    cols = st.columns(max(min(len(chosen), 3), 1))
    for j, name in enumerate(chosen):
        with cols[j % len(cols)], st.container(border=True):
            specs.append((name, distribution_input(name, plan, u)))
    c = st.columns(4)
    with c[0]:
        n = int(widgets.number("Samples", 200, "mc_n", minimum=1, maximum=100000, step=50, fmt="%.0f"))
    with c[1]:
        seed = int(widgets.number("Seed", 0, "mc_seed", minimum=0, maximum=2**31 - 1, step=1, fmt="%.0f"))
    method = c[2].selectbox(
        "Method",
        ["auto", "exact", "run"],
        key="mc_method",
        format_func={"auto": "automatic", "exact": "exact series (fast)", "run": "full model per sample"}.get,
        help="exact: vectorised series (one step, constant properties); run: the full model per sample",
    )
    names = _step_names(plan)
    step_index = names.index(c[3].selectbox("Step whose h varies", names, key="mc_step"))
    if st.button("Run the variability study", key="mc_go", disabled=not chosen):
        st.session_state["mc_request"] = (text, tuple(specs), n, seed, step_index, method)
    req = st.session_state.get("mc_request")
    if not req or req[0] != text:
        return
    if method == "exact":
        out = adapter.variability(*req, generation=state.generation())
    else:
        out = _variability_with_progress(req, plan, mod)
        if out is None:
            return
    if not out.ok:
        widgets.problems(out.problems, "The study refused these inputs:")
        return
    r = out.value
    method_text = METHOD_TEXT.get(r.method, r.method)
    st.caption(f"{r.n_samples} samples, {method_text}, seed {r.seed}, {r.seconds:.1f} s")
    rows = []
    for metric, pct in r.percentiles.items():
        row = {"quantity": QUANTITY_LABELS.get(metric, metric.replace("_", " "))}
        for k, v in pct.items():
            if metric in ("time_to_target_min", "salt_time_min"):
                row[k] = "not reached" if not math.isfinite(v) else u.duration_min(v)
            elif metric == "lethality_F_min":
                row[k] = "—" if not math.isfinite(v) else f"{format_f(v)} min"
            elif metric.endswith("_percent"):
                row[k] = "—" if not math.isfinite(v) else f"{v:.2f} %"
            else:
                row[k] = "—" if not math.isfinite(v) else f"{v:.3g}"
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
            charts.show(
                charts.histogram_figure(times, u, "Time to target over the samples"), "mc_hist", "variability"
            )
    for note in r.notes:
        st.caption(note)
    adapter_outputs.xlsx_button("Download the study (Excel)", lambda: adapter_outputs.variability_xlsx(r), "variability", "mc_xlsx")  # fmt: skip


def _variability_with_progress(req, plan, mod):
    """The study of ``req`` with its time estimate, a progress bar and a stop button (None when stopped); the
    result is kept for this session, so other widgets do not run it again."""
    kept = st.session_state.get("mc_result")
    if kept is not None and kept[0] == req:
        return kept[1]
    runner = adapter.studies_module("runner")
    lib = adapter.library(state.generation())
    dists = {}
    try:
        for name, spec in req[1]:
            dists[name] = mod.parse_distribution(spec)
        per_run = runner.time_one_run(plan, lib)
    except InvalidInputError as exc:
        return adapter.Outcome(problems=adapter.problems_of(exc))
    n = req[2]
    workers = runner.default_workers()
    st.caption(
        f"Estimated time: up to {_seconds_text(runner.estimate_study_s(per_run, n, workers))} "
        f"(one run of this plan takes {per_run:.2g} s; {n} samples, {workers} cores; much less when the "
        f"exact series applies)"
    )

    def run(progress):
        try:
            return adapter.Outcome(
                mod.monte_carlo(
                    plan,
                    dists,
                    n_samples=n,
                    seed=req[3],
                    library=lib,
                    step_index=req[4],
                    method=req[5],
                    corners=False,
                    progress=progress,
                )
            )
        except InvalidInputError as exc:
            return adapter.Outcome(problems=adapter.problems_of(exc))

    return study_progress.run_kept(
        "mc",
        req,
        run,
        what="samples",
        stop_label="Stop the study",
        stopped_text="The study was stopped. Change the inputs or run it again.",
    )


def _seconds_text(seconds: float) -> str:
    return f"{seconds:.0f} s" if seconds < 120 else f"{seconds / 60:.0f} min"


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
    charts.show(fig, "log_chart", "logger-fit")
    for note in cal.notes:
        st.caption(note)
    adapter_outputs.xlsx_button("Download the fit and residuals (Excel)", lambda: adapter_outputs.calibration_xlsx(cal), "calibration", "log_xlsx")  # fmt: skip
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


#: The sweep table's columns as the planner reads them: (label, kind) with kind "T" a temperature,
#: "t" a time in minutes, or a number format; columns not listed keep a readable form of their name.
SWEEP_COLUMNS = {
    "product": ("Product", None),
    "equipment": ("Machine", None),
    "kind": ("Machine kind", None),
    "process": ("Process", None),
    "start_C": ("Start", "T"),
    "target_step": ("Target step", None),
    "target_C": ("Target", "T"),
    "target_reached": ("Target reached", None),
    "time_to_target_min": ("Time to target", "t"),
    "plan_time_min": ("Plan time with margin", "t"),
    "total_time_min": ("Total time", "t"),
    "end_core_C": ("Core at the end", "T"),
    "rule": ("Rule", None),
    "rule_passed": ("Rule passed", None),
    "rule_margin_min": ("Rule margin", "t"),
    "lethality": ("Lethality requirement", None),
    "lethality_F_min": ("Lethality F [min]", "%.3g"),
    "lethality_passed": ("Lethality passed", None),
    "energy_removed_kWh": ("Heat removed [kWh]", "%.3f"),
    "energy_added_kWh": ("Heat added [kWh]", "%.3f"),
    "peak_duty_kW": ("Peak duty [kW]", "%.2f"),
    "electricity_kWh": ("Electricity [kWh]", "%.3f"),
    "energy_cost": ("Energy cost", "%.2f"),
    "pieces": ("Pieces per batch", "%d"),
    "capacity_shortfall_kW": ("Capacity shortfall [kW]", "%.1f"),
    "salt_core_percent": ("Salt at the core [%]", "%.2f"),
    "salt_mean_percent": ("Mean salt [%]", "%.2f"),
    "salt_time_min": ("Time to the salt stop", "t"),
    "plant_limit_min": ("Plant at its limit", "t"),
    "weight_loss_percent": ("Weight loss by evaporation [%]", "%.1f"),
    "yield_percent": ("Yield, evaporation only [%]", "%.1f"),
    "cook_loss_upper_percent": ("Cook loss, upper: all the juice drained [%]", "%.1f"),
    "yield_lower_percent": ("Yield, lower: all the juice drained [%]", "%.1f"),
    "solvers": ("Solver", None),
    "warnings": ("Warnings", None),
    "error": ("Error", None),
}


def sweep_columns(u: Units) -> dict[str, str]:
    """Column name of the library's sweep table → the label shown (with the display unit)."""
    out = {}
    for col, (label, kind) in SWEEP_COLUMNS.items():
        unit = f" [{u.temperature}]" if kind == "T" else f" [{u.time}]" if kind == "t" else ""
        out[col] = label + unit
    return out


def sweep_view(table: pd.DataFrame, u: Units) -> tuple[pd.DataFrame, dict]:
    """The sweep table in display units with readable headers, and its column formats (values unrounded)."""
    labels = sweep_columns(u)
    frame = table.copy()
    if "kind" in frame:
        frame["kind"] = (
            frame["kind"].astype(str).str.replace("-", " ")
        )  # "blast-chiller" reads "blast chiller"
    config = {}
    for col in frame.columns:
        label, kind = SWEEP_COLUMNS.get(col, (col.replace("_", " "), None))
        if kind == "T":
            frame[col] = u.t(frame[col].to_numpy(dtype=float))
            config[labels[col]] = st.column_config.NumberColumn(format="%.1f")
        elif kind == "t":
            frame[col] = u.time_value(frame[col].to_numpy(dtype=float) * 60.0)
            config[labels[col]] = st.column_config.NumberColumn(format="%.0f" if u.time == "min" else "%.2f")
        elif kind:
            config[labels[col]] = st.column_config.NumberColumn(format=kind)
    frame = frame.rename(columns={c: labels.get(c, c.replace("_", " ")) for c in frame.columns})
    return frame, config
