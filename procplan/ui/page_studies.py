"""Compare & studies page: scenarios overlaid with a comparison table, required-setting finder, variability,
logger import and calibration. Study sections use procplan.studies when this build has it."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from procplan.report import format_f
from procplan.ui import adapter, charts, state, widgets
from procplan.ui.fmt import Units

NOT_AVAILABLE = "not available in this build"


def scenario_row(label: str, result, u: Units) -> dict:
    """One comparison-table row read from a result's outcomes (no calculation here)."""
    oc = result.outcomes
    tg = oc.targets[0] if oc.targets else None
    row = {"scenario": label}
    if tg is not None:
        tr = tg.target
        row["time to target"] = u.duration(tr.time_s - (tr.start_s or 0.0)) if tr.reached else "not reached"
        row["plan time"] = u.duration_min(tg.margin.plan_min) if tg.margin else "—"
    row["core at end"] = u.temp(float(result.history["core_C"].iloc[-1]))
    row["rule"] = "—" if oc.rule_check is None else ("PASS" if oc.rule_check.passed else "FAIL")
    row["lethality F [min]"] = "—" if oc.lethality is None else format_f(oc.lethality.total_F_min)
    row["heat removed [kWh/batch]"] = round(oc.energy.heat_removed_J_per_batch / 3.6e6, 2)
    row["peak duty [kW]"] = round(oc.energy.peak_duty_kW_per_batch, 1)
    return row


def _scenarios(text: str, ok: bool, u: Units) -> None:
    st.subheader("Scenarios")
    scen: list[tuple[str, str]] = st.session_state[state.SCENARIOS]
    c1, c2 = st.columns([3, 1])
    label = c1.text_input("Scenario name", value=f"scenario {len(scen) + 1}", key=f"scen_name_{len(scen)}")
    if c2.button("Keep the current plan as a scenario", key="scen_add", disabled=not ok):
        scen.append((label.strip() or f"scenario {len(scen) + 1}", text))
        st.rerun()
    if not scen:
        st.caption(
            "Keep the current plan as a scenario, change settings on the Process page, keep it again: "
            "the scenarios are then overlaid here with the current plan."
        )
        return
    runs = []
    for name, t in scen:
        out = adapter.run(t, state.generation())
        if out.ok:
            runs.append((name, out.value))
    if ok:
        cur = adapter.run(text, state.generation())
        if cur.ok:
            runs.append(("current plan", cur.value))
    point = st.radio("Point", ["core", "surface", "mean"], horizontal=True, key="scen_point")
    st.plotly_chart(charts.overlay_figure(runs, u, point), width="stretch", key="scen_chart")
    compare = adapter.studies_module("compare")
    if compare is not None and hasattr(compare, "compare_plans"):
        st.caption("Table from procplan.studies.compare_plans.")
    st.dataframe(pd.DataFrame([scenario_row(n, r, u) for n, r in runs]), hide_index=True, width="stretch")
    drop = st.selectbox("Remove a scenario", ["—", *[n for n, _ in scen]], key="scen_drop")
    if drop != "—" and st.button("Remove", key="scen_drop_btn"):
        st.session_state[state.SCENARIOS] = [s for s in scen if s[0] != drop]
        st.rerun()


def _missing(title: str, module: str) -> None:
    st.subheader(title)
    st.info(f"{title}: {NOT_AVAILABLE} (needs procplan.studies.{module}).", icon="🧩")


def render() -> None:
    st.header("Compare & studies")
    u = state.units()
    text, parsed = state.current()
    if not parsed.ok:
        widgets.problems(
            parsed.problems, "The current plan has invalid input; studies use the last valid plan:"
        )
        text = state.last_good()
    _scenarios(text, parsed.ok, u)
    st.divider()
    from procplan.ui import studies_panels

    studies_panels.required_setting(text, u)
    st.divider()
    studies_panels.variability(text, u)
    st.divider()
    studies_panels.logger(text, u)
