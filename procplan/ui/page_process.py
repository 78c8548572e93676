"""Process page: start temperature, the ordered steps (machine and settings, or h and medium), the checks,
and for every step the surface-coefficient breakdown, Biot number, regime and solver with its reason."""

from __future__ import annotations

import pandas as pd
import streamlit as st

from procplan.ui import adapter, editors_load, editors_mass, editors_plan, state, widgets
from procplan.ui.fmt import Units, correlation_text

MODES = ("machine and settings", "given h and medium temperature")
NO_RULE = "(no cooling rule)"
NO_LETHALITY = "(no lethality check)"
CUSTOM_LETHALITY = "custom requirement (reference temperature, z, F or D)"


#: Short labels of machine settings (the library's description stays in the help text).
SETTING_LABELS = {
    "air_C": "Air temperature",
    "air_speed_m_s": "Air speed",
    "relative_humidity": "Relative humidity",
    "emissivity": "Emissivity for this step",
    "water_C": "Water temperature",
    "water_speed_m_s": "Water speed",
    "brine_C": "Brine temperature",
    "brine_speed_m_s": "Brine speed",
    "steam_C": "Steam temperature",
    "dew_point_C": "Dew point of the air",
}
#: Fractions shown in percent (relative humidity): the plan keeps the fraction.
PERCENT_SETTINGS = {"relative_humidity"}


def _setting_input(key: str, rng, value: float, wkey: str) -> float:
    """One machine setting in the steps a machine can be set to: 0.5 K, 0.1 m/s, 1 % humidity."""
    from procplan.surface.machines import SETTINGS

    spec = SETTINGS.get(key)
    label = SETTING_LABELS.get(key) or (spec.description.capitalize() if spec else key.replace("_", " "))
    unit = rng.unit or (spec.unit if spec else "")
    described = f"{spec.description.capitalize()}. " if spec else ""
    if unit == "°C":
        return widgets.temperature(
            label,
            value,
            wkey,
            minimum_C=rng.minimum,
            maximum_C=rng.maximum,
            step=0.5,
            help=f"{described}Machine range {rng.describe()}",
        )
    if key in PERCENT_SETTINGS:
        shown = widgets.number(
            f"{label} [%]",
            round(value * 100.0),
            wkey,
            minimum=rng.minimum * 100.0,
            maximum=rng.maximum * 100.0,
            step=1.0,
            fmt="%.0f",
            help=f"{described}Machine range {rng.minimum * 100:g} to {rng.maximum * 100:g} %",
        )
        return round(shown / 100.0, 4)
    step = 0.1 if unit == "m/s" else 0.05 if rng.maximum - rng.minimum <= 1.0 else 0.1
    extra = (
        " Left at the machine's default, an emissivity stated on the product (Product page) applies; changed "
        "here, this value wins for this step."
        if key == "emissivity"
        else ""
    )
    return widgets.number(
        f"{label}" + (f" [{unit}]" if unit else ""),
        value,
        wkey,
        minimum=rng.minimum,
        maximum=rng.maximum,
        step=step,
        fmt="%.1f" if step >= 0.1 else "%.2f",
        help=f"{described}Machine range {rng.describe()}.{extra}",
    )


def _machine(step: dict, i: int, lib) -> None:
    ids = sorted(lib.equipment)
    current = step.get("equipment") if step.get("equipment") in ids else ids[0]
    eid = st.selectbox(
        "Machine",
        ids,
        index=ids.index(current),
        format_func=lambda e: f"{lib.equipment[e].name} ({e})",
        key=state.key("s.eq", i),
    )
    eq = lib.equipment[eid]
    changed = eid != step.get("equipment")
    old = {} if changed else dict(step.get("settings") or {})
    if changed:
        step.pop("settings_profile", None)
    step["equipment"] = eid
    for k in ("h_W_m2K", "medium_C", "medium_profile"):
        step.pop(k, None)
    st.caption(f"{eq.kind.replace('-', ' ')}, {eq.medium}; capacity {eq.capacity_kW:g} kW. {eq.description}")
    settings = {}
    keys = list(eq.settings)
    cols = st.columns(min(len(keys), 4) or 1)
    for j, k in enumerate(keys):
        rng = eq.settings[k]
        with cols[j % len(cols)]:
            v = _setting_input(k, rng, old.get(k, rng.default), f"s.set.{i}.{eid}.{k}")
        if k in old or v != rng.default:
            settings[k] = v  # a default left alone stays implicit, as in the plan file
    step["settings"] = settings
    if step.get("settings_profile"):
        st.info(
            f"This step follows a settings profile from the plan file ({len(step['settings_profile'])} changes); "
            "the values above hold until the first change.",
            icon=":material/info:",
        )
        st.dataframe(pd.DataFrame(step["settings_profile"]), hide_index=True)


def _given_h(step: dict, i: int) -> None:
    for k in ("equipment", "settings", "settings_profile"):
        step.pop(k, None)
    c1, c2 = st.columns(2)
    with c1:
        step["h_W_m2K"] = widgets.number(
            "Surface coefficient h [W/m²K]",
            step.get("h_W_m2K", 10.0),
            f"s.h.{i}",
            minimum=0.5,
            maximum=20000.0,
            step=1.0,
            fmt="%.1f",
        )
    with c2:
        editors_plan.medium(step, i)


def _step(step: dict, i: int, n: int, lib, errs: widgets.FieldErrors) -> str | None:
    """Draw one step; returns an action ('up', 'down', 'remove') or None."""
    action = None
    with st.container(border=True):
        c = st.columns([5, 1, 1, 1])
        step["name"] = c[0].text_input(
            f"Step {i + 1}", value=step.get("name", f"step {i + 1}"), key=state.key("s.name", i)
        )
        if c[1].button("▲", key=state.key("s.up", i), disabled=i == 0, help="Move this step earlier"):
            action = "up"
        if c[2].button("▼", key=state.key("s.down", i), disabled=i == n - 1, help="Move this step later"):
            action = "down"
        if c[3].button("✕", key=state.key("s.rm", i), disabled=n == 1, help="Remove this step"):
            action = "remove"
        mode = st.radio(
            "Surface from",
            MODES,
            index=0 if step.get("equipment") else 1,
            horizontal=True,
            key=state.key("s.mode", i),
        )
        if mode == MODES[0]:
            _machine(step, i, lib)
        else:
            _given_h(step, i)
        c1, c2, c3 = st.columns(3)
        with c1:
            step["duration_min"] = widgets.duration(
                "Step time at most",
                step.get("duration_min", 60.0),
                f"s.dur.{i}",
                minimum_min=0.5,
                help="The step ends after this time, or earlier when the core reaches its stop temperature.",
            )
        with c2:
            stop_on = st.checkbox(
                "Stop when the core reaches",
                value=step.get("stop_when_core_C") is not None,
                key=state.key("s.stop_on", i),
            )
        with c3:
            if stop_on:
                step["stop_when_core_C"] = widgets.temperature(
                    "Core stop temperature",
                    step.get("stop_when_core_C", 5.0),
                    f"s.stop.{i}",
                    minimum_C=-40.0,
                    maximum_C=150.0,
                )
            else:
                step.pop("stop_when_core_C", None)
        editors_plan.targets(step, i, errs)
        editors_mass.step(step, i, state.plan(), lib, errs)  # brining, curing, drying
        errs.mark(f"steps[{i}]")
    return action


def rule_short_title(title: str) -> str:
    """A rule's title short enough for its select box: the words before its first bracket or colon.

    >>> rule_short_title("US FDA Food Code two-stage cooling (57 → 21 °C / 135 → 70 °F in 2 h, → 5 °C in 6 h)")
    'US FDA Food Code two-stage cooling'
    >>> rule_short_title("UK cook-chill: to 0–3 °C within 90 min of the start of chilling")
    'UK cook-chill'
    """
    short = title.split(" (", 1)[0].split(": ", 1)[0].strip()
    return short or title


def _checks(plan: dict, lib, errs: widgets.FieldErrors) -> None:
    from procplan.model import SOLVERS
    from procplan.outcomes import LETHALITY_PRESETS

    st.subheader("Checks and batch")
    ch = plan.setdefault("checks", {})
    c1, c2 = st.columns([3, 2])
    rules = [NO_RULE, *sorted(lib.rules)]
    rule = c1.selectbox(
        "Cooling / holding rule",
        rules,
        index=rules.index(ch["cooling_rule"]) if ch.get("cooling_rule") in rules else 0,
        format_func=lambda r: r if r == NO_RULE else rule_short_title(lib.rules[r].title or r),
        key=state.key("c.rule"),
    )
    if rule == NO_RULE:
        ch.pop("cooling_rule", None)
    else:
        ch["cooling_rule"] = rule
        full = lib.rules[rule].title or rule
        if full != rule_short_title(full):
            c1.caption(full)
    leth = ch.get("lethality")
    options = [NO_LETHALITY, *LETHALITY_PRESETS, CUSTOM_LETHALITY]
    if isinstance(leth, dict) and not (set(leth) <= {"preset", "point"}):
        current = CUSTOM_LETHALITY
    elif isinstance(leth, dict):
        current = leth.get("preset", NO_LETHALITY)
    else:
        current = leth or NO_LETHALITY
    pick = c2.selectbox(
        "Lethality requirement",
        options,
        index=options.index(current) if current in options else 0,
        format_func=lambda p: (
            p
            if p in (NO_LETHALITY, CUSTOM_LETHALITY)
            else f"{p}: {LETHALITY_PRESETS[p].target}"
            + ("" if LETHALITY_PRESETS[p].confirmed else " (indicative)")
        ),
        key=state.key("c.leth"),
    )
    if pick == NO_LETHALITY:
        ch.pop("lethality", None)
    elif pick != CUSTOM_LETHALITY:
        point = leth.get("point") if isinstance(leth, dict) else None
        ch["lethality"] = {"preset": pick, "point": point} if point and point != "core" else pick
    if pick == CUSTOM_LETHALITY:
        editors_plan.lethality(ch, errs)
    c = st.columns(4)
    with c[0]:
        ch["margin_percent"] = widgets.number(
            "Safety margin [%]",
            ch.get("margin_percent", 0.0),
            "c.mp",
            minimum=0.0,
            maximum=500.0,
            step=5.0,
            fmt="%.0f",
        )
    with c[1]:
        ch["margin_min"] = widgets.duration(
            "Fixed margin", ch.get("margin_min", 0.0), "c.mm", minimum_min=0.0
        )
    with c[2]:
        ch["pieces_per_batch"] = int(
            widgets.number(
                "Pieces per batch",
                ch.get("pieces_per_batch", 1),
                "c.ppb",
                minimum=1,
                maximum=10_000_000,
                step=1,
                fmt="%.0f",
            )
        )
    solvers = list(SOLVERS)
    with c[3]:
        plan["solver"] = st.selectbox(
            "Solver",
            solvers,
            index=solvers.index(plan.get("solver", "auto")) if plan.get("solver", "auto") in solvers else 0,
            key=state.key("c.solver"),
            help="auto: the engine chooses from the Biot number, phase change and property spread.",
        )
    if plan["solver"] == "auto":
        plan.pop("solver")


def _provenance(result, u: Units) -> None:
    st.subheader("How each step was calculated")
    for sr in result.steps:
        bd = sr.surface.breakdown
        with st.container(border=True):
            st.markdown(f"**Step {sr.index + 1}: {sr.name}**")
            c = st.columns(4)
            h_eff = sr.surface.h_W_m2K
            c[0].metric(
                "Effective h",
                f"{min(h_eff):.1f} W/m²K"
                if len(set(h_eff)) == 1
                else f"{min(h_eff):.1f}…{max(h_eff):.1f} W/m²K",
            )
            c[1].metric(
                "Biot number", f"{sr.regime.bi:.3g}", help=f"lumped Bi (L = V/A): {sr.regime.bi_lumped:.3g}"
            )
            c[2].metric("Regime", sr.regime.regime)
            c[3].metric("Solver", sr.solver)
            rows = [
                ("source", bd.source),
                ("correlation", correlation_text(bd.correlation)),
                ("convection h", f"{bd.h_conv_W_m2K:.1f} W/m²K"),
                ("radiation h", f"{bd.h_rad_W_m2K:.1f} W/m²K"),
                ("packaging resistance", f"{bd.packaging_resistance_m2K_W * 1000:.2f} m²K/kW"),
                ("effective h (with the packaging)", f"{bd.h_eff_W_m2K:.1f} W/m²K"),
                ("medium", " → ".join(u.temp(m) for m in dict.fromkeys(sr.surface.fluid_temperature_C))),
                *([("radiation to the walls", bd.sink_note)] if sr.surface.radiates_to_other_walls else []),
                ("Biot number", f"Bi = {sr.regime.bi:.3g} (lumped Bi = {sr.regime.bi_lumped:.3g})"),
                ("regime", sr.regime.reason),
                ("solver", f"{sr.solver}: {sr.reason}"),
                ("energy-balance error", f"{sr.energy_balance_error:.2%}"),
            ]
            st.table(pd.DataFrame(rows, columns=["item", "value"]).set_index("item"))
            for w in sr.warnings:
                st.warning(w, icon=":material/error:")


def render() -> None:
    st.header("Process")
    top = st.container()
    plan = state.plan()
    lib = adapter.library(state.generation())
    u = state.units()
    c1, c2 = st.columns([1, 2])
    with c1:
        plan.setdefault("start", {})["temperature_C"] = widgets.temperature(
            "Product temperature at the start",
            plan["start"].get("temperature_C", 20.0),
            "start",
            minimum_C=-40.0,
            maximum_C=150.0,
        )
    plan["title"] = c2.text_input("Plan title", value=plan.get("title", ""), key=state.key("title"))
    st.subheader("Steps")
    errs = widgets.FieldErrors()
    steps = plan.setdefault("steps", [])
    actions = []
    for i, step in enumerate(steps):
        a = _step(step, i, len(steps), lib, errs)
        if a:
            actions.append((i, a))
    if st.button("Add a step", key=state.key("s.add")):
        steps.append(
            {"name": f"step {len(steps) + 1}", "h_W_m2K": 10.0, "medium_C": 20.0, "duration_min": 60.0}
        )
        actions.append((len(steps) - 1, "added"))
    for i, a in actions:
        if a == "up" and i > 0:
            steps[i - 1], steps[i] = steps[i], steps[i - 1]
        elif a == "down" and i < len(steps) - 1:
            steps[i + 1], steps[i] = steps[i], steps[i + 1]
        elif a == "remove" and len(steps) > 1:
            steps.pop(i)
    if actions:
        state.touch()
        st.rerun()
    _checks(plan, lib, errs)
    editors_load.editor(plan, lib, errs)
    st.divider()
    text, parsed = state.current()
    if not parsed.ok:
        rest = errs.show(parsed.problems)
        with top:
            st.error("The plan cannot be calculated until the fields marked in red are corrected.")
        widgets.problems(rest, "Also to correct:")
        return
    out = adapter.run(text, state.generation())
    if not out.ok:
        with top:
            st.error("The calculation refused this plan: correct the fields marked in red.")
        widgets.problems(errs.show(out.problems), "The calculation refused this plan:")
        return
    from procplan.ui.page_result import headline

    with top:
        headline(out.value, u)
    _provenance(out.value, u)
