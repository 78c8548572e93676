"""The printable heat-penetration study sheet (PDF): the verdict, the slowest unit's statistics, every run and
probe with its lethality, f and j, the formula method's time beside the general method's, the fitted h, and
one chart per run with every probe's measured curve and the plan's prediction.

Same layout as the batch-plan sheet (:mod:`procplan.output.sheet_layout`: the font shipped in reportlab,
wrapped tables, header and page numbers, the standing caution in a box on every page). The figures come from
the study as it is (:mod:`procplan.studies.trials` computes them); the sheet only formats them.
"""

from __future__ import annotations

import datetime as _dt
import io

import numpy as np
from reportlab.graphics.shapes import Drawing, Line, PolyLine, String
from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.platypus import KeepTogether, Paragraph, SimpleDocTemplate, Spacer

from procplan import validate
from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.errors import InvalidInputError
from procplan.files.site import PAPER_SIZES, SiteSettings
from procplan.output.chart import nice_ticks
from procplan.output.sheet_layout import (
    FONT,
    Styles,
    cols,
    esc,
    numbered_canvas,
    printable,
    register_fonts,
    table,
)

#: Grey levels and dash patterns that tell up to eight probes apart in black and white.
PROBE_STYLES = (
    (colors.black, None),
    (colors.Color(0.35, 0.35, 0.35), None),
    (colors.black, [4.0, 2.0]),
    (colors.Color(0.35, 0.35, 0.35), [4.0, 2.0]),
    (colors.black, [1.0, 1.5]),
    (colors.Color(0.35, 0.35, 0.35), [1.0, 1.5]),
    (colors.black, [6.0, 2.0, 1.0, 2.0]),
    (colors.Color(0.35, 0.35, 0.35), [6.0, 2.0, 1.0, 2.0]),
)


def _num(x, spec=".3g", unit="") -> str:
    if x is None or (isinstance(x, float) and not np.isfinite(x)):
        return "—"
    return f"{x:{spec}}{unit}"


def _time(site: SiteSettings, seconds) -> str:
    return "—" if seconds is None else site.format_time(seconds / 60.0)


def _axes(d: Drawing, site: SiteSettings, xt, yt, X, Y, box) -> None:
    """Grid lines, tick labels and axis titles of a run chart."""
    left, bottom, right, top = box
    grey = colors.Color(0.8, 0.8, 0.8)
    for v in yt:
        d.add(Line(left, float(Y(v)), right, float(Y(v)), strokeColor=grey, strokeWidth=0.3))
        d.add(String(left - 3, float(Y(v)) - 2.5, f"{v:g}", fontName=FONT, fontSize=6.5, textAnchor="end"))
    for v in xt:
        d.add(Line(float(X(v)), bottom, float(X(v)), top, strokeColor=grey, strokeWidth=0.3))
        d.add(String(float(X(v)), bottom - 9, f"{v:g}", fontName=FONT, fontSize=6.5, textAnchor="middle"))
    d.add(
        String(
            (left + right) / 2,
            2,
            f"time from the step start [{site.time_symbol}]",
            fontName=FONT,
            fontSize=6.5,
            textAnchor="middle",
        )
    )
    d.add(String(2, top - 2, site.temperature_symbol, fontName=FONT, fontSize=6.5))


def run_chart(run, site: SiteSettings, width: float, height: float) -> Drawing:
    """Every product probe of a run (measured, solid or patterned) and the plan's prediction at each probe's
    position (thin grey), against time from the step start."""
    d = Drawing(width, height)
    left, bottom, right, top = 34.0, 22.0, width - 92.0, height - 6.0
    series = []
    for p in run.probes:
        c = p.curve
        series.append(c["measured_C"].to_numpy())
        if "predicted_C" in c:
            series.append(c["predicted_C"].to_numpy())
    vals = np.concatenate([np.asarray([site.temperature_value(v) for v in s]) for s in series])
    vals = vals[np.isfinite(vals)]
    t_end = max(float(p.curve["time_s"].iloc[-1]) for p in run.probes) / 60.0
    xt = nice_ticks(0.0, site.time_value(t_end))
    yt = nice_ticks(float(vals.min()), float(vals.max()))

    def X(t_min):
        return left + (right - left) * (np.asarray(t_min) - xt[0]) / (xt[-1] - xt[0])

    def Y(v):
        return bottom + (top - bottom) * (np.asarray(v) - yt[0]) / (yt[-1] - yt[0])

    _axes(d, site, xt, yt, X, Y, (left, bottom, right, top))
    y_legend = top - 4
    for i, p in enumerate(run.probes):
        color, dash = PROBE_STYLES[i % len(PROBE_STYLES)]
        c = p.curve
        x = X(site.time_value(1.0) * c["time_s"].to_numpy() / 60.0)  # time_value is linear in minutes
        if "predicted_C" in c:
            pr = c["predicted_C"].to_numpy()
            ok = np.isfinite(pr)
            pts = np.column_stack([x[ok], Y([site.temperature_value(v) for v in pr[ok]])]).ravel().tolist()
            if len(pts) >= 4:
                d.add(PolyLine(pts, strokeColor=colors.Color(0.6, 0.6, 0.6), strokeWidth=0.5))
        y = Y([site.temperature_value(v) for v in c["measured_C"].to_numpy()])
        d.add(
            PolyLine(
                np.column_stack([x, y]).ravel().tolist(),
                strokeColor=color,
                strokeWidth=1.0,
                strokeDashArray=dash,
            )
        )
        d.add(
            Line(
                right + 6,
                y_legend,
                right + 20,
                y_legend,
                strokeColor=color,
                strokeWidth=1.0,
                strokeDashArray=dash,
            )
        )
        label = printable(f"{p.channel} ({p.position})" + (" slowest" if p.channel == run.slowest else ""))
        d.add(String(right + 23, y_legend - 2.5, label[:22], fontName=FONT, fontSize=6.2))
        y_legend -= 9
    d.add(
        Line(
            right + 6,
            y_legend,
            right + 20,
            y_legend,
            strokeColor=colors.Color(0.6, 0.6, 0.6),
            strokeWidth=0.5,
        )
    )
    d.add(String(right + 23, y_legend - 2.5, "plan's prediction", fontName=FONT, fontSize=6.2))
    return d


def _summary(study, site, st, W) -> list:
    out = [st.p(f"<b>Verdict.</b> {esc(study.verdict)}", raw=True)]
    b = study.bound
    rows = [["slowest probe", "criterion", "required", "runs", "mean", "spread (s)", "k", "lower bound"]]
    rows.append(
        [
            f"{study.slowest_channel} in {study.slowest_run}",
            study.criterion,
            _num(study.required_F_min, ".3g", " min"),
            str(len(study.runs)),
            _num(b.mean if b else None, ".3g", " min"),
            _num(b.sd if b else None, ".3g", " min"),
            _num(b.k if b else None, ".4f"),
            _num(b.lower if b else None, ".3g", " min"),
        ]
    )
    out.append(table(rows, cols(W, [1.4, 1.6, 0.8, 0.5, 0.8, 0.8, 0.6, 0.9]), st))
    if b is not None:
        out.append(
            st.p(
                f"Lower bound: mean − k·s with k the exact one-sided normal tolerance factor (noncentral t; "
                f"NIST/SEMATECH e-Handbook §7.2.6.3) for {b.proportion:.0%} of units with {b.confidence:.0%} "
                f"confidence, {b.model} model, over the slowest probe of each run.",
                st.small,
            )
        )
    return out


def _runs(study, site, st, W) -> list:
    rows = [["run", "step start", "aligned by", "come-up time", "start", "slowest probe"]]
    for r in study.runs:
        rows.append(
            [
                r.name,
                _time(site, r.step_start_s),
                r.step_start_from,
                _time(site, r.come_up_s),
                site.format_temperature(r.start_C),
                r.slowest,
            ]
        )
    return st.h("Runs") + [table(rows, cols(W, [1.2, 0.8, 1.8, 0.8, 0.6, 0.8]), st)]


def _probes(study, site, st, W) -> list:
    rows = [
        [
            "run",
            "probe",
            "piece",
            "position",
            "F [min]",
            "pass",
            "f_h",
            "j_h",
            "f_c",
            "j_c",
            "Ball time",
            "general time",
            "RMS resid.",
        ]
    ]
    for r in study.runs:
        for p in r.probes:
            h, c, fm = p.heating, p.cooling, p.formula
            rows.append(
                [
                    r.name,
                    p.channel + (" *" if p.channel == r.slowest else ""),
                    p.piece,
                    p.position,
                    _num(p.F_min),
                    "—" if p.passed is None else ("yes" if p.passed else "NO"),
                    _time(site, h.f_s) if h else "—",
                    _num(h.j if h else None, ".3f"),
                    _time(site, c.f_s) if c else "—",
                    _num(c.j if c else None, ".3f"),
                    _time(site, fm.from_start_min * 60.0) if fm else "—",
                    _time(site, fm.general_min * 60.0) if fm and fm.general_min is not None else "—",
                    _num(p.rmse_K, ".2f", " K"),
                ]
            )
    note = (
        "* slowest probe of its run. F: measured lethality by the general method over the whole record. f, j: "
        "Ball's heating and cooling factors from the straight part of the semi-logarithmic curve (corrected zero "
        "after 58 % of the come-up time). Ball time: the formula method's heating time to the requirement from "
        "the step start, g derived from the idealised heating line (no table; heating lethality only, the safe "
        "side); general time: when the measured heating reached it. RMS resid.: measured minus the plan's prediction."
    )
    widths = cols(W, [1.0, 0.6, 1.3, 0.7, 0.6, 0.5, 0.7, 0.5, 0.7, 0.5, 0.7, 0.7, 0.7])
    return st.h("Probes") + [table(rows, widths, st, small=True), st.p(note, st.small)]


def _fit(study, site, st, W) -> list:
    cal = study.calibration
    if cal is None:
        return []
    text = (
        f"Effective h fitted to every probe at once over the first step: {cal.h_W_m2K:.4g} W/m²K (95 % interval "
        f"{cal.h_ci95[0]:.4g} to {cal.h_ci95[1]:.4g}); the plan's {cal.plan_h_W_m2K:.4g} W/m²K; RMS residual "
        f"{cal.rmse_K:.2f} K over {cal.n_points} readings."
    )
    if cal.alpha_factor is not None:
        text += f" Diffusivity factor {cal.alpha_factor:.3f} ({cal.alpha_ci95[0]:.3f} to {cal.alpha_ci95[1]:.3f})."
    return st.h("Surface coefficient from the trial") + [st.p(text)]


def _charts(study, site, st, W) -> list:
    out = st.h("Probe curves and the plan's prediction")
    for r in study.runs:
        out.append(KeepTogether([st.b(f"Run {r.name}"), run_chart(r, site, W, 150.0), Spacer(1, 4)]))
    return out


def _build(study, site, st, paper, date, prepared_by) -> bytes:
    pagesize = PAPER_SIZES[paper]
    lm = 14 * mm
    W = pagesize[0] - 2 * lm
    probe = Paragraph("<b>Caution.</b> " + esc(CAUTION), st.caution)
    _, cap_h = probe.wrap(W - 8, 200)
    box_h = cap_h + 6
    story = [
        st.p(f"Heat-penetration study: {esc(study.plan.title)}", st.title, raw=True),
        st.p(
            f"{site.plant} — {len(study.runs)} run(s), {len(study.probes)} product probe(s) — {date}"
            + (f" — prepared by {prepared_by}" if prepared_by else "")
        ),
        Spacer(1, 4),
    ]
    story += _summary(study, site, st, W) + _runs(study, site, st, W) + _probes(study, site, st, W)
    story += _fit(study, site, st, W) + _charts(study, site, st, W)
    notes = study.all_notes()
    if notes:
        story += st.h("Notes") + [st.p("• " + n, st.small) for n in notes]
    buf = io.BytesIO()
    doc = SimpleDocTemplate(
        buf,
        pagesize=pagesize,
        leftMargin=lm,
        rightMargin=lm,
        topMargin=13 * mm,
        bottomMargin=8 * mm + box_h + 4 * mm,
        title=printable(f"Heat-penetration study: {study.plan.title}"),
        author=printable(site.plant),
        creator=f"procplan {__version__}",
        invariant=1,
    )
    doc.build(
        story,
        canvasmaker=numbered_canvas(f"{site.plant} — heat-penetration study — {date}", st.caution, box_h),
    )
    return buf.getvalue()


def study_sheet_pdf(
    study, *, site: SiteSettings, paper: str = "a4", prepared_by: str = "", date: _dt.date | str | None = None
) -> bytes:
    """The heat-penetration study sheet of a :class:`procplan.studies.trials.TrialStudy` as PDF bytes.

    Parameters
    ----------
    study : the study (runs, probes, verdict)
    site : site settings (plant, display units, paper)
    paper : a key of ``procplan.files.site.PAPER_SIZES``
    prepared_by : name printed in the header line
    date : the sheet's date (default today); a date or ISO text
    """
    validate.choice("paper", paper, PAPER_SIZES)
    if not isinstance(prepared_by, str) or len(prepared_by) > 60 or any(ord(c) < 32 for c in prepared_by):
        raise InvalidInputError("prepared_by", prepared_by, "text of at most 60 printable characters")
    if date is None:
        date_text = _dt.date.today().isoformat()
    else:
        try:
            date_text = (
                date.isoformat()
                if isinstance(date, _dt.date)
                else _dt.date.fromisoformat(str(date)).isoformat()
            )
        except ValueError:
            raise InvalidInputError("date", date, "an ISO date YYYY-MM-DD") from None
    register_fonts()
    return _build(study, site, Styles(7.4), paper, date_text, prepared_by)
