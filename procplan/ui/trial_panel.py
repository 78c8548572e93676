"""Studies page panel: a heat-penetration trial (several logger files) against the current plan, or the
synthetic demo trial against its own plan; verdict, slowest unit, runs, probes, curves with the prediction,
and the study sheet to download. The figures come from :func:`procplan.studies.trials.trial_study`; this
panel only formats them.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import plotly.graph_objects as go
import streamlit as st

from procplan.errors import InvalidInputError
from procplan.ui import adapter, adapter_outputs, state, widgets
from procplan.ui.fmt import Units

#: The synthetic demo trial shipped with the library, and the plan it was generated from.
DEMO_FOLDER = Path("measurements") / "trials"
DEMO_PLAN = "soup-pouch-pasteurise"
DEMO_MAP = "soup-pouch-trial-probes.toml"
LINE_DASHES = ("solid", "dash", "dot", "dashdot", "longdash", "longdashdot")
POSITION_WORDS = {"core": "core", "surface": "surface", "mean": "mean", "medium": "medium"}


def _demo_files() -> tuple[tuple[tuple[str, str], ...], str]:
    root = Path(adapter.library_root()) / DEMO_FOLDER
    runs = tuple((f.name, f.read_text(encoding="utf-8")) for f in sorted(root.glob("*.csv")))
    map_file = root / DEMO_MAP
    return runs, map_file.read_text(encoding="utf-8") if map_file.is_file() else ""


@st.cache_resource(max_entries=4, show_spinner="Analysing the trial…")
def _study(
    plan_text: str,
    runs: tuple,
    map_text: str,
    proportion: float,
    confidence: float,
    fit: bool,
    lethality: tuple | None,
    root,
    gen,
):
    """The panel's one call into the library (cached on the texts): an Outcome holding the study."""
    import tomllib

    from procplan.model import LethalityCheck
    from procplan.studies.logger import clean_logger, read_logger
    from procplan.studies.trial_map import ProbeMap, probe_map_from_dict
    from procplan.studies.trials import TrialRun, trial_study

    parsed = adapter.parse_plan(plan_text, gen)
    if not parsed.ok:
        return parsed
    try:
        try:
            pmap = (
                probe_map_from_dict(tomllib.loads(map_text), "probe map") if map_text.strip() else ProbeMap()
            )
        except tomllib.TOMLDecodeError as exc:
            raise InvalidInputError("probe map", "not TOML", "a TOML probe map", str(exc)) from None
        trial = [TrialRun(name, clean_logger(read_logger(text))) for name, text in runs]
        study = trial_study(
            parsed.value,
            trial,
            pmap,
            library=adapter.library(gen),
            proportion=proportion,
            confidence=confidence,
            fit=("h",) if fit else (),
            lethality=None if lethality is None else LethalityCheck(None, *lethality),
        )
        return adapter.Outcome(study)
    except InvalidInputError as exc:
        return adapter.Outcome(problems=adapter.problems_of(exc))


@st.cache_data(max_entries=4, show_spinner="Preparing the study sheet…")
def _sheet(_study_obj, key: tuple, generation: int) -> adapter.Outcome:
    from procplan.output.study_sheet import study_sheet_pdf

    site = adapter.site_settings(generation)
    if not site.ok:
        return site
    try:
        return adapter.Outcome(study_sheet_pdf(_study_obj, site=site.value, paper=site.value.paper))
    except InvalidInputError as exc:
        return adapter.Outcome(problems=adapter.problems_of(exc))


def _num(x, digits: int = 2) -> str:
    return "—" if x is None else f"{x:.{digits}f}"


def _probe_rows(study, u: Units) -> pd.DataFrame:
    rows = []
    for r in study.runs:
        for p in r.probes:
            h, c, fm = p.heating, p.cooling, p.formula
            rows.append(
                {
                    "Run": r.name,
                    "Probe": p.channel + (" (slowest)" if p.channel == r.slowest else ""),
                    "Piece": p.piece,
                    "Position": POSITION_WORDS.get(p.position, p.position),
                    "Lethality F [min]": _num(p.F_min),
                    "F by step [min]": " + ".join(_num(f) for f in p.F_by_step_min) or "—",
                    "Meets the requirement": "—" if p.passed is None else ("yes" if p.passed else "NO"),
                    f"Heating f [{u.time}]": u.duration(h.f_s) if h else "—",
                    "Heating j": _num(h.j if h else None, 3),
                    f"Cooling f [{u.time}]": u.duration(c.f_s) if c else "—",
                    "Cooling j": _num(c.j if c else None, 3),
                    "Formula-method time": u.duration_min(fm.from_start_min) if fm else "—",
                    "General-method time": u.duration_min(fm.general_min) if fm and fm.general_min else "—",
                    f"RMS difference from the plan [{u.temperature}]": _num(
                        None if p.rmse_K is None else u.dt(p.rmse_K)
                    ),
                }
            )
    return pd.DataFrame(rows)


def _run_figure(run, u: Units) -> go.Figure:
    fig = go.Figure()
    for i, p in enumerate(run.probes):
        c = p.curve
        dash = LINE_DASHES[i % len(LINE_DASHES)]
        name = f"{p.channel} {p.position}" + (" (slowest)" if p.channel == run.slowest else "")
        x = u.time_value(c["time_s"].to_numpy())
        fig.add_scatter(x=x, y=u.t(c["measured_C"].to_numpy()), mode="lines", name=name, line=dict(dash=dash))
        if "predicted_C" in c:
            fig.add_scatter(
                x=x,
                y=u.t(c["predicted_C"].to_numpy()),
                mode="lines",
                name=f"plan at the {p.position} ({p.channel})",
                line=dict(color="#999999", width=1, dash=dash),
            )
    fig.update_layout(
        title=f"Run {run.name}",
        xaxis_title=f"time from the step start [{u.time}]",
        yaxis_title=f"temperature [{u.temperature}]",
        height=360,
        margin=dict(l=50, r=10, t=40, b=40),
    )
    return fig


def _show(study, u: Units) -> None:
    (st.success if study.passed else st.error if study.passed is False else st.info)(study.verdict)
    b = study.bound
    k = st.columns(4)
    k[0].metric(
        "Slowest probe", f"{study.slowest_channel}", help=f"in {study.slowest_run}; {study.criterion}"
    )
    k[1].metric("Required F", _num(study.required_F_min) + " min" if study.required_F_min else "—")
    k[2].metric(
        "Mean F of the slowest unit", f"{b.mean:.2f} min" if b else "—", help="over the runs' slowest probes"
    )
    k[3].metric(
        "Lower tolerance bound",
        f"{b.lower:.2f} min" if b else "—",
        help=None
        if b is None
        else f"{b.confidence:.0%} confidence for {b.proportion:.0%} of units, k = {b.k:.3f}",
    )
    runs = pd.DataFrame(
        {
            "Run": [r.name for r in study.runs],
            "Step start": [u.duration(r.step_start_s) for r in study.runs],
            "Aligned by": [r.step_start_from for r in study.runs],
            "Come-up time": [u.duration(r.come_up_s) if r.come_up_s is not None else "—" for r in study.runs],
            "Start": [u.temp(r.start_C) for r in study.runs],
            "Slowest probe": [r.slowest for r in study.runs],
        }
    )
    st.dataframe(runs, hide_index=True, width="stretch")
    st.dataframe(_probe_rows(study, u), hide_index=True, width="stretch")
    cal = study.calibration
    if cal is not None:
        st.caption(
            f"Surface coefficient fitted to every probe at once: {cal.h_W_m2K:.1f} W/m²K (95 % interval "
            f"{cal.h_ci95[0]:.1f} to {cal.h_ci95[1]:.1f}); the plan's {cal.plan_h_W_m2K:.1f} W/m²K."
        )
    for r in study.runs:
        st.plotly_chart(_run_figure(r, u), width="stretch", key=f"trial_chart_{r.name}")
    for n in study.all_notes():
        st.caption(n)


def _lethality_input(u: Units) -> tuple | None:
    """(reference °C, z °C, required F min) when the planner judges the probes by a z-value requirement of
    their own (the formula method needs one z-value), else None (the plan's own check)."""
    own = st.checkbox(
        "Judge the probes by a z-value requirement instead of the plan's",
        key="trial_own_lethality",
        help="Ball's formula method needs one z-value; a plan that checks a table shows no formula-method time.",
    )
    if not own:
        return None
    c = st.columns(3)
    with c[0]:
        ref = widgets.temperature("Reference temperature", 90.0, "trial_ref", minimum_C=40.0, maximum_C=140.0)
    z = c[1].number_input("z-value [K]", min_value=1.0, max_value=100.0, value=10.0, step=0.5, key="trial_z")
    need = c[2].number_input(
        "Required F [min]", min_value=0.01, max_value=1000.0, value=10.0, step=0.5, key="trial_need"
    )
    return (float(ref), float(z), float(need))


def render(text: str, u: Units) -> None:
    """The heat-penetration trial panel of the studies page."""
    st.subheader("Heat-penetration trial")
    st.caption(
        "Load the logger files of several runs and a probe map (which probe sat in which piece, where): the "
        "slowest unit, its lethality with a tolerance bound, heating and cooling factors, and the plan's "
        "prediction on every probe."
    )
    demo = st.checkbox("Use the synthetic demo trial (soup pouches, three runs)", key="trial_demo")
    if demo:
        runs, map_text = _demo_files()
        plan_text = adapter.plan_toml(adapter.library_plan_dict(DEMO_PLAN, state.generation()))
        st.caption(
            "Synthetic logger files generated from the soup-pouch plan with 0.1 K of noise: not measurements."
        )
    else:
        files = st.file_uploader(
            "Logger files, one per run (.csv, .txt)",
            type=["csv", "txt"],
            accept_multiple_files=True,
            key="trial_files",
        )
        map_up = st.file_uploader("Probe map (.toml)", type=["toml"], key="trial_map")
        runs = tuple((f.name, f.getvalue().decode("utf-8-sig", errors="replace")) for f in files or [])
        map_text = map_up.getvalue().decode("utf-8-sig", errors="replace") if map_up is not None else ""
        plan_text = text
    c = st.columns(3)
    proportion = c[0].selectbox(
        "Units covered by the bound",
        [0.9, 0.95, 0.99],
        index=2,
        format_func=lambda x: f"{x:.0%}",
        key="trial_p",
    )
    confidence = c[1].selectbox(
        "Confidence", [0.9, 0.95, 0.99], index=1, format_func=lambda x: f"{x:.0%}", key="trial_g"
    )
    fit = c[2].checkbox("Fit the surface coefficient to every probe", key="trial_fit")
    lethality = _lethality_input(u)
    if not runs:
        st.info("Load at least one logger file, or use the demo trial.")
        return
    if st.button("Analyse the trial", key="trial_go"):
        st.session_state["trial_request"] = (
            plan_text,
            runs,
            map_text,
            proportion,
            confidence,
            fit,
            lethality,
        )
    req = st.session_state.get("trial_request")
    if not req or req != (plan_text, runs, map_text, proportion, confidence, fit, lethality):
        return
    out = _study(*req, adapter.library_root(), state.generation())
    if not out.ok:
        widgets.problems(out.problems, "The trial could not be analysed:")
        return
    _show(out.value, u)
    study = out.value
    c = st.columns(2)
    with c[0]:
        adapter_outputs.xlsx_button(
            "Download the study (Excel)",
            lambda: adapter_outputs.trial_xlsx(study),
            "heat-penetration-study",
            "trial_xlsx",
        )
    c[1].download_button(
        "Download the study (JSON)",
        adapter_outputs.deferred(lambda: adapter_outputs.trial_json(study)),
        file_name="heat-penetration-study.json",
        mime="application/json",
        key="trial_json",
    )
    pdf = _sheet(out.value, req, state.generation())
    if pdf.ok:
        st.download_button(
            "Download the study sheet (PDF)",
            pdf.value,
            file_name="heat-penetration-study.pdf",
            mime="application/pdf",
            key="trial_pdf",
        )
    else:
        widgets.problems(pdf.problems, "The study sheet could not be made:")
