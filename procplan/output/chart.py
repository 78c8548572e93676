"""The sheet's temperature chart as vector graphics (reportlab.graphics), readable in black and white.

Core, surface and mean are all black and told apart by line weight and dash pattern (solid, dashed,
dotted). Targets and rule limits are grey reference lines: horizontal at their temperature, vertical at a
rule stage's deadline; labels sit outside the plot and are nudged apart so they never overlap.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from reportlab.graphics.shapes import Drawing, Group, Line, PolyLine, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from procplan.output.sheet_data import stage_deadlines

BLACK = colors.black
GREY = colors.Color(0.42, 0.42, 0.42)
LIGHT = colors.Color(0.80, 0.80, 0.80)

#: Line styles of the three monitored points: (width [pt], dash pattern or None).
POINT_STYLES: dict[str, tuple[float, list[float] | None]] = {
    "core": (1.6, None),
    "surface": (0.9, [5.0, 2.5]),
    "mean": (1.0, [0.8, 1.8]),
}
TARGET_DASH = [7.0, 2.0, 1.5, 2.0]
RULE_DASH = [3.0, 2.0]
#: A stage deadline later than this multiple of the plan's length is noted rather than drawn.
DEADLINE_STRETCH = 1.6


@dataclass(frozen=True)
class RefLine:
    value: float  # display units
    label: str
    kind: str  # "target" or "rule"


def nice_ticks(lo: float, hi: float, n: int = 6) -> np.ndarray:
    """Round tick values covering [lo, hi] with about ``n`` intervals (steps of 1, 2, 2.5 or 5 × 10^k).

    >>> nice_ticks(0.0, 190.0).tolist()
    [0.0, 50.0, 100.0, 150.0, 200.0]
    """
    if not hi > lo:
        hi = lo + 1.0
    raw = (hi - lo) / n
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1.0, 2.0, 2.5, 5.0, 10.0) if m * mag >= raw)
    start = math.floor(lo / step + 1e-9) * step
    stop = math.ceil(hi / step - 1e-9) * step
    return np.round(np.arange(start, stop + 0.5 * step, step), 10)


def spread_positions(wanted: list[float], gap: float, lo: float, hi: float) -> list[float]:
    """Positions near ``wanted`` (any order) at least ``gap`` apart, kept inside [lo, hi] where possible.

    >>> spread_positions([10.0, 11.0, 30.0], 5.0, 0.0, 100.0)
    [8.0, 13.0, 30.0]
    """
    order = sorted(range(len(wanted)), key=lambda i: wanted[i])
    # clusters of labels packed ``gap`` apart, each centred on the mean of its wishes; merged left to right
    clusters: list[list[float]] = []  # [start, count, sum of wishes]

    def place(total: float, n: float) -> float:
        start = total / n - gap * (n - 1) / 2.0
        return max(min(start, hi - gap * (n - 1)), lo)

    for i in order:
        w = float(wanted[i])
        clusters.append([place(w, 1.0), 1.0, w])
        while len(clusters) > 1 and clusters[-2][0] + gap * clusters[-2][1] > clusters[-1][0] + 1e-9:
            b = clusters.pop()
            a = clusters[-1]
            a[1] += b[1]
            a[2] += b[2]
            a[0] = place(a[2], a[1])
    pos: list[float] = []
    for start, n, _ in clusters:
        pos.extend(start + gap * j for j in range(int(n)))
    out = [0.0] * len(pos)
    for k, i in enumerate(order):
        out[i] = pos[k]
    return out


def reference_lines(result, site) -> list[RefLine]:
    """Target temperatures of the steps and the cooling rule's stage and band temperatures, merged by value."""
    refs: list[RefLine] = []
    for i, step in enumerate(result.plan.steps):
        if step.stop_when_core_C is not None:
            refs.append(
                RefLine(site.temperature_value(step.stop_when_core_C), f"step {i + 1} stop: core", "target")
            )
        for tg in step.targets:
            refs.append(
                RefLine(
                    site.temperature_value(tg.temperature_C), f"step {i + 1} target: {tg.point}", "target"
                )
            )
    oc = result.outcomes
    if oc is not None and oc.rule_check is not None:
        for st in oc.rule_check.stages:
            refs.append(RefLine(site.temperature_value(st.stage.to_C), f"rule stage {st.index + 1}", "rule"))
        for b in oc.rule_check.bands:
            for v, end in ((b.band.low_C, "low"), (b.band.high_C, "high")):
                if v is not None:
                    refs.append(RefLine(site.temperature_value(v), f"rule band {end}", "rule"))
    merged: dict[float, RefLine] = {}
    for r in refs:
        key = round(r.value, 6)
        if key in merged:
            old = merged[key]
            kind = "rule" if "rule" in (old.kind, r.kind) else "target"
            merged[key] = RefLine(r.value, f"{old.label}; {r.label}", kind)
        else:
            merged[key] = r
    return sorted(merged.values(), key=lambda r: r.value)


def _line(x0, y0, x1, y1, color, width, dash=None) -> Line:
    ln = Line(x0, y0, x1, y1, strokeColor=color, strokeWidth=width)
    if dash:
        ln.strokeDashArray = dash
    return ln


def _string(x, y, text, font, size, anchor="start", color=BLACK) -> String:
    return String(x, y, text, fontName=font, fontSize=size, textAnchor=anchor, fillColor=color)


def history_chart(
    result, site, width: float, height: float, *, font: str, bold: str, size: float = 7.0
) -> Drawing:
    """A Drawing of core, surface and mean temperature against time, with targets and rule limits.

    Parameters
    ----------
    result : PlanResult
    site : SiteSettings (display units)
    width, height : size of the drawing [pt]
    font, bold : registered font names
    size : label font size [pt]
    """
    d = Drawing(width, height)
    hist = result.history
    to_t = (lambda s: s / 3600.0) if site.time_unit == "h" else (lambda s: s / 60.0)
    t = to_t(hist["time_s"].to_numpy())
    series = {
        p: np.array([site.temperature_value(v) for v in hist[f"{p}_C"].to_numpy()]) for p in POINT_STYLES
    }
    refs = reference_lines(result, site)
    deadlines = stage_deadlines(result)
    t_end = float(t[-1]) if t.size else 1.0
    x_hi = t_end
    far: list[str] = []
    drawn_deadlines = []
    for dl in deadlines:
        x = to_t(dl.deadline_s)
        if x <= DEADLINE_STRETCH * t_end:
            x_hi = max(x_hi, x)
            drawn_deadlines.append((x, dl))
        else:
            far.append(f"stage {dl.index + 1} limit at {site.format_time(dl.deadline_s / 60.0)}")
    values = np.concatenate([s for s in series.values()] + [np.array([r.value for r in refs])])
    y_lo, y_hi = float(np.min(values)), float(np.max(values))
    pad = 0.04 * max(y_hi - y_lo, 1.0)
    yt = nice_ticks(y_lo - pad, y_hi + pad, 8)
    xt = nice_ticks(0.0, x_hi, 8)
    y0v, y1v = float(yt[0]), float(yt[-1])
    x0v, x1v = 0.0, float(xt[-1])

    label_w = max(
        [stringWidth(f"{r.label} {r.value:.1f} {site.temperature_symbol}", font, size - 0.5) for r in refs]
        + [0.0]
    )
    left, right = 38.0, min(max(label_w + 16.0, 40.0), 0.34 * width)
    legend_h, bottom_axis = 12.0, 24.0
    row_a = size + 4.0  # step names, just above the plot
    row_b = size + 3.0 if (drawn_deadlines or far) else 0.0  # rule deadlines above them
    top = row_a + row_b + 1.0
    px0, px1 = left, width - right
    py0, py1 = legend_h + bottom_axis, height - top

    def X(v):
        return px0 + (v - x0v) / (x1v - x0v) * (px1 - px0)

    def Y(v):
        return py0 + (v - y0v) / (y1v - y0v) * (py1 - py0)

    g = Group()
    g.add(Rect(px0, py0, px1 - px0, py1 - py0, strokeColor=BLACK, strokeWidth=0.6, fillColor=None))
    for v in yt:
        g.add(_line(px0, Y(v), px1, Y(v), LIGHT, 0.3))
        g.add(_line(px0 - 3, Y(v), px0, Y(v), BLACK, 0.6))
        g.add(_string(px0 - 5, Y(v) - size / 3.0, f"{v:g}", font, size, "end"))
    for v in xt:
        g.add(_line(X(v), py0, X(v), py1, LIGHT, 0.3))
        g.add(_line(X(v), py0 - 3, X(v), py0, BLACK, 0.6))
        g.add(_string(X(v), py0 - 3 - size, f"{v:g}", font, size, "middle"))
    g.add(
        _string(
            (px0 + px1) / 2.0,
            legend_h + 2.0,
            f"Time from the start of the plan [{site.time_symbol}]",
            font,
            size,
            "middle",
        )
    )
    ytitle = String(
        0, 0, f"Temperature [{site.temperature_symbol}]", fontName=font, fontSize=size, textAnchor="middle"
    )
    yg = Group(ytitle)
    yg.translate(9.0, (py0 + py1) / 2.0)
    yg.rotate(90)
    g.add(yg)

    # step boundaries and names (above the plot)
    for sr in result.steps:
        xs = X(to_t(sr.start_s))
        if sr.index > 0:
            g.add(_line(xs, py0, xs, py1 + 2.0, GREY, 0.5))
        xe = X(to_t(sr.end_s)) if sr.index < len(result.steps) - 1 else px1
        name = f"{sr.index + 1} {sr.name}"
        room = xe - xs - 3.0
        while name and stringWidth(name, font, size - 0.5) > room:
            name = name[:-1]
        if name:
            g.add(_string(xs + 2.0, py1 + 3.0, name, font, size - 0.5, color=GREY))

    # horizontal reference lines, labels in the right gutter
    wanted = [Y(r.value) for r in refs]
    placed = spread_positions(wanted, size + 1.0, py0, py1)
    for r, yw, yp in zip(refs, wanted, placed, strict=True):
        dash = RULE_DASH if r.kind == "rule" else TARGET_DASH
        g.add(_line(px0, yw, px1, yw, GREY, 0.7, dash))
        g.add(_line(px1, yw, px1 + 6.0, yp, GREY, 0.4))
        g.add(
            _string(
                px1 + 8.0,
                yp - size / 3.0,
                f"{r.label} {r.value:.1f} {site.temperature_symbol}",
                font,
                size - 0.5,
            )
        )

    # vertical rule deadlines, labels in the top row; deadlines far beyond the plan noted at the right
    yb = py1 + row_a + 1.0
    right_end = px1
    if far:
        note = "; ".join(far) + " (beyond the time axis)"
        g.add(_string(px1, yb, note, font, size - 0.5, "end", GREY))
        right_end = px1 - stringWidth(note, font, size - 0.5) - 8.0
    if drawn_deadlines:
        texts = [f"stage {dl.index + 1} limit" for _, dl in drawn_deadlines]
        widths = [stringWidth(s, font, size - 0.5) for s in texts]
        xs_w = [X(x) for x, _ in drawn_deadlines]
        gap = max(widths) + 6.0
        xs_p = spread_positions(xs_w, gap, px0 + gap / 2.0, max(px0 + gap / 2.0, right_end - gap / 2.0))
        for xw, xp, s in zip(xs_w, xs_p, texts, strict=True):
            g.add(_line(xw, py0, xw, yb - 1.0, GREY, 0.8, RULE_DASH))
            g.add(_string(xp, yb, s, font, size - 0.5, "middle"))

    # the three histories
    for p, (w, dash) in POINT_STYLES.items():
        pts: list[float] = []
        for a, b in zip(t, series[p], strict=True):
            pts.extend((X(float(a)), Y(float(b))))
        pl = PolyLine(pts, strokeColor=BLACK, strokeWidth=w, strokeLineJoin=1)
        if dash:
            pl.strokeDashArray = dash
        g.add(pl)

    # legend
    items = [(p, POINT_STYLES[p][0], POINT_STYLES[p][1], BLACK) for p in POINT_STYLES]
    if any(r.kind == "target" for r in refs):
        items.append(("target", 0.7, TARGET_DASH, GREY))
    if any(r.kind == "rule" for r in refs) or drawn_deadlines:
        items.append(("rule limit", 0.7, RULE_DASH, GREY))
    if len(result.steps) > 1:
        items.append(("step change", 0.5, None, GREY))
    x = px0
    for label, w, dash, col in items:
        g.add(_line(x, 4.0, x + 20.0, 4.0, col, w, dash))
        g.add(_string(x + 23.0, 4.0 - size / 3.0, label, font, size))
        x += 23.0 + stringWidth(label, font, size) + 12.0
    d.add(g)
    return d
