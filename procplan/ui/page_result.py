"""Result page: temperature curves with targets and rule limits, time to target and plan time, rule check
per stage, lethality with its accumulation, freezing, energy and duty, warnings."""

from __future__ import annotations

import re

import pandas as pd
import streamlit as st

from procplan.outcomes.energy import PEAK_DUTY_LABEL
from procplan.output.report import (
    batch_label,
    format_cost,
    format_f,
    indicative_text,
    lethality_basis_text,
    log_reduction_text,
    price_text,
)
from procplan.run.drip import CAUTION as DRIP_CAUTION
from procplan.run.drip import cook_loss_text, run_bracket, yield_text
from procplan.ui import charts, load_panel, mass_panel, state, widgets
from procplan.ui.fmt import Units, yes_no


def reported_target(result):
    """The stop condition (or first target) the headline reports: the last stop of the plan."""
    oc = result.outcomes
    if oc is None or not oc.targets:
        return None
    stops = [t for t in oc.targets if t.kind == "stop"]
    return stops[-1] if stops else oc.targets[0]


def headline(result, u: Units) -> None:
    """Time to target, plan time with margin and the verdicts, as metrics at the top."""
    oc = result.outcomes
    c = st.columns(4)
    tg = reported_target(result)
    if tg is not None and tg.target.reached:
        tr = tg.target
        c[0].metric(
            f"Time to target ({tg.label or tg.point} {u.temp(tr.target_C, 1)})",
            u.duration(tr.time_s - (tr.start_s or 0.0)),
            help=f"from the start of the step '{tg.step}'",
        )
    elif tg is not None:
        c[0].metric(f"Time to target ({tg.label or tg.point} {u.temp(tg.target.target_C, 1)})", "not reached")
    else:
        c[0].metric("Process time", u.duration(float(result.history["time_s"].iloc[-1])))
    if tg is not None and tg.margin is not None:
        m = tg.margin
        c[1].metric("Plan time with margin", u.duration_min(m.plan_min), help=m.message)
    else:
        c[1].metric("Plan time with margin", "—")
    rc = oc.rule_check if oc else None
    c[2].metric(
        "Rule check",
        "—" if rc is None else ("PASS" if rc.passed else "FAIL"),
        help=None if rc is None else f"{rc.rule_name}: {rc.source}",
    )
    if tg is not None and tg.margin is not None:
        m = tg.margin
        text = f"Cycle {u.duration_min(m.cycle_min)}: " + (
            "shorter than the plan time." if m.cycle_too_short else f"{u.duration_min(m.spare_min)} to spare."
        )
        (st.error if m.cycle_too_short else st.caption)(text)
    leth = oc.lethality if oc else None
    if leth is not None:
        verdict = "" if leth.passed is None else (": PASS" if leth.passed else ": FAIL")
        c[3].metric(
            f"Lethality F{verdict}",
            f"{format_f(leth.total_F_min)} min",
            help=f"{leth.name}: {leth.target}"
            + (f" ({indicative_text(leth).strip(' []')})" if not leth.confirmed else ""),
        )
    else:
        end = result.history.iloc[-1]
        c[3].metric("Core at the end", u.temp(float(end["core_C"])))


def _targets(result, u: Units) -> None:
    rows = []
    for tg in result.outcomes.targets:
        tr = tg.target
        row = {
            "step": tg.step,
            "point": tg.label or tg.point,
            "target": u.temp(tr.target_C),
            "reached": "yes" if tr.reached else f"no (closest {u.temp(tr.closest_C)})",
            "time in step": u.duration(tr.time_s - (tr.start_s or 0.0)) if tr.reached else "—",
        }
        if tg.margin is not None:
            row.update(
                {
                    "plan time with margin": u.duration_min(tg.margin.plan_min),
                    "cycle": u.duration_min(tg.margin.cycle_min),
                    "spare": u.duration_min(tg.margin.spare_min),
                }
            )
        rows.append(row)
        if tg.margin is not None and tg.margin.cycle_too_short:
            st.error(f"{tg.step}: {tg.margin.message}", icon=":material/timer:")
    if rows:
        st.dataframe(pd.DataFrame(rows), hide_index=True, width="stretch")
    else:
        st.caption(
            "No temperature target in this plan: each step runs its set time (or to its weight or salt stop, "
            "shown below). Add a core or surface target on the Process page to get a time to target."
        )


def rule_title(name: str) -> str:
    """The rule's readable title from the library (its file name when it has none)."""
    from procplan.ui import adapter

    rule = adapter.library(state.generation()).rules.get(name)
    return (getattr(rule, "title", "") or f"Rule {name}") if rule is not None else f"Rule {name}"


def _rule(result, u: Units) -> None:
    rc = result.outcomes.rule_check
    if rc is None:
        st.caption("No cooling or holding rule chosen (Process page, Checks).")
        return
    (st.success if rc.passed else st.error)(
        f"{rule_title(rc.rule_name)} at the {rc.point}: {'PASS' if rc.passed else 'FAIL'} — {rc.source}"
    )
    rows = []
    for s in rc.stages:
        frm = "start" if s.stage.from_C is None else u.temp(s.stage.from_C, 0)
        rows.append(
            {
                "stage": s.index + 1,
                "from → to": f"{frm} → {u.temp(s.stage.to_C, 0)}",
                "allowed": u.duration_min(s.allowed_min),
                "used": u.duration_min(s.used_min),
                "margin": u.duration_min(s.margin_min),
                "margin %": "—" if s.margin_percent is None else _percent_text(s.margin_percent),
                "verdict": yes_no(s.passed),
            }
        )
    for b in rc.bands:
        rows.append(
            {
                "stage": f"band {b.index + 1}",
                "from → to": b.band.label(),
                "allowed": "",
                "used": f"inside {u.duration_min(b.inside_min)}, outside {u.duration_min(b.outside_min)}",
                "margin": u.duration_min(b.margin_min),
                "margin %": "",
                "verdict": yes_no(b.passed),
            }
        )
    if rc.budget is not None:
        rows += _budget_rows(rc.budget, u)
    st.dataframe(pd.DataFrame(rows), hide_index=True, width="stretch")
    # the reasons are sentences: as lines under the table they are read in full, not cut off in a cell
    lines = [f"Stage {s.index + 1}: {s.reason}" for s in rc.stages if s.reason]
    lines += [f"Band {b.index + 1}: {b.reason}" for b in rc.bands if b.reason]
    if rc.budget is not None:
        lines.append(f"Stability budget: {rc.budget.reason}")
    said = {line.lower() for line in lines}
    for r in (*lines, *(r for r in rc.reasons if r.lower() not in said)):
        st.caption(r)


def _percent_text(percent: float) -> str:
    """A margin in per cent: whole numbers, one decimal near zero (never '-0 %')."""
    return f"{percent:.0f} %" if abs(percent) >= 9.95 or percent == 0 else f"{percent:.1f} %"


def _budget_rows(bc, u: Units) -> list[dict]:
    """The stability budget in the rule table: each excursion with the hours left after it, then the total."""
    b = bc.budget
    rows = []
    for i, ex in enumerate(bc.excursions):
        edge = b.high_C if ex.side == "above" else b.low_C
        left = ex.remaining_above_h if ex.side == "above" else ex.remaining_below_h
        rows.append(
            {
                "stage": f"excursion {i + 1}",
                "from → to": f"{ex.side} {u.temp(edge)}, peak {u.temp(ex.peak_C)}",
                "allowed": "",
                "used": f"{u.duration(ex.start_s)} to {u.duration(ex.end_s)}",
                "margin": f"{left:.2f} h left",
                "margin %": "",
                "verdict": yes_no(left >= 0),
            }
        )
    rows.append(
        {
            "stage": "stability budget",
            "from → to": f"{u.temp(b.low_C)}…{u.temp(b.high_C)}",
            "allowed": f"{b.allowance_above_h:g} h above, {b.allowance_below_h:g} h below",
            "used": f"{bc.above_s / 3600:.2f} h above, {bc.below_s / 3600:.2f} h below",
            "margin": f"{bc.remaining_above_h:.2f} h / {bc.remaining_below_h:.2f} h left",
            "margin %": "",
            "verdict": yes_no(bc.passed),
        }
    )
    return rows


def _mean_kinetic(result, u: Units) -> None:
    """The mean kinetic temperature the plan asks for."""
    mk = result.outcomes.mean_kinetic
    if mk is None:
        return
    c = st.columns(2)
    c[0].metric(f"Mean kinetic temperature at the {mk.point}", u.temp(mk.mean_kinetic_C))
    if mk.max_C is not None:
        c[1].metric(f"Limit {u.temp(mk.max_C)}", "PASS" if mk.passed else "FAIL")
    st.caption(mk.basis)


def _thawing(result, u: Units) -> None:
    """Thawing or tempering: the time to the core target beside Plank's thawing time."""
    th = result.outcomes.thawing
    if th is None:
        return
    tr = th.from_history
    c = st.columns(2)
    c[0].metric(
        f"Core at {u.temp(th.target_C)} ({'thawed' if th.thawed else 'tempered'})",
        u.duration(tr.time_s - tr.start_s) if tr.reached else "not reached",
    )
    c[1].metric("Plank's thawing time (complete)", u.duration(th.plank_s) if th.plank_s else "—")
    st.caption(th.basis)


def _heats(result) -> bool:
    """The plan heats the product (its surface ends warmer than it started): a cook value is of interest."""
    surface = result.history["surface_C"]
    return float(surface.max()) > float(surface.iloc[0]) + 1.0


def _words(leth) -> str:
    """A lethality requirement in words: what it is about, without its qualifiers in brackets."""
    words = re.sub(r"\s*\([^)]*\)", "", leth.target or "").split(",")[0].strip()
    return words[:1].upper() + words[1:] if words else "Lethality requirement"


def _lethality_block(leth, u: Units) -> None:
    """One lethality: F, and the requirement's numbers only when there is a requirement."""
    basis = (
        lethality_basis_text(leth)
        if leth.z_C is None
        else f"reference {u.temp(leth.reference_C)}, z {u.dt(leth.z_C):g} {u.temperature}"
    )
    required = leth.required_F_min is not None
    c = st.columns(4 if required else 2)
    c[0].metric(f"F at the {leth.point}", f"{format_f(leth.total_F_min)} min", help=basis)
    if required:
        c[1].metric("Required F", f"{leth.required_F_min:g} min")
        c[2].metric("Log reduction", log_reduction_text(leth))
        reached = leth.reached
        c[3].metric(
            "Requirement reached after",
            u.duration(reached.time_s) if reached is not None and reached.reached else "not reached",
        )
    if not leth.confirmed:
        st.warning(f"{_words(leth)}{indicative_text(leth)}")
    if leth.process_fraction is not None:
        st.caption(f"{leth.process_fraction:.3g} of the required process (passes at 1).")
    st.caption(f"{leth.target[:1].upper() + leth.target[1:]} (preset {leth.name}). Source: {leth.source}")
    if leth.time_s is not None and leth.f_cumulative_min is not None:
        charts.show(charts.lethality_figure(leth, u), f"leth_{leth.name}", f"lethality-{leth.name}")


def _lethality(result, u: Units) -> None:
    """The plan's lethality requirement; the surface cook value only when one is asked or the plan heats."""
    oc = result.outcomes
    shown = [oc.lethality] if oc.lethality is not None else []
    if oc.quality is not None and (oc.lethality is not None or _heats(result)):
        shown.append(oc.quality)
    if not shown:
        return
    st.subheader("Lethality")
    for leth in shown:
        _lethality_block(leth, u)


def _freezing(result, u: Units) -> None:
    fz = result.outcomes.freezing
    if fz is None and result.outcomes.thawing is not None:
        _thawing(result, u)
        return
    if fz is None:
        tf = result.properties.initial_freezing_C
        st.caption(
            "The core does not freeze in this plan"
            + (f" (initial freezing point {u.temp(tf)})." if tf is not None else ".")
        )
        return
    fh = fz.from_history
    c = st.columns(4)
    c[0].metric(
        f"Freezing onset (core {u.temp(fz.initial_freezing_C)})",
        u.duration(fh.onset.time_s) if fh.onset.reached else "not reached",
    )
    c[1].metric(
        f"Core at {u.temp(fh.end.target_C, 0)}",
        u.duration(fh.end.time_s) if fh.end.reached else "not reached",
    )
    c[2].metric("Plank's equation", u.duration(fz.plank_s) if fz.plank_s else "—")
    c[3].metric("Pham's method", u.duration(fz.pham.time_s) if fz.pham else "—")
    # onset and end count from the plan's start; Plank and Pham are durations of the freezing step itself
    sr = next((s for s in result.steps if min(s.surface.medium_C) < fz.initial_freezing_C), None)
    if sr is not None and sr.index > 0 and fh.end.reached:
        st.caption(
            f"Onset and end count from the plan's start; the freezing step ({sr.name}) starts at "
            f"{u.duration(sr.start_s)} and takes the core to {u.temp(fh.end.target_C, 0)} in "
            f"{u.duration(fh.end.time_s - sr.start_s)}, the time to set beside Plank's and Pham's."
        )
    st.caption(fz.basis)


def _energy(result, u: Units) -> None:
    oc = result.outcomes
    en = oc.energy
    c = st.columns(5)
    batch = batch_label(result)
    c[0].metric(
        "Heat removed per batch", f"{en.heat_removed_J_per_batch / 3.6e6:.2f} kWh", help=f"one batch: {batch}"
    )
    c[1].metric(
        "Heat added per batch", f"{en.heat_added_J_per_batch / 3.6e6:.2f} kWh", help=f"one batch: {batch}"
    )
    c[2].metric(
        "Peak duty",
        f"{en.peak_duty_kW_per_batch:.1f} kW",
        help=f"{PEAK_DUTY_LABEL}, the minute from {u.duration(en.peak_time_s)}; a plant's capacity is judged against this sustained load",
    )
    c[3].metric(
        "Electricity cost, batch", format_cost(oc.cost_per_batch, oc.price), help=price_text(oc.price)
    )
    c[4].metric(
        "Energy balance", f"{oc.energy_balance:.2%}", help="history heat flow against the enthalpy change"
    )
    st.caption(f"Piece mass {result.piece_mass_kg:.3f} kg.")
    rows = []
    for se in oc.refrigeration:
        r = se.refrigeration
        rows.append(
            {
                "step": se.step,
                "heat removed [kWh]": round(se.heat_removed_J_per_batch / 3.6e6, 3),
                "heat added [kWh]": round(se.heat_added_J_per_batch / 3.6e6, 3),
                "peak duty [kW]": round(se.peak_duty_kW, 1),
                "mean duty [kW]": round(float(se.mean_duty_kW), 2),
                "COP": "—" if r is None else f"{r.cop:.2f} (Carnot {r.cop_carnot:.2f})",
                # text throughout: a column of numbers and dashes does not convert to one Arrow type
                "electricity [kWh]": "—" if r is None else f"{r.electricity_kWh:.3f}",
                "cost": "—" if r is None else format_cost(r.cost, oc.price),
                "basis": se.basis,
            }
        )
    if rows:
        # the basis is a sentence: read in full under the table rather than cut off in a cell
        st.dataframe(pd.DataFrame(rows).drop(columns="basis"), hide_index=True, width="stretch")
        for row in rows:
            st.caption(f"{row['step']}: {row['basis']}")


def _weight_loss(result) -> None:
    """Moisture lost from an unwrapped product's surface, per step, as the library computes it, and for unwrapped
    meat the bracket of its cook loss and yield."""
    oc = result.outcomes
    losses = [(f"{name}: evaporated", pct) for name, pct in oc.weight_loss_percent]
    bracket = run_bracket(oc)
    if not losses and bracket is None:
        return
    st.subheader("Weight loss")
    mass = result.piece_mass_kg
    cols = st.columns(min(max(len(losses), 1), 4))
    for j, (label, pct) in enumerate(losses):
        cols[j % len(cols)].metric(
            label,
            f"{pct:.2f} %",
            help=f"about {pct / 100.0 * mass * 1000.0:.0f} g of a {mass:.3f} kg piece",
        )
    if bracket is not None:
        lo, hi, y_lo, y_hi = bracket
        text = cook_loss_text(lo, hi)
        st.markdown(f"{text[:1].upper()}{text[1:]}; {yield_text(y_lo, y_hi)} of the starting mass.")
        st.caption(DRIP_CAUTION)
    if losses:
        st.caption(
            "Evaporated: moisture leaving the unwrapped surface, in % of the piece's mass at the step's start."
        )


def render_result(result, u: Units, *, stale: bool = False) -> None:
    if stale:
        st.info(
            "Showing the last plan that could be calculated; correct the inputs named above (Product or Process page) to update it.",
            icon=":material/history:",
        )
    headline(result, u)
    _temperature_chart(result, u)
    st.subheader("Targets and plan time")
    _targets(result, u)
    st.subheader("Rule check")
    _rule(result, u)
    _mean_kinetic(result, u)
    _lethality(result, u)
    st.subheader("Thawing" if result.outcomes.thawing is not None else "Freezing")
    _freezing(result, u)
    st.subheader("Energy and refrigeration")
    _energy(result, u)
    _weight_loss(result)
    mass_panel.show(result, u)
    load_panel.machine_load(result, u)
    if result.warnings:
        st.subheader("Warnings")
        for w in result.warnings:
            st.warning(w, icon=":material/error:")


def _temperature_chart(result, u: Units) -> None:
    """The plan's temperatures; when one step is much shorter than the plan, the chart can show that step alone
    (its time axis then spans the step, so a short freeze after a long brine is readable)."""
    fig = charts.temperature_figure(result, u, result.plan.title)
    total_s = max(float(result.steps[-1].end_s), 1.0) if result.steps else 1.0
    if len(result.steps) > 1 and min(sr.end_s - sr.start_s for sr in result.steps) < 0.2 * total_s:
        names = ["the whole plan", *(f"step {sr.index + 1}: {sr.name}" for sr in result.steps)]
        pick = st.radio("Chart shows", names, horizontal=True, key="result_chart_span")
        if pick != names[0]:
            sr = result.steps[names.index(pick) - 1]
            spare_s = 0.02 * (sr.end_s - sr.start_s)
            fig.update_xaxes(
                range=[
                    float(u.time_value(max(sr.start_s - spare_s, 0.0))),
                    float(u.time_value(sr.end_s + spare_s)),
                ]
            )
    charts.show(fig, "temperature_chart", "temperatures")


def render() -> None:
    from procplan.ui import adapter

    st.header("Result")
    u = state.units()
    text, parsed = state.current()
    stale = False
    if not parsed.ok:
        widgets.problems(parsed.problems, "The current plan has invalid input:")
        text, stale = state.last_good(), True
    out = adapter.run(text, state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The calculation refused this plan:")
        if stale:
            return
        out = adapter.run(state.last_good(), state.generation())
        stale = True
        if not out.ok:
            return
    render_result(out.value, u, stale=stale)
