"""Layout of the batch-plan sheet: the font (Bitstream Vera, shipped inside reportlab), paragraph styles,
wrapped tables with column widths that never break a word, and the page furniture (header, page numbers,
the caution box on every page).
"""

from __future__ import annotations

import html
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
    Paragraph,
    Table,
    TableStyle,
)

from procplan.caution import CAUTION

FONT, BOLD = "ProcplanSans", "ProcplanSans-Bold"
_FONT_DIR = os.path.join(os.path.dirname(reportlab.__file__), "fonts")
_GLYPHS: set[int] = set()
#: Characters the font lacks, with what is printed instead.
_REPLACE = {"→": "to", "Δ": "delta ", "≲": "<=", "\u202f": " ", "\u2009": " "}


def register_fonts() -> None:
    if FONT in pdfmetrics.getRegisteredFontNames():
        return
    regular = TTFont(FONT, os.path.join(_FONT_DIR, "Vera.ttf"))
    pdfmetrics.registerFont(regular)
    pdfmetrics.registerFont(TTFont(BOLD, os.path.join(_FONT_DIR, "VeraBd.ttf")))
    pdfmetrics.registerFontFamily(FONT, normal=FONT, bold=BOLD, italic=FONT, boldItalic=BOLD)
    _GLYPHS.update(regular.face.charToGlyph)


def printable(text: object) -> str:
    """Text with every character the sheet's font lacks replaced (→ by "to"; others by "?")."""
    register_fonts()
    s = str(text)
    for a, b in _REPLACE.items():
        s = s.replace(a, b)
    return "".join(ch if (ord(ch) in _GLYPHS or ch in "\n\t") else "?" for ch in s)


def esc(text: object) -> str:
    return html.escape(printable(text), quote=False)


class Styles:
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
        return [CondPageBreak(self.size * 9), Paragraph(esc(text), self.head)]

    def p(self, text: object, style: ParagraphStyle | None = None, *, raw: bool = False) -> Paragraph:
        return Paragraph(str(text) if raw else esc(text), style or self.body)

    def b(self, text: object) -> Paragraph:
        return Paragraph(esc(text), self.bold)


def table(
    rows, widths, st: Styles, *, header: bool = True, extra=(), row_heights=None, small: bool = False
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
        cells, colWidths=fit_widths(cells, widths), rowHeights=row_heights, repeatRows=1 if header else 0
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


def fit_widths(cells, widths: list[float]) -> list[float]:
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


def cols(total: float, fractions: list[float]) -> list[float]:
    s = sum(fractions)
    return [total * f / s for f in fractions]


def fixed(x: float, digits: int) -> str:
    """Fixed-point text without a minus sign on a value that rounds to zero.

    >>> fixed(-0.001, 2)
    '0.00'
    """
    text = f"{x:.{digits}f}"
    return text.lstrip("-") if float(text) == 0 else text


def blank(width_chars: int = 14) -> str:
    return "_" * width_chars


def value_range(values, fmt: Callable[[float], str]) -> str:
    lo, hi = min(values), max(values)
    return fmt(lo) if abs(hi - lo) < 1e-9 else f"{fmt(lo)} … {fmt(hi)}"


def numbered_canvas(header: str, caution_style: ParagraphStyle, box_h: float):
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
            para = Paragraph("<b>Caution.</b> " + esc(CAUTION), caution_style)
            pw, ph = para.wrap(w - 2 * lm - 8, box_h)
            y = 8 * mm
            self.setLineWidth(1.0)
            self.rect(lm, y, w - 2 * lm, ph + 6, stroke=1, fill=0)
            para.drawOn(self, lm + 4, y + 3)

    return NumberedCanvas
