"""Plotly figures of results already computed by the library (display units applied here)."""

from __future__ import annotations

import re

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from procplan.model import depth_column, depth_label
from procplan.ui.fmt import Units

COLOURS = {
    "core": "#b2182b",
    "surface": "#2166ac",
    "mean": "#4d9221",
    "medium": "#999999",
    "depth": "#762a83",
}
RULE_COLOUR = "#e08214"
#: Legend of a loaded machine's medium where it left its set point (solved with the batch).
MEDIUM_WITH_BATCH = "medium with the batch in the machine"
#: Colours of overlaid scenarios, told apart also in print (ColorBrewer Dark2, Harrower & Brewer 2003).
SCENARIO_COLOURS = ("#1b9e77", "#d95f02", "#7570b3", "#e7298a", "#66a61e", "#e6ab02", "#a6761d", "#666666")
#: How a chart downloads from its toolbar's camera button ("png" or "svg"); set in the sidebar.
IMAGE_FORMATS = {"PNG": "png", "SVG": "svg"}
LAYOUT = dict(
    margin=dict(l=10, r=10, t=40, b=10), legend=dict(orientation="h", y=-0.18), hovermode="x unified"
)


def temperature_figure(result, u: Units, title: str = "Product temperatures") -> go.Figure:
    h = result.history
    t = u.time_value(h["time_s"].to_numpy())
    fig = go.Figure()
    # medium temperature of each step: its settings (a step function), or in a loaded machine whose plant
    # could not hold the set point the medium as solved with the batch
    shown: set[str] = set()
    for sr in result.steps:
        mt = np.asarray(sr.surface.medium_time_s, dtype=float) + sr.start_s
        mv = np.asarray(sr.surface.fluid_temperature_C, dtype=float)
        xs = np.r_[mt, sr.end_s]
        ys = np.r_[mv, mv[-1]]
        name, shape = "medium", "hv"
        ml = getattr(sr, "machine_load", None)
        if ml is not None and not ml.held and "medium_C" in h:  # a loaded machine: the medium drifts
            seg = h[h["step_index"] == sr.index]
            xs, ys = seg["time_s"].to_numpy(), seg["medium_C"].to_numpy()
            name, shape = MEDIUM_WITH_BATCH, "linear"
        fig.add_trace(
            go.Scatter(
                x=u.time_value(xs),
                y=u.t(ys),
                mode="lines",
                line=dict(
                    color=COLOURS["medium"], width=1 if shape == "hv" else 1.6, shape=shape, dash="dot"
                ),
                name=name,
                legendgroup=name,
                showlegend=name not in shown,
            )
        )
        shown.add(name)
    packed = getattr(result, "packing", None)
    where = "" if packed is None else f" of the {packed.load.arrangement}"
    for point in ("core", "surface", "mean"):
        fig.add_trace(
            go.Scatter(
                x=t,
                y=u.t(h[f"{point}_C"].to_numpy()),
                mode="lines",
                name=("centre" if packed is not None and point == "core" else point) + where,
                line=dict(color=COLOURS[point], width=2.5 if point == "core" else 1.8),
            )
        )
    for d in result.plan.probe_depths_m:  # the points the depth targets watch
        fig.add_trace(
            go.Scatter(
                x=t,
                y=u.t(h[depth_column(d)].to_numpy()),
                mode="lines",
                name=depth_label(d),
                line=dict(color=COLOURS["depth"], width=1.5, dash="dash"),
            )
        )
    # step boundaries and stop temperatures
    for sr in result.steps[:-1]:
        fig.add_vline(x=u.time_value(sr.end_s), line=dict(color="#bbbbbb", width=1))
    if len(result.steps) > 1:
        for sr in result.steps:
            fig.add_annotation(
                x=u.time_value(sr.start_s),
                y=0,
                yref="paper",
                xanchor="left",
                yanchor="bottom",
                text=f"{sr.index + 1} {sr.name}",
                showarrow=False,
                font=dict(size=11, color="#666666"),
            )
    for sr, step in zip(result.steps, result.plan.steps, strict=True):
        x0, x1 = u.time_value(sr.start_s), u.time_value(sr.end_s)
        targets = [("core", "core", step.stop_when_core_C)] if step.stop_when_core_C is not None else []
        targets += [(tg.point, tg.label, tg.temperature_C) for tg in step.targets]
        for colour, point, temp in targets:
            fig.add_trace(
                go.Scatter(
                    x=[x0, x1],
                    y=[u.t(temp)] * 2,
                    mode="lines",
                    line=dict(color=COLOURS[colour], dash="dash", width=1.2),
                    name=f"target {point} {u.temp(temp, 0)} ({sr.name})",
                )
            )
    oc = result.outcomes
    rc = oc.rule_check if oc is not None else None
    end_s = float(h["time_s"].iloc[-1])
    if rc is not None:
        rule_lines(
            fig,
            rc,
            u,
            end_s,
            (float(h[["core_C", "surface_C"]].min().min()), float(h[["core_C", "surface_C"]].max().max())),
        )
    fig.update_layout(
        title=title, xaxis_title=f"time [{u.time}]", yaxis_title=f"temperature [{u.temperature}]", **LAYOUT
    )
    fit_time_axis(fig, end_s, u)
    return fig


def packed_figure(result, u: Units) -> go.Figure:
    """The packed load's centre (slowest) and corner piece (fastest) beside the single free piece, with the
    target the times are measured to (positions and histories from procplan.run.packing)."""
    packed = result.packing
    h = result.history
    corner = packed.corner_history
    curves = [
        (packed.positions[0].name, h["time_s"], h["core_C"], COLOURS["core"], "solid"),
        (
            packed.positions[1].name,
            corner["time_s"] if corner is not None else h["time_s"],
            corner["corner_C"] if corner is not None else h["surface_C"],
            COLOURS["surface"],
            "solid",
        ),
        (
            packed.positions[2].name,
            packed.single.history["time_s"],
            packed.single.history["core_C"],
            COLOURS["mean"],
            "dash",
        ),
    ]
    fig = go.Figure()
    for name, ts, temps, colour, dash in curves:
        fig.add_trace(
            go.Scatter(
                x=u.time_value(np.asarray(ts, dtype=float)),
                y=u.t(np.asarray(temps, dtype=float)),
                mode="lines",
                name=name,
                line=dict(color=colour, width=2, dash=dash),
            )
        )
    end_s = float(h["time_s"].iloc[-1])
    if packed.target_C is not None:
        fig.add_hline(
            y=u.t(packed.target_C),
            line=dict(color="#666666", dash="dot", width=1),
            annotation_text=f"target {u.temp(packed.target_C, 0)}",
        )
    fig.update_layout(
        title=f"Positions in the {packed.load.arrangement} and the single free piece",
        xaxis_title=f"time [{u.time}]",
        yaxis_title=f"temperature [{u.temperature}]",
        **LAYOUT,
    )
    fit_time_axis(fig, end_s, u)
    return fig


def fit_time_axis(fig: go.Figure, end_s: float, u: Units) -> None:
    """The time axis spans the process (0 to its end, 2 % spare), not the marks beyond it."""
    fig.update_xaxes(range=[0.0, float(u.time_value(max(end_s, 1.0) * 1.02))])


def rule_lines(fig: go.Figure, rc, u: Units, end_s: float, span_C: tuple[float, float]) -> None:
    """A rule's stage temperatures and deadlines and its bands; a deadline after the process end is marked
    by an arrow at the right edge with its time, so the axis keeps the process's length."""
    rule_start = rc.stages[0].start_s if rc.stages else None
    beyond = 0
    for st_ in rc.stages:
        stage = st_.stage
        fig.add_hline(
            y=u.t(stage.to_C),
            line=dict(color=RULE_COLOUR, dash="dashdot", width=1),
            annotation_text=f"rule stage {st_.index + 1}: {u.temp(stage.to_C, 0)}",
            annotation_position="top right",
        )
        begin = rule_start if stage.clock == "rule" else st_.start_s
        if begin is None:
            continue
        deadline = begin + stage.within_min * 60.0
        if deadline <= end_s * 1.02:
            fig.add_vline(
                x=u.time_value(deadline),
                line=dict(color=RULE_COLOUR, dash="dashdot", width=1),
                annotation_text=f"stage {st_.index + 1} limit",
                annotation_position="top left",
            )
        else:
            # after the process ends: named at the top right edge, one line per stage, not drawn
            fig.add_annotation(
                x=1.0, xref="paper", y=1.0 - 0.06 * beyond, yref="paper", xanchor="right", yanchor="top",
                text=f"stage {st_.index + 1} limit at {u.duration(deadline)} →", showarrow=False,
                font=dict(size=11, color=RULE_COLOUR), bgcolor="rgba(255,255,255,0.8)",
            )  # fmt: skip
            beyond += 1
    for b in rc.bands:
        lo = b.band.low_C if b.band.low_C is not None else span_C[0] - 5
        hi = b.band.high_C if b.band.high_C is not None else span_C[1] + 5
        fig.add_hrect(
            y0=u.t(lo),
            y1=u.t(hi),
            fillcolor="#fdb863",
            opacity=0.15,
            line_width=0,
            annotation_text=b.band.label(),
            annotation_position="top left",
        )


def lethality_figure(leth, u: Units) -> go.Figure:
    fig = go.Figure()
    fig.add_trace(
        go.Scatter(
            x=u.time_value(np.asarray(leth.time_s)),
            y=np.asarray(leth.f_cumulative_min),
            mode="lines",
            name=f"F accumulated ({leth.point})",
            line=dict(color="#762a83", width=2.5),
        )
    )
    if leth.required_F_min:
        fig.add_hline(
            y=leth.required_F_min,
            line=dict(color="#1b7837", dash="dash"),
            annotation_text=f"required {leth.required_F_min:g} min",
            annotation_position="bottom right",
        )
    fig.update_layout(
        title=f"F against time: {re.sub(r'[(][^)]*[)] ?', '', leth.target or 'lethality').split(',')[0].strip()}",
        xaxis_title=f"time [{u.time}]",
        yaxis_title=f"F [min at {u.temp(leth.reference_C, 1)}]",
        **LAYOUT,
    )
    top = float(np.nanmax(leth.f_cumulative_min)) if len(leth.f_cumulative_min) else 0.0
    if leth.required_F_min and top > 100.0 * leth.required_F_min:
        # F far beyond the requirement: a log axis keeps the requirement line and the rise both readable
        low = leth.required_F_min / 1000.0
        fig.update_yaxes(type="log", range=[np.log10(low), np.log10(top * 2.0)])
        # an annotation on a log axis is placed by the logarithm of its value
        fig.update_annotations(
            selector=lambda a: str(a.text).startswith("required"), y=float(np.log10(leth.required_F_min))
        )
        fig.update_layout(yaxis_title=f"F [min at {u.temp(leth.reference_C, 1)}], log scale")
    return fig


def property_figure(
    frame, freezing_C: float | None, u: Units, x_range_C: tuple[float, float] | None = None
) -> go.Figure:
    """k, ρ, apparent cp (log scale: the latent peak and the sensible values both readable), enthalpy and
    ice fraction against temperature; ``x_range_C`` narrows every panel to one range (e.g. freezing)."""
    if x_range_C is not None:
        t = frame["temperature_C"]
        frame = frame[(t >= x_range_C[0]) & (t <= x_range_C[1])]
    x = u.t(frame["temperature_C"].to_numpy())
    fig = make_subplots(
        rows=2,
        cols=3,
        subplot_titles=(
            "conductivity k [W/mK]",
            "density ρ [kg/m³]",
            "ice fraction [kg/kg]",
            "apparent specific heat cp [kJ/kgK]",
            "enthalpy [kJ/kg] (zero at −40 °C)",
            "",
        ),
        specs=[[{}, {}, {}], [{}, {"colspan": 2}, None]],
        horizontal_spacing=0.07,
        vertical_spacing=0.16,
    )
    series = [
        (frame["k_W_mK"], 1, 1),
        (frame["rho_kg_m3"], 1, 2),
        (frame["ice_fraction"], 1, 3),
        (frame["apparent_cp_J_kgK"] / 1000.0, 2, 1),
        (frame["enthalpy_J_kg"] / 1000.0, 2, 2),
    ]
    for y, r, c in series:
        fig.add_trace(
            go.Scatter(x=x, y=y, mode="lines", line=dict(color="#2166ac"), showlegend=False), row=r, col=c
        )
        fig.update_xaxes(title_text=f"temperature [{u.temperature}]", row=r, col=c)
        if freezing_C is not None:
            fig.add_vline(x=u.t(freezing_C), line=dict(color="#b2182b", dash="dot", width=1), row=r, col=c)
    fig.update_yaxes(type="log", dtick=1, row=2, col=1)
    fig.update_layout(height=620, margin=dict(l=10, r=10, t=40, b=10))
    return fig


def overlay_figure(runs: list[tuple[str, object]], u: Units, point: str = "core") -> go.Figure:
    """Scenarios overlaid, each its own colour; their targets at this point (dashed, the scenario's colour,
    once per temperature) and the first scenario's rule."""
    fig = go.Figure()
    drawn: set[float] = set()
    end_s = 1.0
    lo, hi = np.inf, -np.inf
    for j, (label, result) in enumerate(runs):
        colour = SCENARIO_COLOURS[j % len(SCENARIO_COLOURS)]
        h = result.history
        y = h[f"{point}_C"].to_numpy()
        end_s = max(end_s, float(h["time_s"].iloc[-1]))
        lo, hi = min(lo, float(np.min(y))), max(hi, float(np.max(y)))
        fig.add_trace(
            go.Scatter(
                x=u.time_value(h["time_s"].to_numpy()),
                y=u.t(y),
                mode="lines",
                name=label,
                line=dict(color=colour, width=2),
            )
        )
        for tg in result.outcomes.targets if result.outcomes is not None else ():
            temp = round(float(tg.target.target_C), 3)
            if tg.point != point or temp in drawn:
                continue
            drawn.add(temp)
            fig.add_hline(
                y=u.t(temp),
                line=dict(color=colour, dash="dash", width=1.2),
                annotation_text=f"target {u.temp(temp, 1)}",
                annotation_position="bottom right",
            )
    rules = [r.outcomes.rule_check for _, r in runs if r.outcomes is not None and r.outcomes.rule_check]
    if rules and rules[0].point == point:
        rule_lines(fig, rules[0], u, end_s, (lo, hi))
    fig.update_layout(
        title=f"{point.capitalize()} temperature, scenarios overlaid",
        xaxis_title=f"time [{u.time}]",
        yaxis_title=f"temperature [{u.temperature}]",
        **LAYOUT,
    )
    fit_time_axis(fig, end_s, u)
    return fig


def chart_config(name: str, image_format: str = "png") -> dict:
    """Plotly's toolbar: the camera button downloads the chart under ``name`` as PNG (twice the screen
    resolution) or SVG."""
    return {
        "displaylogo": False,
        "toImageButtonOptions": {"format": image_format, "filename": name, "scale": 2},
    }


def show(fig: go.Figure, key: str, name: str | None = None) -> None:
    """Draw a chart with its download button (format chosen in the sidebar)."""
    import streamlit as st

    fmt = IMAGE_FORMATS.get(st.session_state.get("chart_format", "PNG"), "png")
    st.plotly_chart(fig, width="stretch", key=key, config=chart_config(name or key, fmt))


def histogram_figure(times_s, u: Units, title: str) -> go.Figure:
    fig = go.Figure(
        go.Histogram(x=u.time_value(np.asarray(times_s, dtype=float)), nbinsx=30, marker_color="#2166ac")
    )
    fig.update_layout(
        title=title, xaxis_title=f"time [{u.time}]", yaxis_title="runs", margin=LAYOUT["margin"]
    )
    return fig


def logger_figure(logger_time_s, logger_C, result, u: Units, point: str = "core") -> go.Figure:
    fig = go.Figure()
    fig.add_trace(
        go.Scatter(
            x=u.time_value(np.asarray(logger_time_s)),
            y=u.t(np.asarray(logger_C)),
            mode="markers",
            name="logger",
            marker=dict(size=4, color="#333333"),
        )
    )
    if result is not None:
        h = result.history
        fig.add_trace(
            go.Scatter(
                x=u.time_value(h["time_s"].to_numpy()),
                y=u.t(h[f"{point}_C"].to_numpy()),
                mode="lines",
                name=f"prediction of the plan ({point})",
                line=dict(color=COLOURS.get(point, "#b2182b")),
            )
        )
    fig.update_layout(
        title="Logger against prediction",
        xaxis_title=f"time [{u.time}]",
        yaxis_title=f"temperature [{u.temperature}]",
        **LAYOUT,
    )
    return fig


SALT_COLOURS = {"core": "#8c510a", "mean": "#01665e"}


def salt_figure(result, sr, u: Units) -> go.Figure:
    """A brining step: core temperature (left axis) beside the core and mean solute content (right axis), over
    the step in plan time, with the step's stop and targets on the solute content as dashed lines."""
    m = sr.mass
    word = "salt" if m.solute == "salt" else m.solute
    fig = make_subplots(specs=[[{"secondary_y": True}]])
    h = result.history
    seg = h[h["step_index"] == sr.index]
    fig.add_trace(
        go.Scatter(
            x=u.time_value(seg["time_s"].to_numpy()), y=u.t(seg["core_C"].to_numpy()), mode="lines",
            name="core temperature", line=dict(color=COLOURS["core"], width=1.5),
        ),
        secondary_y=False,
    )  # fmt: skip
    t = u.time_value(np.asarray(m.time_s, dtype=float) + sr.start_s)
    for point, values in (("core", m.core_fraction), ("mean", m.mean_fraction)):
        fig.add_trace(
            go.Scatter(
                x=t, y=100.0 * np.asarray(values, dtype=float), mode="lines", name=f"{point} {word}",
                line=dict(color=SALT_COLOURS[point], width=2.5 if point == "core" else 1.8),
            ),
            secondary_y=True,
        )  # fmt: skip
    marks = []
    plan_brine = result.plan.steps[sr.index].brine
    if plan_brine is not None:
        marks += [("stop at the core", plan_brine.stop_when_core_fraction, "core")]
        marks += [("stop at the mean", plan_brine.stop_when_mean_fraction, "mean")]
    marks += [
        ("core target", m.target_core_fraction, "core"),
        ("mean target", m.target_mean_fraction, "mean"),
    ]
    x0, x1 = u.time_value(sr.start_s), u.time_value(sr.end_s)
    for label, frac, point in marks:
        if frac is None:
            continue
        fig.add_trace(
            go.Scatter(
                x=[x0, x1], y=[100.0 * frac] * 2, mode="lines", name=f"{label} {100 * frac:.2f} %",
                line=dict(color=SALT_COLOURS[point], dash="dash", width=1.2),
            ),
            secondary_y=True,
        )  # fmt: skip
    fig.update_layout(title=f"{sr.name}: {word} taken up and core temperature", **LAYOUT)
    fig.update_xaxes(title_text=f"time [{u.time}]", range=[x0, x1 + 0.02 * (x1 - x0)])
    fig.update_yaxes(title_text=f"temperature [{u.temperature}]", secondary_y=False)
    fig.update_yaxes(
        title_text=f"{word} in the product [% of its mass]",
        secondary_y=True,
        rangemode="tozero",
        tickmode="auto",
        showgrid=False,
    )
    return fig


def drying_figure(sr, u: Units) -> go.Figure:
    """A step in hot dry air: the weight lost so far (left axis) and the yield (right axis) over the step."""
    d = sr.drying
    t = u.time_value(np.asarray(d.time_s, dtype=float) + sr.start_s)
    fig = make_subplots(specs=[[{"secondary_y": True}]])
    fig.add_trace(
        go.Scatter(x=t, y=np.asarray(d.loss_percent), mode="lines", name="evaporated",
                   line=dict(color="#b35806", width=2.5)),
        secondary_y=False,
    )  # fmt: skip
    dr = getattr(sr, "drip", None)
    juice = (
        np.zeros_like(t) if dr is None or dr.time_s is None
        else np.interp(np.asarray(d.time_s, dtype=float), dr.time_s, dr.drainable_juice_percent_history)
    )  # fmt: skip
    if dr is not None:
        fig.add_trace(
            go.Scatter(x=t, y=np.asarray(d.loss_percent) + juice, mode="lines",
                       name="cook loss, upper (all the juice drained)",
                       line=dict(color="#1b7837", width=2.0, dash="dash")),
            secondary_y=False,
        )  # fmt: skip
    fig.add_trace(
        go.Scatter(x=t, y=np.asarray(d.yield_percent_history), mode="lines",
                   name="yield" if dr is None else "yield, upper (evaporation)",
                   line=dict(color="#542788", width=1.8)),
        secondary_y=True,
    )  # fmt: skip
    if dr is not None:
        fig.add_trace(
            go.Scatter(x=t, y=np.asarray(d.yield_percent_history) - juice, mode="lines",
                       name="yield, lower (all the juice drained)",
                       line=dict(color="#542788", width=1.5, dash="dash")),
            secondary_y=True,
        )  # fmt: skip
    if d.wet_until_s is not None:
        fig.add_vline(
            x=u.time_value(sr.start_s + d.wet_until_s), line=dict(color="#999999", dash="dot", width=1),
            annotation_text="surface dries into a crust", annotation_position="top right",
        )  # fmt: skip
    fig.update_layout(title=f"{sr.name}: weight lost and yield", **LAYOUT)
    fig.update_xaxes(title_text=f"time [{u.time}]")
    fig.update_yaxes(
        title_text="weight lost [% of the piece at the step start]", secondary_y=False, rangemode="tozero"
    )
    fig.update_yaxes(
        title_text="yield [% of the piece at the step start]",
        secondary_y=True,
        tickmode="auto",
        showgrid=False,
    )
    return fig
