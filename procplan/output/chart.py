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
    figure: str = ""  # the value as printed when it is a rule's published figure ("70 °F"); "": from value

    def text(self, symbol: str) -> str:
        """The label and the value, e.g. ``"rule stage 1 70 °F"``."""
        return f"{self.label} {self.figure or f'{self.value:.1f} {symbol}'}"


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
                    site.temperature_value(tg.temperature_C), f"step {i + 1} target: {tg.label}", "target"
                )
            )
    oc = result.outcomes
    if oc is not None and oc.rule_check is not None:
        for st in oc.rule_check.stages:
            figure = st.stage.to_text(site.temperature_unit)
            refs.append(
                RefLine(site.temperature_value(st.stage.to_C), f"rule stage {st.index + 1}", "rule", figure)
            )
        for b in oc.rule_check.bands:
            ends = ((b.band.low_C, "low", b.band.low_text), (b.band.high_C, "high", b.band.high_text))
            for v, end, text in ends:
                if v is not None:
                    figure = text(site.temperature_unit)
                    refs.append(RefLine(site.temperature_value(v), f"rule band {end}", "rule", figure))
    merged: dict[float, RefLine] = {}
    for r in refs:
        key = round(r.value, 6)
        if key in merged:
            old = merged[key]
            kind = "rule" if "rule" in (old.kind, r.kind) else "target"
            merged[key] = RefLine(r.value, f"{old.label}; {r.label}", kind, old.figure or r.figure)
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


@dataclass(frozen=True)
class _Plot:
    """The plot area [pt] and the data range it shows (display units), with the maps between them."""

    px0: float
    px1: float
    py0: float
    py1: float
    x0v: float
    x1v: float
    y0v: float
    y1v: float
    font: str
    size: float

    def X(self, v):
        return self.px0 + (v - self.x0v) / (self.x1v - self.x0v) * (self.px1 - self.px0)

    def Y(self, v):
        return self.py0 + (v - self.y0v) / (self.y1v - self.y0v) * (self.py1 - self.py0)


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
    hist = result.history
    to_t = (lambda s: s / 3600.0) if site.time_unit == "h" else (lambda s: s / 60.0)
    t = to_t(hist["time_s"].to_numpy())
    series = {
        p: np.array([site.temperature_value(v) for v in hist[f"{p}_C"].to_numpy()]) for p in POINT_STYLES
    }
    refs = reference_lines(result, site)
    t_end = float(t[-1]) if t.size else 1.0
    drawn_deadlines, far = _split_deadlines(result, site, to_t, t_end)
    x_hi = max([t_end] + [x for x, _ in drawn_deadlines])
    values = np.concatenate([s for s in series.values()] + [np.array([r.value for r in refs])])
    y_lo, y_hi = float(np.min(values)), float(np.max(values))
    pad = 0.04 * max(y_hi - y_lo, 1.0)
    yt = nice_ticks(y_lo - pad, y_hi + pad, 8)
    xt = nice_ticks(0.0, x_hi, 8)

    label_w = max([stringWidth(r.text(site.temperature_symbol), font, size - 0.5) for r in refs] + [0.0])
    left, right = 38.0, min(max(label_w + 16.0, 40.0), 0.34 * width)
    legend_h, bottom_axis = 12.0, 24.0
    row_a = size + 4.0  # step names, just above the plot
    row_b = size + 3.0 if (drawn_deadlines or far) else 0.0  # rule deadlines above them
    top = row_a + row_b + 1.0
    pl = _Plot(
        left,
        width - right,
        legend_h + bottom_axis,
        height - top,
        0.0,
        float(xt[-1]),
        float(yt[0]),
        float(yt[-1]),
        font,
        size,
    )
    g = Group()
    _draw_axes(g, pl, xt, yt, site, legend_h)
    _draw_steps(g, pl, result, to_t)
    _draw_references(g, pl, refs, site)
    _draw_deadlines(g, pl, drawn_deadlines, far, pl.py1 + row_a + 1.0)
    _draw_histories(g, pl, t, series)
    _draw_legend(g, pl, result, refs, bool(drawn_deadlines))
    d = Drawing(width, height)
    d.add(g)
    return d


def _split_deadlines(result, site, to_t, t_end: float) -> tuple[list, list[str]]:
    """Rule-stage deadlines to draw (x in display units, deadline) and notes of those far beyond the plan."""
    far: list[str] = []
    drawn_deadlines = []
    for dl in stage_deadlines(result):
        x = to_t(dl.deadline_s)
        if x <= DEADLINE_STRETCH * t_end:
            drawn_deadlines.append((x, dl))
        else:
            far.append(f"stage {dl.index + 1} limit at {site.format_time_hm(dl.deadline_s / 60.0)}")
    return drawn_deadlines, far


def _draw_axes(g: Group, pl: _Plot, xt, yt, site, legend_h: float) -> None:
    """Frame, grid, ticks and axis titles."""
    X, Y, font, size = pl.X, pl.Y, pl.font, pl.size
    px0, px1, py0, py1 = pl.px0, pl.px1, pl.py0, pl.py1
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


def _draw_steps(g: Group, pl: _Plot, result, to_t) -> None:
    """Step boundaries and names (above the plot)."""
    font, size = pl.font, pl.size
    for sr in result.steps:
        xs = pl.X(to_t(sr.start_s))
        if sr.index > 0:
            g.add(_line(xs, pl.py0, xs, pl.py1 + 2.0, GREY, 0.5))
        xe = pl.X(to_t(sr.end_s)) if sr.index < len(result.steps) - 1 else pl.px1
        name = f"{sr.index + 1} {sr.name}"
        room = xe - xs - 3.0
        while name and stringWidth(name, font, size - 0.5) > room:
            name = name[:-1]
        if name:
            g.add(_string(xs + 2.0, pl.py1 + 3.0, name, font, size - 0.5, color=GREY))


def _draw_references(g: Group, pl: _Plot, refs: list[RefLine], site) -> None:
    """Horizontal reference lines, labels in the right gutter."""
    size, px0, px1 = pl.size, pl.px0, pl.px1
    wanted = [pl.Y(r.value) for r in refs]
    placed = spread_positions(wanted, size + 1.0, pl.py0, pl.py1)
    for r, yw, yp in zip(refs, wanted, placed, strict=True):
        dash = RULE_DASH if r.kind == "rule" else TARGET_DASH
        g.add(_line(px0, yw, px1, yw, GREY, 0.7, dash))
        g.add(_line(px1, yw, px1 + 6.0, yp, GREY, 0.4))
        g.add(
            _string(
                px1 + 8.0,
                yp - size / 3.0,
                r.text(site.temperature_symbol),
                pl.font,
                size - 0.5,
            )
        )


def _draw_deadlines(g: Group, pl: _Plot, drawn_deadlines: list, far: list[str], yb: float) -> None:
    """Vertical rule deadlines, labels in the top row at height yb; deadlines far beyond the plan noted at
    the right."""
    font, size, px0, px1 = pl.font, pl.size, pl.px0, pl.px1
    right_end = px1
    if far:
        note = "; ".join(far) + " (beyond the time axis)"
        g.add(_string(px1, yb, note, font, size - 0.5, "end", GREY))
        right_end = px1 - stringWidth(note, font, size - 0.5) - 8.0
    if drawn_deadlines:
        texts = [f"stage {dl.index + 1} limit" for _, dl in drawn_deadlines]
        widths = [stringWidth(s, font, size - 0.5) for s in texts]
        xs_w = [pl.X(x) for x, _ in drawn_deadlines]
        gap = max(widths) + 6.0
        xs_p = spread_positions(xs_w, gap, px0 + gap / 2.0, max(px0 + gap / 2.0, right_end - gap / 2.0))
        for xw, xp, s in zip(xs_w, xs_p, texts, strict=True):
            g.add(_line(xw, pl.py0, xw, yb - 1.0, GREY, 0.8, RULE_DASH))
            g.add(_string(xp, yb, s, font, size - 0.5, "middle"))


def _draw_histories(g: Group, pl: _Plot, t: np.ndarray, series: dict[str, np.ndarray]) -> None:
    """The three histories, black, told apart by width and dash."""
    for p, (w, dash) in POINT_STYLES.items():
        pts: list[float] = []
        for a, b in zip(t, series[p], strict=True):
            pts.extend((pl.X(float(a)), pl.Y(float(b))))
        line = PolyLine(pts, strokeColor=BLACK, strokeWidth=w, strokeLineJoin=1)
        if dash:
            line.strokeDashArray = dash
        g.add(line)


def _draw_legend(g: Group, pl: _Plot, result, refs: list[RefLine], has_deadlines: bool) -> None:
    """The legend below the time axis."""
    font, size = pl.font, pl.size
    items = [(p, POINT_STYLES[p][0], POINT_STYLES[p][1], BLACK) for p in POINT_STYLES]
    if any(r.kind == "target" for r in refs):
        items.append(("target", 0.7, TARGET_DASH, GREY))
    if any(r.kind == "rule" for r in refs) or has_deadlines:
        items.append(("rule limit", 0.7, RULE_DASH, GREY))
    if len(result.steps) > 1:
        items.append(("step change", 0.5, None, GREY))
    x = pl.px0
    for label, w, dash, col in items:
        g.add(_line(x, 4.0, x + 20.0, 4.0, col, w, dash))
        g.add(_string(x + 23.0, 4.0 - size / 3.0, label, font, size))
        x += 23.0 + stringWidth(label, font, size) + 12.0
