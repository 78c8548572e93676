"""The Result page's mass transfer: the solute taken up in brining and curing steps, and the water lost in hot
dry air, with the numbers the library reports (run.mass_step.MassStepResult, run.dry_oven.DryingSummary);
nothing is computed here, only formatted."""

from __future__ import annotations

import math

import streamlit as st

from procplan.run.drip import CAUTION as DRIP_CAUTION
from procplan.run.drip import cook_loss_text, run_bracket, yield_text
from procplan.ui import charts
from procplan.ui.fmt import Units

MODE_WORDS = {
    "brine": "in brine",
    "dry cure": "dry cure (surface at a saturated solution)",
    "equalisation": "equalisation (no exchange at the surface)",
}


def _pct(fraction: float | None) -> str:
    return "—" if fraction is None else f"{100.0 * float(fraction):.2f} %"


def _reached(t_s: float | None, u: Units) -> str:
    return "not reached" if t_s is None else u.duration(t_s)


def brining(result, u: Units) -> None:
    """Each brining, curing or equalisation step: the time to the solute stop and targets, the contents at the
    end, and the chart of the core and mean content beside the core temperature."""
    steps = [sr for sr in result.steps if getattr(sr, "mass", None) is not None]
    if not steps:
        return
    st.subheader("Brining and curing")
    for sr in steps:
        m = sr.mass
        word = "salt" if m.solute == "salt" else m.solute
        head = (
            f"{m.brine_fraction * 100:g} % {word} brine"
            if m.brine_fraction is not None
            else MODE_WORDS[m.mode]
        )
        st.markdown(f"**Step {sr.index + 1}: {sr.name}** — {head} at {u.temp(m.temperature_C)}")
        c = st.columns(4)
        if m.stopped_on is not None:
            where = {"centre": "core"}.get(m.stopped_on, m.stopped_on)
            c[0].metric(f"Time to the {word} stop ({where})", u.duration(m.stopped_at_s))
        else:
            c[0].metric(f"Time in {word}", u.duration(float(m.time_s[-1])))
        c[1].metric(f"Core {word} at the end", _pct(m.core_fraction[-1]))
        c[2].metric(f"Mean {word} at the end", _pct(m.mean_fraction[-1]))
        c[3].metric(
            "Equilibrium with the brine",
            _pct(m.equilibrium_fraction),
            help="the content the whole piece would reach given time",
        )
        targets = [
            (f"Core {word} target {_pct(m.target_core_fraction)}", m.target_core_fraction, m.target_core_reached_s),
            (f"Mean {word} target {_pct(m.target_mean_fraction)}", m.target_mean_fraction, m.target_mean_reached_s),
        ]  # fmt: skip
        shown = [(label, t) for label, frac, t in targets if frac is not None]
        if shown:
            cols = st.columns(len(shown))
            for col, (label, t) in zip(cols, shown, strict=True):
                col.metric(label, _reached(t, u))
        charts.show(charts.salt_figure(result, sr, u), f"salt_{sr.index}", f"salt-{sr.name}")
        biot = m.mass_biot
        st.caption(
            f"Diffusivity {m.D_m2_s:.3g} m²/s: {m.diffusivity_source}. Surface mass transfer: {m.k_m_source}"
            + (f"; mass Biot number {biot:.0f}" if biot is not None and math.isfinite(biot) else "")
            + f". Uptake {float(m.uptake_kg[-1]) * 1000:.1f} g of {word} per piece; solute balance error "
            f"{m.mass_balance_error:.2%}."
        )
        if m.freezing_note:
            st.caption(m.freezing_note[:1].upper() + m.freezing_note[1:] + ".")
        for w in m.warnings:
            st.warning(w[:1].upper() + w[1:], icon=":material/error:")


def drying(result, u: Units) -> None:
    """Each step in hot dry air: weight lost, yield, the air's wet bulb, how long the surface stays wet, and
    the chart of the weight lost and the yield over the step."""
    steps = [sr for sr in result.steps if getattr(sr, "drying", None) is not None]
    if not steps:
        return
    st.subheader("Drying in hot dry air")
    for sr in steps:
        d = sr.drying
        st.markdown(f"**Step {sr.index + 1}: {sr.name}**")
        c = st.columns(4)
        dr = getattr(sr, "drip", None)
        c[0].metric(
            "Evaporated in the step",
            f"{d.weight_loss_percent:.1f} %",
            help=f"{d.weight_loss_kg * 1000:.0f} g per piece",
        )
        c[1].metric(
            "Yield of the step",
            f"{d.yield_percent:.1f} %"
            if dr is None
            else f"{dr.yield_lower_percent:.1f}–{dr.yield_percent:.1f} %",
            help="mass at the step's end over its start"
            + ("" if dr is None else f"; {yield_text(dr.yield_lower_percent, dr.yield_percent)}"),
        )
        c[2].metric("Wet bulb of the air", u.temp(d.wet_bulb_C))
        c[3].metric(
            "Surface wet for", "the whole step" if d.wet_until_s is None else u.duration(d.wet_until_s)
        )
        if d.time_s is not None and d.loss_percent is not None:
            charts.show(charts.drying_figure(sr, u), f"drying_{sr.index}", f"drying-{sr.name}")
            if float(min(d.loss_percent)) < 0.0:
                st.caption(
                    "At first the cold surface lies below the air's dew point: water condenses on it (a small gain, "
                    "yield above 100 %) until the surface warms past the dew point and evaporation takes over."
                )
        st.caption(
            f"Surface moisture at the end {d.surface_moisture_kg_kg:.2f} kg water per kg dry matter (from "
            f"{d.initial_moisture_kg_kg:.2f}); {d.passes} coupling passes, moisture balance error "
            f"{d.mass_balance_error:.2%}. Model: {d.model}."
        )
        if not d.converged:
            st.warning(d.unsettled_text[:1].upper() + d.unsettled_text[1:], icon=":material/error:")
    oc = result.outcomes
    bracket = run_bracket(oc)
    if bracket is not None:
        lo, hi, y_lo, y_hi = bracket
        st.metric(
            "Yield of the plan", f"{y_lo:.1f}–{y_hi:.1f} %", help="mass at the end over the mass at the start"
        )
        st.caption(
            f"{cook_loss_text(lo, hi)[:1].upper()}{cook_loss_text(lo, hi)[1:]}; {yield_text(y_lo, y_hi)}."
        )
        st.caption(DRIP_CAUTION)
    elif oc is not None and oc.yield_percent is not None:
        st.metric(
            "Yield of the plan",
            f"{oc.yield_percent:.1f} %",
            help="mass at the end over the mass at the start",
        )
        st.caption(
            "Evaporation only: drip and fat running out are not modelled, so cook losses come out low."
        )


def show(result, u: Units) -> None:
    brining(result, u)
    drying(result, u)
