"""Compare & studies page: scenarios overlaid with a comparison table, required-setting finder, variability,
logger import and calibration."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from procplan.outcomes.energy import PEAK_DUTY_LABEL
from procplan.output.report import format_f
from procplan.ui import adapter, adapter_outputs, charts, load_panel, state, trial_panel, widgets
from procplan.ui.fmt import Units


def scenario_row(label: str, result, u: Units) -> dict:
    """One comparison-table row read from a result's outcomes (no calculation here)."""
    oc = result.outcomes
    from procplan.ui.page_result import reported_target

    tg = reported_target(result)
    row = {"scenario": label}
    if tg is not None:
        tr = tg.target
        row["time to target"] = u.duration(tr.time_s - (tr.start_s or 0.0)) if tr.reached else "not reached"
        row["plan time"] = u.duration_min(tg.margin.plan_min) if tg.margin else "—"
    row["core at end"] = u.temp(float(result.history["core_C"].iloc[-1]))
    row["rule"] = "—" if oc.rule_check is None else ("PASS" if oc.rule_check.passed else "FAIL")
    row["lethality F [min]"] = "—" if oc.lethality is None else format_f(oc.lethality.total_F_min)
    row["heat removed [kWh/batch]"] = round(oc.energy.heat_removed_J_per_batch / 3.6e6, 2)
    row["heat added [kWh/batch]"] = round(oc.energy.heat_added_J_per_batch / 3.6e6, 2)
    row[f"{PEAK_DUTY_LABEL} [kW]"] = round(oc.energy.peak_duty_kW_per_batch, 1)
    return row


def comparison_view(frame: pd.DataFrame) -> pd.DataFrame:
    """One column per scenario, one row per figure: fits the page for any number of figures."""
    out = frame.set_index("scenario").T.astype(str)
    out.index.name = "figure"
    out.columns.name = None
    return out


def differences_view(diff: pd.DataFrame, u: Units) -> pd.DataFrame:
    """The differing inputs as shown: temperatures in the display unit, the input as a column."""
    out = diff.copy()
    machines = adapter.library(state.generation()).equipment
    for label in out.index:
        if label.endswith(": equipment"):
            out.loc[label] = [machines[v].name if v in machines else v for v in out.loc[label]]
            out = out.rename(index={label: label.replace(": equipment", ": machine")})
        if "[°C]" in label and u.fahrenheit:
            out.loc[label] = [
                round(float(u.t(v)), 1) if isinstance(v, (int, float)) else v for v in out.loc[label]
            ]
            out = out.rename(index={label: label.replace("[°C]", f"[{u.temperature}]")})
    out.index.name = "input"
    return out.astype(str)


def _scenarios(text: str, ok: bool, u: Units) -> None:
    st.subheader("Scenarios")
    scen: list[tuple[str, str]] = st.session_state[state.SCENARIOS]
    c1, c2 = st.columns([3, 1], vertical_alignment="bottom")
    label = c1.text_input("Scenario name", value=f"scenario {len(scen) + 1}", key=f"scen_name_{len(scen)}")
    if c2.button("Keep as a scenario", key="scen_add", disabled=not ok):
        scen.append((label.strip() or f"scenario {len(scen) + 1}", text))
        st.rerun()
    if not scen:
        st.caption(
            "Keep the current plan as a scenario, change settings on the Process page, keep it again: "
            "the scenarios are then overlaid here with the current plan."
        )
        return
    labels = [n for n, _ in scen]
    texts = [t for _, t in scen]
    if ok:
        labels.append("current plan")
        texts.append(text)
    # unique labels, as the comparison needs
    seen: dict[str, int] = {}
    for j, n in enumerate(labels):
        seen[n] = seen.get(n, 0) + 1
        if seen[n] > 1:
            labels[j] = f"{n} ({seen[n]})"
    point = st.radio("Point", ["core", "surface", "mean"], horizontal=True, key="scen_point")
    compare = adapter.studies_module("compare")
    ranks = {}
    comparison = None
    if compare is not None and hasattr(compare, "compare_plans"):
        criteria = ["time", "energy", "margin"]
        criterion = st.radio("Rank by", criteria, horizontal=True, key="scen_criterion")
        out = adapter.compare(tuple(texts), tuple(labels), criterion, state.generation())
        if not out.ok:
            widgets.problems(out.problems, "The comparison refused these scenarios:")
            return
        comparison = out.value
        runs = list(out.value.results.items())
        ranks = {n: int(r) for n, r in out.value.table["rank"].items()}
        st.caption(f"Ranked by {criterion}; best: {out.value.best}.")
    else:
        runs = []
        for name, t in zip(labels, texts, strict=True):
            res = adapter.run(t, state.generation())
            if res.ok:
                runs.append((name, res.value))
    charts.show(charts.overlay_figure(runs, u, point), "scen_chart", "scenarios")
    rows = []
    for n, r in runs:
        row = scenario_row(n, r, u)
        if ranks:
            row = {"rank": ranks.get(n), **row}
        rows.append(row)
    frame = pd.DataFrame(rows)
    if ranks:
        frame = frame.sort_values("rank")
    st.dataframe(
        comparison_view(frame),
        width="stretch",
        column_config={"_index": st.column_config.TextColumn("figure", width="large")},
    )
    diff = adapter_outputs.differences(tuple(texts), tuple(labels), state.generation())
    if not diff.empty:
        st.markdown("**What differs between the scenarios**")
        st.dataframe(differences_view(diff, u), width="stretch")
    if comparison is not None:
        c1, c2, _ = st.columns([1, 1, 2])
        c1.download_button(
            "Download the comparison (Excel)",
            adapter_outputs.deferred(lambda: adapter_outputs.comparison_xlsx(comparison, diff)),
            file_name="comparison.xlsx",
            mime=adapter_outputs.XLSX_MIME,
            key="scen_xlsx",
        )
        c2.download_button(
            "Download the comparison (CSV)",
            adapter_outputs.comparison_csv(comparison),
            file_name="comparison.csv",
            mime="text/csv",
            key="scen_csv",
        )
    drop = st.selectbox("Remove a scenario", ["—", *[n for n, _ in scen]], key="scen_drop")
    if drop != "—" and st.button("Remove", key="scen_drop_btn"):
        st.session_state[state.SCENARIOS] = [s for s in scen if s[0] != drop]
        st.rerun()


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
    from procplan.ui import studies_panels, sweep_panel

    studies_panels.required_setting(text, u)
    st.divider()
    load_panel.largest_batch(text, u)
    st.divider()
    studies_panels.variability(text, u)
    st.divider()
    studies_panels.logger(text, u)
    st.divider()
    trial_panel.render(text, u)
    st.divider()
    sweep_panel.catalogue_sweep()
