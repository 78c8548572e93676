"""Plotly figures of results already computed by the library (display units applied here)."""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from procplan.ui.fmt import Units

COLOURS = {"core": "#b2182b", "surface": "#2166ac", "mean": "#4d9221", "medium": "#999999"}
LAYOUT = dict(
    margin=dict(l=10, r=10, t=40, b=10), legend=dict(orientation="h", y=-0.18), hovermode="x unified"
)


def temperature_figure(result, u: Units, title: str = "Product temperatures") -> go.Figure:
    h = result.history
    t = u.time_value(h["time_s"].to_numpy())
    fig = go.Figure()
    # medium temperature of each step (step function)
    for sr in result.steps:
        mt = np.asarray(sr.surface.medium_time_s, dtype=float) + sr.start_s
        mv = np.asarray(sr.surface.fluid_temperature_C, dtype=float)
        xs = np.r_[mt, sr.end_s]
        ys = np.r_[mv, mv[-1]]
        ml = getattr(sr, "machine_load", None)
        if ml is not None and not ml.held and "medium_C" in h:  # a loaded machine: the medium drifts
            seg = h[h["step_index"] == sr.index]
            xs, ys = seg["time_s"].to_numpy(), seg["medium_C"].to_numpy()
        fig.add_trace(
            go.Scatter(
                x=u.time_value(xs),
                y=u.t(ys),
                mode="lines",
                line=dict(color=COLOURS["medium"], width=1, shape="hv", dash="dot"),
                name="medium",
                legendgroup="medium",
                showlegend=sr.index == 0,
            )
        )
    for point in ("core", "surface", "mean"):
        fig.add_trace(
            go.Scatter(
                x=t,
                y=u.t(h[f"{point}_C"].to_numpy()),
                mode="lines",
                name=point,
                line=dict(color=COLOURS[point], width=2.5 if point == "core" else 1.8),
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
        targets = [("core", step.stop_when_core_C)] if step.stop_when_core_C is not None else []
        targets += [(tg.point, tg.temperature_C) for tg in step.targets]
        for point, temp in targets:
            fig.add_trace(
                go.Scatter(
                    x=[x0, x1],
                    y=[u.t(temp)] * 2,
                    mode="lines",
                    line=dict(color=COLOURS[point], dash="dash", width=1.2),
                    name=f"target {point} {u.temp(temp, 0)} ({sr.name})",
                )
            )
    oc = result.outcomes
    rc = oc.rule_check if oc is not None else None
    if rc is not None:
        rule_start = rc.stages[0].start_s if rc.stages else None
        for st_ in rc.stages:
            stage = st_.stage
            fig.add_hline(
                y=u.t(stage.to_C),
                line=dict(color="#e08214", dash="dashdot", width=1),
                annotation_text=f"rule stage {st_.index + 1}: {u.temp(stage.to_C, 0)}",
                annotation_position="top right",
            )
            begin = rule_start if stage.clock == "rule" else st_.start_s
            if begin is not None:
                deadline = begin + stage.within_min * 60.0
                fig.add_vline(
                    x=u.time_value(deadline),
                    line=dict(color="#e08214", dash="dashdot", width=1),
                    annotation_text=f"stage {st_.index + 1} limit",
                    annotation_position="top left",
                )
        for b in rc.bands:
            lo = (
                b.band.low_C
                if b.band.low_C is not None
                else float(h[["core_C", "surface_C"]].min().min()) - 5
            )
            hi = (
                b.band.high_C
                if b.band.high_C is not None
                else float(h[["core_C", "surface_C"]].max().max()) + 5
            )
            fig.add_hrect(
                y0=u.t(lo),
                y1=u.t(hi),
                fillcolor="#fdb863",
                opacity=0.15,
                line_width=0,
                annotation_text=b.band.label(),
                annotation_position="top left",
            )
    fig.update_layout(
        title=title, xaxis_title=f"time [{u.time}]", yaxis_title=f"temperature [{u.temperature}]", **LAYOUT
    )
    return fig


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
        title=f"Lethality {leth.name}: F against time",
        xaxis_title=f"time [{u.time}]",
        yaxis_title=f"F [min at {u.temp(leth.reference_C, 1)}]",
        **LAYOUT,
    )
    return fig


def property_figure(frame, freezing_C: float | None, u: Units) -> go.Figure:
    x = u.t(frame["temperature_C"].to_numpy())
    fig = make_subplots(
        rows=2,
        cols=2,
        subplot_titles=(
            "conductivity k [W/mK]",
            "density ρ [kg/m³]",
            "apparent specific heat cp [kJ/kgK]",
            "ice fraction [kg/kg]",
        ),
    )
    series = [
        (frame["k_W_mK"], 1, 1),
        (frame["rho_kg_m3"], 1, 2),
        (frame["apparent_cp_J_kgK"] / 1000.0, 2, 1),
        (frame["ice_fraction"], 2, 2),
    ]
    for y, r, c in series:
        fig.add_trace(
            go.Scatter(x=x, y=y, mode="lines", line=dict(color="#2166ac"), showlegend=False), row=r, col=c
        )
        fig.update_xaxes(title_text=f"temperature [{u.temperature}]", row=r, col=c)
        if freezing_C is not None:
            fig.add_vline(x=u.t(freezing_C), line=dict(color="#b2182b", dash="dot", width=1), row=r, col=c)
    fig.update_yaxes(type="log", dtick=1, row=2, col=1)
    fig.update_layout(height=560, margin=dict(l=10, r=10, t=40, b=10))
    return fig


def overlay_figure(runs: list[tuple[str, object]], u: Units, point: str = "core") -> go.Figure:
    fig = go.Figure()
    for label, result in runs:
        h = result.history
        fig.add_trace(
            go.Scatter(
                x=u.time_value(h["time_s"].to_numpy()),
                y=u.t(h[f"{point}_C"].to_numpy()),
                mode="lines",
                name=label,
            )
        )
    fig.update_layout(
        title=f"{point.capitalize()} temperature, scenarios overlaid",
        xaxis_title=f"time [{u.time}]",
        yaxis_title=f"temperature [{u.temperature}]",
        **LAYOUT,
    )
    return fig


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
