"""The printable batch-plan sheet: one or two pages of PDF from a PlanResult.

Made with reportlab (pure Python, no system libraries: the same bytes on every machine). The font is
Bitstream Vera, which ships inside reportlab, so the sheet needs no installed fonts either. Text is set
with platypus Paragraphs and Tables so long texts wrap instead of overlapping; the chart is vector
graphics (:mod:`procplan.output.chart`). Every page carries the standing caution in a box.

The numbers printed come from the result as it is (:mod:`procplan.output.sheet_data` for checkpoints); the
sheet computes nothing physical.
"""

from __future__ import annotations

import datetime as _dt
import html
import io
import os
from collections.abc import Callable

import reportlab
from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import (
    CondPageBreak,
    KeepTogether,
    Paragraph,
    SimpleDocTemplate,
    Spacer,
    Table,
    TableStyle,
)

from procplan import validate
from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.errors import InvalidInputError
from procplan.files.site import PAPER_SIZES, SiteSettings
from procplan.output.chart import history_chart
from procplan.output.report import format_f, format_log_reduction
from procplan.output.sheet_data import ACTION_IF_MISSED, checkpoints, document_number, margin_note, plan_hash

FONT, BOLD = "ProcplanSans", "ProcplanSans-Bold"
_FONT_DIR = os.path.join(os.path.dirname(reportlab.__file__), "fonts")
_GLYPHS: set[int] = set()
#: Characters the font lacks, with what is printed instead.
_REPLACE = {"→": "to", "Δ": "delta ", "≲": "<=", "\u202f": " ", "\u2009": " "}
#: Layout densities tried in turn until the sheet fits two pages: (font size, chart height [pt]).
DENSITIES = ((7.6, 205.0), (7.3, 190.0), (7.0, 175.0), (6.6, 155.0), (6.2, 135.0), (5.8, 120.0))
MAX_PAGES = 2


def _register_fonts() -> None:
    if FONT in pdfmetrics.getRegisteredFontNames():
        return
    regular = TTFont(FONT, os.path.join(_FONT_DIR, "Vera.ttf"))
    pdfmetrics.registerFont(regular)
    pdfmetrics.registerFont(TTFont(BOLD, os.path.join(_FONT_DIR, "VeraBd.ttf")))
    pdfmetrics.registerFontFamily(FONT, normal=FONT, bold=BOLD, italic=FONT, boldItalic=BOLD)
    _GLYPHS.update(regular.face.charToGlyph)


def printable(text: object) -> str:
    """Text with every character the sheet's font lacks replaced (→ by "to"; others by "?")."""
    _register_fonts()
    s = str(text)
    for a, b in _REPLACE.items():
        s = s.replace(a, b)
    return "".join(ch if (ord(ch) in _GLYPHS or ch in "\n\t") else "?" for ch in s)


def _esc(text: object) -> str:
    return html.escape(printable(text), quote=False)


class _Styles:
    def __init__(self, size: float) -> None:
        self.size = size
        lead = size * 1.22
        self.body = ParagraphStyle("body", fontName=FONT, fontSize=size, leading=lead, alignment=TA_LEFT)
        self.small = ParagraphStyle(
            "small", parent=self.body, fontSize=size - 0.8, leading=(size - 0.8) * 1.2
        )
        self.bold = ParagraphStyle("bold", parent=self.body, fontName=BOLD)
        self.head = ParagraphStyle(
            "head",
            parent=self.body,
            fontName=BOLD,
            fontSize=size + 1.6,
            leading=(size + 1.6) * 1.25,
            spaceBefore=size * 0.7,
            spaceAfter=size * 0.25,
        )
        self.title = ParagraphStyle(
            "title", parent=self.body, fontName=BOLD, fontSize=size + 5, leading=(size + 5) * 1.2
        )
        self.caution = ParagraphStyle(
            "caution", parent=self.body, fontSize=size - 0.6, leading=(size - 0.6) * 1.22
        )

    def h(self, text: object) -> list:
        """A section heading that never sits alone at the foot of a page."""
        return [CondPageBreak(self.size * 9), Paragraph(_esc(text), self.head)]

    def p(self, text: object, style: ParagraphStyle | None = None, *, raw: bool = False) -> Paragraph:
        return Paragraph(str(text) if raw else _esc(text), style or self.body)

    def b(self, text: object) -> Paragraph:
        return Paragraph(_esc(text), self.bold)


def _table(
    rows, widths, st: _Styles, *, header: bool = True, extra=(), row_heights=None, small: bool = False
) -> Table:
    """A wrapped table: every cell a Paragraph, a light grid, a grey bold header row."""
    body = st.small if small else st.body
    cells = [
        [
            c if not isinstance(c, (str, int, float)) else (st.b(c) if (header and i == 0) else st.p(c, body))
            for c in row
        ]
        for i, row in enumerate(rows)
    ]
    t = Table(
        cells, colWidths=_fit_widths(cells, widths), rowHeights=row_heights, repeatRows=1 if header else 0
    )
    style = [
        ("GRID", (0, 0), (-1, -1), 0.35, colors.Color(0.35, 0.35, 0.35)),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("TOPPADDING", (0, 0), (-1, -1), 1.2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 1.6),
        ("LEFTPADDING", (0, 0), (-1, -1), 2.2),
        ("RIGHTPADDING", (0, 0), (-1, -1), 2.2),
    ]
    if header:
        style.append(("BACKGROUND", (0, 0), (-1, 0), colors.Color(0.88, 0.88, 0.88)))
    t.setStyle(TableStyle(style + list(extra)))
    return t


PADDING = 4.4 + 0.6


def _fit_widths(cells, widths: list[float]) -> list[float]:
    """Column widths widened so that no word is broken, taking the room from columns that have it spare.

    Every column gets at least its longest word (plus padding); the extra comes from the other columns in
    proportion to their spare width. When the words cannot all fit, the given widths are kept.
    """
    need = [0.0] * len(widths)
    for row in cells:
        for j, c in enumerate(row):
            if not isinstance(c, Paragraph):
                continue
            words = c.getPlainText().split()
            if words:
                w = max(pdfmetrics.stringWidth(x, c.style.fontName, c.style.fontSize) for x in words)
                need[j] = max(need[j], min(w, 0.45 * sum(widths)) + PADDING)
    if sum(need) > sum(widths):
        return list(widths)
    out = list(widths)
    short = sum(max(0.0, n - w) for n, w in zip(need, out, strict=True))
    if short <= 0:
        return out
    spare = [max(0.0, w - n) for n, w in zip(need, out, strict=True)]
    total_spare = sum(spare)
    return [max(n, w - short * sp / total_spare) for n, w, sp in zip(need, out, spare, strict=True)]


def _cols(total: float, fractions: list[float]) -> list[float]:
    s = sum(fractions)
    return [total * f / s for f in fractions]


def _fixed(x: float, digits: int) -> str:
    """Fixed-point text without a minus sign on a value that rounds to zero.

    >>> _fixed(-0.001, 2)
    '0.00'
    """
    text = f"{x:.{digits}f}"
    return text.lstrip("-") if float(text) == 0 else text


def _difference_text(site: SiteSettings, difference_K: float) -> str:
    """A temperature difference: "1 K", or "1.8 °F" on a Fahrenheit site."""
    if site.temperature_unit == "F":
        return f"{site.temperature_difference(difference_K):g} °F"
    return f"{difference_K:g} K"


def _expected_cell(st: _Styles, site: SiteSettings, c):
    """The expected temperature; marked when the prediction itself lies beyond the action limit."""
    text = site.format_temperature(c.expected_C)
    outside = (c.low_C is not None and c.expected_C < c.low_C - 1e-9) or (
        c.high_C is not None and c.expected_C > c.high_C + 1e-9
    )
    return st.b(text + " PREDICTED OUTSIDE") if outside else text


def _limit_text(site: SiteSettings, lo: float | None, hi: float | None) -> str:
    if lo is not None and hi is not None:
        return (
            f"{site.temperature_value(lo):.1f} to {site.temperature_value(hi):.1f} {site.temperature_symbol}"
        )
    if hi is not None:
        return f"≤ {site.format_temperature(hi)}"
    return f"≥ {site.format_temperature(lo)}"


def _blank(width_chars: int = 14) -> str:
    return "_" * width_chars


def _machine(sr, step) -> str:
    eq = sr.surface.breakdown.get("equipment_record")
    if eq is not None:
        return f"{eq.name} ({eq.id})"
    return "given h and medium"


def _settings_text(sr, step, site: SiteSettings) -> str:
    eq = sr.surface.breakdown.get("equipment_record")
    used = sr.surface.breakdown.get("settings") or step.settings_dict
    parts = []
    for k, v in (used or {}).items():
        unit = ""
        if eq is not None and k in eq.settings:
            unit = eq.settings[k].unit
        if not isinstance(v, (int, float)):
            parts.append(f"{k} = {v}")
        elif (unit == "°C" or k.endswith("_C")) and site.temperature_unit == "F":
            parts.append(f"{k} = {v:g} °C ({site.format_temperature(v)})")
        else:
            parts.append(f"{k} = {v:g}{(' ' + unit) if unit else ''}")
    if step.settings_profile:
        parts.append(f"profile of {len(step.settings_profile)} set points")
    if step.medium_profile:
        parts.append(f"medium profile of {len(step.medium_profile)} points")
    return "; ".join(parts) or "—"


def _range(values, fmt: Callable[[float], str]) -> str:
    lo, hi = min(values), max(values)
    return fmt(lo) if abs(hi - lo) < 1e-9 else f"{fmt(lo)} … {fmt(hi)}"


# ------------------------------------------------------------------------------------------------
# sections


def _header(result, site, st, W, *, lot_id, revision, date, prepared_by, doc_no, line):
    plan = result.plan
    prod = plan.product
    lot = lot_id or _blank(18)
    rows = [
        [
            st.b("Plant"),
            st.p(f"{site.plant}" + (f" — {site.address}" if site.address else "")),
            st.b("Document no."),
            st.p(doc_no),
        ],
        [st.b("Line"), st.p(line or _blank(18)), st.b("Revision"), st.p(revision)],
        [
            st.b("Product"),
            st.p(prod.name + (f" — {prod.description}" if prod.description else "")),
            st.b("Date"),
            st.p(date),
        ],
        [st.b("Plan"), st.p(plan.title), st.b("Lot ID"), st.p(lot)],
    ]
    t1 = _table(rows, _cols(W, [0.12, 0.58, 0.13, 0.17]), st, header=False)
    sig_rows = [
        ["", "Prepared by", "Checked by", "Approved by"],
        [st.b("Name"), st.p(prepared_by or ""), "", ""],
        [st.b("Signature"), "", "", ""],
        [st.b("Date"), "", "", ""],
    ]
    # generous writing space in the signature rows
    t2 = _table(sig_rows, _cols(W, [0.12, 0.293, 0.293, 0.294]), st, row_heights=[None] + [st.size * 2.3] * 3)
    return [st.p("Batch plan sheet", st.title), Spacer(1, 2), t1, Spacer(1, 3), t2]


def _product(result, site, st, W):
    plan = result.plan
    prod = plan.product
    ch = plan.checks
    props = result.properties
    g = prod.geometry
    n = ch.pieces_per_batch
    rows = [
        [
            st.b("Shape and size"),
            st.p(g.describe()),
            st.b("Mass per piece"),
            st.p(f"{result.piece_mass_kg:.3f} kg"),
        ],
        [
            st.b("Pieces per batch"),
            st.p(f"{n} (batch {n * result.piece_mass_kg:.1f} kg)"),
            st.b("Start temperature"),
            st.p(site.format_temperature(plan.start_temperature_C)),
        ],
        [
            st.b("Properties"),
            st.p(props.source),
            st.b("Initial freezing point"),
            st.p(
                site.format_temperature(props.initial_freezing_C, 2)
                if props.initial_freezing_C is not None
                else "none (no freezing)"
            ),
        ],
    ]
    if prod.packaging:
        pk = "; ".join(
            f"{layer.name} {layer.thickness_m * 1000:g} mm"
            + (" air gap" if layer.k_W_mK is None else f", k {layer.k_W_mK:g} W/mK")
            for layer in prod.packaging
        )
        rows.append(
            [
                st.b("Packaging"),
                st.p(pk),
                st.b("Surface"),
                st.p("unwrapped (moisture loss)" if prod.unwrapped else "wrapped"),
            ]
        )
    t1 = _table(rows, _cols(W, [0.15, 0.47, 0.17, 0.21]), st, header=False)
    eq_rows = [["Step", "Machine", "Settings", "Medium", "h [W/m²K]"]]
    for sr, step in zip(result.steps, plan.steps, strict=True):
        eq_rows.append(
            [
                f"{sr.index + 1} {sr.name}",
                _machine(sr, step),
                _settings_text(sr, step, site),
                _range(sr.surface.medium_C, site.format_temperature),
                _range(sr.surface.h_W_m2K, lambda v: f"{v:.1f}"),
            ]
        )
    t2 = _table(eq_rows, _cols(W, [0.15, 0.27, 0.34, 0.13, 0.11]), st)
    return [*st.h("Product and equipment"), t1, Spacer(1, 3), t2]


def _steps(result, site, st, W):
    plan = result.plan
    oc = result.outcomes
    ch = plan.checks
    hist = result.history
    rows = [
        [
            "Step",
            "Run",
            "Target",
            "Predicted time",
            "Plan time with margin",
            "Cycle",
            "Check",
            "End core / surface / mean",
        ]
    ]
    for sr, step in zip(result.steps, plan.steps, strict=True):
        seg = hist[hist["step_index"] == sr.index]
        end = seg.iloc[-1] if len(seg) else hist.iloc[-1]
        ends = " / ".join(site.format_temperature(end[k]) for k in ("core_C", "surface_C", "mean_C"))
        run = site.format_time(sr.duration_s / 60.0)
        if step.stop_when_core_C is not None:
            run += f", stop at core {site.format_temperature(step.stop_when_core_C)}"
        tgs = [t for t in (oc.targets if oc is not None else ()) if t.step == sr.name]
        if not tgs:
            rows.append(
                [
                    f"{sr.index + 1} {sr.name}",
                    run,
                    "—",
                    site.format_time(sr.duration_s / 60.0),
                    "—",
                    site.format_time(step.duration_s / 60.0) if step.duration_given else "—",
                    "no target",
                    ends,
                ]
            )
            continue
        for j, tg in enumerate(tgs):
            tr, m = tg.target, tg.margin
            label = f"{tg.point} {site.format_temperature(tr.target_C)}"
            if tr.reached:
                pred = site.format_time((tr.time_s - sr.start_s) / 60.0)
                plan_t = site.format_time(m.plan_min) if m is not None else "—"
                cyc = site.format_time(m.cycle_min) if (m is not None and step.duration_given) else "—"
                if m is not None and step.duration_given and m.cycle_too_short:
                    check = st.b(f"CYCLE SHORTER THAN PLAN TIME by {site.format_time(-m.spare_min)}")
                elif m is not None and step.duration_given:
                    check = f"OK, {site.format_time(m.spare_min)} spare"
                else:
                    check = "OK (no cycle given)"
            else:
                pred, plan_t = "NOT REACHED", "—"
                cyc = site.format_time(step.duration_s / 60.0)
                check = st.b(f"NOT REACHED: closest {site.format_temperature(tr.closest_C)}")
            rows.append(
                [
                    f"{sr.index + 1} {sr.name}" if j == 0 else "",
                    run if j == 0 else "",
                    label,
                    pred,
                    plan_t,
                    cyc,
                    check,
                    ends if j == 0 else "",
                ]
            )
    t = _table(rows, _cols(W, [0.13, 0.15, 0.11, 0.1, 0.11, 0.09, 0.14, 0.17]), st)
    note = st.p(
        f"Plan time = predicted time × (1 + {ch.margin_percent:g} %) + {ch.margin_min:g} min (the plan's margin). "
        "A cycle shorter than the plan time is flagged.",
        st.small,
    )
    return [*st.h("Process steps and plan times"), t, Spacer(1, 1), note]


def _chart(result, site, st, W, height):
    d = history_chart(result, site, W, height, font=FONT, bold=BOLD, size=st.size - 0.4)
    return [CondPageBreak(height + 30), *st.h("Predicted temperatures"), d]


def _checkpoints(result, site, st, W):
    cps = checkpoints(result, tolerance_K=site.probe_tolerance_K, site=site)
    rows = [
        [
            "#",
            "When (elapsed)",
            "Step",
            "Where",
            "Expected",
            "Action limit",
            "Basis",
            "If missed",
            "Measured",
            "Time / initials",
        ]
    ]
    for i, c in enumerate(cps, start=1):
        rows.append(
            [
                str(i),
                site.format_time(c.time_min),
                c.step,
                c.point,
                _expected_cell(st, site, c),
                _limit_text(site, c.low_C, c.high_C),
                c.basis,
                st.b(c.action) if c.rule else c.action,
                "",
                "",
            ]
        )
    t = _table(rows, _cols(W, [0.03, 0.08, 0.1, 0.06, 0.08, 0.09, 0.2, 0.15, 0.09, 0.12]), st)
    note = st.p(
        f"If a reading is beyond its action limit: {ACTION_IF_MISSED}. "
        + margin_note(result, site.probe_tolerance_K, _difference_text(site, site.probe_tolerance_K)),
        st.small,
    )
    return [*st.h("Checkpoints (probe readings)"), t, Spacer(1, 1), note]


def _rules(result, site, st, W):
    oc = result.outcomes
    out = [*st.h("Rule compliance")]
    rc = oc.rule_check if oc is not None else None
    if rc is None:
        default = ", ".join(site.default_rules) or "none"
        out.append(st.p(f"No cooling or storage rule in this plan (site default rules: {default})."))
        return out
    out.append(
        st.p(f"<b>{_esc(rc.rule_name)}: {'PASS' if rc.passed else 'FAIL'}</b> — {_esc(rc.source)}", raw=True)
    )
    if rc.stages:
        rows = [["Stage", "Limit", "Used", "Allowed", "Margin", "Margin %", "Result"]]
        for s in rc.stages:
            frm = site.format_temperature(s.stage.from_C) if s.stage.from_C is not None else "start"
            lim = f"{frm} to {site.format_temperature(s.stage.to_C)} within {s.stage.within_min:g} min" + (
                " (from the rule's start)" if s.stage.clock == "rule" else ""
            )
            rows.append(
                [
                    str(s.index + 1),
                    lim,
                    site.format_time(s.used_min),
                    site.format_time(s.allowed_min),
                    site.format_time(s.margin_min),
                    f"{s.margin_percent:.0f} %" if s.margin_percent is not None else "—",
                    "pass" if s.passed else f"FAIL: {s.reason}",
                ]
            )
        out.append(_table(rows, _cols(W, [0.06, 0.32, 0.1, 0.1, 0.1, 0.08, 0.24]), st))
    if rc.bands:
        rows = [["Band", "Inside", "Outside", "Longest excursion", "Margin", "Result"]]
        for b in rc.bands:
            rows.append(
                [
                    b.band.label(),
                    site.format_time(b.inside_min),
                    site.format_time(b.outside_min),
                    site.format_time(b.longest_outside_min),
                    site.format_time(b.margin_min),
                    "pass" if b.passed else f"FAIL: {b.reason}",
                ]
            )
        out.append(_table(rows, _cols(W, [0.16, 0.11, 0.11, 0.13, 0.11, 0.38]), st))
    return out


def _lethality(result, site, st, W):
    oc = result.outcomes
    out = [*st.h("Lethality")]
    items = (
        [x for x in ((oc.lethality, "requirement"), (oc.quality, "cook value")) if x[0] is not None]
        if oc
        else []
    )
    if not items:
        out.append(st.p("No lethality requirement in this plan, and the surface stays below 60 °C."))
        return out
    rows = [["Check", "Point", "T_ref, z", "F", "Required", "Result", "Reached at", "Log reduction"]]
    for leth, role in items:
        if leth.required_F_min:
            res = "PASS" if leth.passed else "FAIL"
            req = f"{leth.required_F_min:g} min"
        else:
            res, req = "information only", "—"
        reached = (
            site.format_time(leth.reached.time_s / 60.0)
            if (leth.reached is not None and leth.reached.reached)
            else ("not reached" if leth.required_F_min else "—")
        )
        rows.append(
            [
                f"{leth.name} ({role}): {leth.target}",
                leth.point,
                f"{site.format_temperature(leth.reference_C)}, z {_difference_text(site, leth.z_C)}",
                f"{format_f(leth.total_F_min)} min",
                req,
                res,
                reached,
                format_log_reduction(leth.log_reduction) if leth.log_reduction is not None else "—",
            ]
        )
    out.append(_table(rows, _cols(W, [0.3, 0.07, 0.14, 0.1, 0.08, 0.1, 0.1, 0.11]), st))
    srcs = "; ".join(dict.fromkeys(leth.source for leth, _ in items))
    out.append(st.p(f"Sources: {srcs}", st.small))
    return out


def _freezing(result, site, st, W):
    oc = result.outcomes
    fz = oc.freezing if oc is not None else None
    if fz is None:
        return []
    fh = fz.from_history
    onset = site.format_time(fh.onset.time_s / 60.0) if fh.onset.reached else "not reached"
    end = site.format_time(fh.end.time_s / 60.0) if fh.end.reached else "not reached"
    rows = [
        ["Onset (core at initial freezing point)", "End (core at storage temperature)", "Plank", "Pham"],
        [
            f"{onset} (core {site.format_temperature(fz.initial_freezing_C, 2)})",
            f"{end} (core {site.format_temperature(fh.end.target_C)})",
            site.format_time(fz.plank_s / 60.0) if fz.plank_s else "—",
            site.format_time(fz.pham.time_s / 60.0) if fz.pham else "—",
        ],
    ]
    return [
        *st.h("Freezing"),
        _table(rows, _cols(W, [0.3, 0.3, 0.2, 0.2]), st),
        st.p(fz.basis, st.small),
    ]


def _energy(result, site, st, W):
    oc = result.outcomes
    if oc is None:
        return []
    ch = result.plan.checks
    price, cur, price_src = ch.energy_price_per_kWh, site.currency, "plan"
    if price is None and site.energy_price_per_kWh is not None:
        price, price_src = site.energy_price_per_kWh, "site tariff"
    rows = [
        [
            "Step",
            "Heat per batch",
            "Peak duty",
            "Mean duty",
            "COP (Carnot)",
            "Electricity",
            f"Cost ({cur or 'currency'})",
            "Basis",
        ]
    ]
    for se in oc.refrigeration:
        kwh = se.heat_removed_J_per_batch / 3.6e6
        r = se.refrigeration
        cost = "—"
        if r is not None and price is not None:
            cost = f"{r.electricity_kWh * price:.2f} {cur}".strip()
        rows.append(
            [
                se.step,
                f"{abs(kwh):.2f} kWh {'removed' if kwh >= 0 else 'added'}",
                f"{se.peak_duty_kW:.1f} kW",
                f"{se.mean_duty_kW:.1f} kW",
                f"{r.cop:.2f} ({r.cop_carnot:.2f})" if r is not None else "—",
                f"{r.electricity_kWh:.2f} kWh" if r is not None else "—",
                cost,
                se.basis,
            ]
        )
    en = oc.energy
    note = (
        f"Batch of {en.pieces:g}: net {_fixed(en.heat_removed_J_per_batch / 3.6e6, 2)} kWh removed; heat through the surface "
        f"against the enthalpy change: {oc.energy_balance:.2%}. COP = {ch.cop_fraction:g} × Carnot."
    )
    if price is not None:
        note += f" Price {price:g} {cur}/kWh ({price_src})."
    return [
        *st.h("Energy"),
        _table(rows, _cols(W, [0.12, 0.13, 0.08, 0.08, 0.09, 0.09, 0.09, 0.32]), st),
        st.p(note, st.small),
    ]


def _provenance(result, site, st, W, sha):
    rows = [["Step", "Solver and reason", "Regime", "Grid / series", "Energy-balance error"]]
    for sr in result.steps:
        det = sr.details
        grid = det.grid or ("series solution" if sr.solver == "exact" else "—")
        if det.time_steps is not None:
            grid += f"; {det.time_steps} time steps"
        rows.append(
            [
                f"{sr.index + 1} {sr.name}",
                f"{sr.solver}: {sr.reason}",
                sr.regime.reason,
                grid,
                f"{sr.energy_balance_error:.2%}",
            ]
        )
    out = [
        *st.h("Provenance"),
        st.p(
            f"procplan {__version__}; plan file SHA-256 {sha} (of the plan's TOML as written by procplan.files.plan.plan_to_toml)",
            st.small,
        ),
        _table(rows, _cols(W, [0.12, 0.38, 0.25, 0.18, 0.07]), st, small=True),
    ]
    if result.warnings:
        out.append(st.p("Warnings: " + " | ".join(result.warnings), st.small))
    return out


def _measured(result, site, st, W):
    rows = [
        ["Measured", "Value", "Time", "Initials"],
        ["Core at the start of the first step", "", "", ""],
        ["Core at the end of the last step", "", "", ""],
        ["Equipment set points checked (step by step)", "", "", ""],
        ["Deviations and corrective actions", "", "", ""],
        ["Released for production by (name, signature)", "", "", ""],
    ]
    t = _table(
        rows, _cols(W, [0.4, 0.3, 0.13, 0.17]), st, row_heights=[None] + [st.size * 2.4] * (len(rows) - 1)
    )
    return [*st.h("Measured values and signatures"), t]


# ------------------------------------------------------------------------------------------------
# page furniture


def _numbered_canvas(header: str, caution_style: ParagraphStyle, box_h: float):
    class NumberedCanvas(rl_canvas.Canvas):
        def __init__(self, *a, **kw):
            super().__init__(*a, **kw)
            self._pages = []

        def showPage(self):
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            n = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._furniture(n)
                super().showPage()
            super().save()

        def _furniture(self, n: int):
            w, h = self._pagesize
            lm = 14 * mm
            self.setFont(FONT, 7)
            self.setFillColor(colors.black)
            self.drawString(lm, h - 9 * mm, printable(header))
            self.drawRightString(w - lm, h - 9 * mm, f"Page {self._pageNumber} of {n}")
            self.setLineWidth(0.4)
            self.line(lm, h - 10.2 * mm, w - lm, h - 10.2 * mm)
            para = Paragraph("<b>Caution.</b> " + _esc(CAUTION), caution_style)
            pw, ph = para.wrap(w - 2 * lm - 8, box_h)
            y = 8 * mm
            self.setLineWidth(1.0)
            self.rect(lm, y, w - 2 * lm, ph + 6, stroke=1, fill=0)
            para.drawOn(self, lm + 4, y + 3)

    return NumberedCanvas


def _build(result, site, *, size, chart_h, paper, lot_id, revision, date, prepared_by) -> tuple[bytes, int]:
    st = _Styles(size)
    pagesize = PAPER_SIZES[paper]
    lm = 14 * mm
    W = pagesize[0] - 2 * lm
    sha = plan_hash(result.plan)
    doc_no = document_number(site.document_prefix, sha)
    equipment = [s.equipment for s in result.plan.steps]
    line = site.line_for(equipment)
    probe = Paragraph("<b>Caution.</b> " + _esc(CAUTION), st.caution)
    _, cap_h = probe.wrap(W - 8, 200)
    box_h = cap_h + 6
    bottom = 8 * mm + box_h + 4 * mm
    story = []
    story += _header(
        result,
        site,
        st,
        W,
        lot_id=lot_id,
        revision=revision,
        date=date,
        prepared_by=prepared_by,
        doc_no=doc_no,
        line=line,
    )
    story += _product(result, site, st, W)
    story += _steps(result, site, st, W)
    story += _chart(result, site, st, W, chart_h)
    story += _checkpoints(result, site, st, W)
    story += _rules(result, site, st, W)
    story += _lethality(result, site, st, W)
    story += _freezing(result, site, st, W)
    story += _energy(result, site, st, W)
    story += _provenance(result, site, st, W, sha)
    story += [KeepTogether(_measured(result, site, st, W))]
    buf = io.BytesIO()
    doc = SimpleDocTemplate(
        buf,
        pagesize=pagesize,
        leftMargin=lm,
        rightMargin=lm,
        topMargin=13 * mm,
        bottomMargin=bottom,
        title=printable(f"Batch plan sheet {doc_no} rev {revision}: {result.plan.title}"),
        author=printable(site.plant),
        subject=printable(result.plan.product.name),
        creator=f"procplan {__version__}",
        invariant=1,
    )
    header = f"{site.plant} — batch plan {doc_no} rev {revision} — lot {lot_id or '________'} — {date}"
    doc.build(story, canvasmaker=_numbered_canvas(header, st.caution, box_h))
    data = buf.getvalue()
    return data, doc.page


def batch_sheet_pdf(
    result,
    *,
    site: SiteSettings,
    lot_id: str = "",
    revision: str = "A",
    paper: str = "a4",
    prepared_by: str = "",
    date: _dt.date | str | None = None,
) -> bytes:
    """The batch-plan sheet of a PlanResult as PDF bytes (one or two pages).

    Parameters
    ----------
    result : a :class:`procplan.run.engine.PlanResult` run with ``assess=True``
    site : site settings (plant, lines, display units, tariff, document-number prefix)
    lot_id : the batch's lot (blank line when empty)
    revision : document revision
    paper : a key of ``procplan.files.site.PAPER_SIZES`` ("a4" or "letter")
    prepared_by : name printed in the "prepared by" box
    date : the sheet's date (default today); a date or ISO text
    """
    validate.choice("paper", paper, PAPER_SIZES)
    if result.outcomes is None:
        raise InvalidInputError("result", "not assessed", "a PlanResult from run_plan(..., assess=True)")
    for name, v, n in (("lot_id", lot_id, 40), ("revision", revision, 12), ("prepared_by", prepared_by, 60)):
        if not isinstance(v, str) or len(v) > n or any(ord(ch) < 32 for ch in v):
            raise InvalidInputError(name, v, f"text of at most {n} printable characters")
    if not revision.strip():
        raise InvalidInputError("revision", revision, "a non-empty revision, e.g. A")
    if date is None:
        date_text = _dt.date.today().isoformat()
    elif isinstance(date, _dt.date):
        date_text = date.isoformat()
    else:
        try:
            date_text = _dt.date.fromisoformat(str(date)).isoformat()
        except ValueError:
            raise InvalidInputError("date", date, "an ISO date YYYY-MM-DD") from None
    _register_fonts()
    data = b""
    for size, chart_h in DENSITIES:
        data, pages = _build(
            result,
            site,
            size=size,
            chart_h=chart_h,
            paper=paper,
            lot_id=lot_id,
            revision=revision,
            date=date_text,
            prepared_by=prepared_by,
        )
        if pages <= MAX_PAGES:
            break
    return data
