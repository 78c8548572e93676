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
import io

from reportlab.lib.units import mm
from reportlab.platypus import (
    KeepTogether,
    Paragraph,
    SimpleDocTemplate,
)

from procplan import validate
from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.errors import InvalidInputError
from procplan.files.site import PAPER_SIZES, SiteSettings
from procplan.output.sheet_data import document_number, plan_hash
from procplan.output.sheet_layout import (
    Styles,
    esc,
    numbered_canvas,
    printable,
    register_fonts,
)
from procplan.output.sheet_outcomes import (
    energy_section,
    freezing_section,
    lethality_section,
    measured_section,
    provenance_section,
    rules_section,
)
from procplan.output.sheet_sections import (
    chart_section,
    checkpoints_section,
    header_section,
    product_section,
    salt_section,
    steps_section,
    weight_section,
)

__all__ = ["DENSITIES", "MAX_PAGES", "batch_sheet_pdf", "printable"]

#: Layout densities tried in turn until the sheet fits two pages: (font size, chart height [pt]).
DENSITIES = ((7.6, 205.0), (7.3, 190.0), (7.0, 175.0), (6.6, 155.0), (6.2, 135.0), (5.8, 120.0))
MAX_PAGES = 2


def _build(result, site, *, size, chart_h, paper, lot_id, revision, date, prepared_by) -> tuple[bytes, int]:
    st = Styles(size)
    pagesize = PAPER_SIZES[paper]
    lm = 14 * mm
    W = pagesize[0] - 2 * lm
    sha = plan_hash(result.plan)
    doc_no = document_number(site.document_prefix, sha)
    equipment = [s.equipment for s in result.plan.steps]
    line = site.line_for(equipment)
    probe = Paragraph("<b>Caution.</b> " + esc(CAUTION), st.caution)
    _, cap_h = probe.wrap(W - 8, 200)
    box_h = cap_h + 6
    bottom = 8 * mm + box_h + 4 * mm
    story = []
    story += header_section(
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
    story += product_section(result, site, st, W)
    story += steps_section(result, site, st, W)
    story += chart_section(result, site, st, W, chart_h)
    story += checkpoints_section(result, site, st, W)
    story += salt_section(result, site, st, W)
    story += weight_section(result, site, st, W)
    story += rules_section(result, site, st, W)
    story += lethality_section(result, site, st, W)
    story += freezing_section(result, site, st, W)
    story += energy_section(result, site, st, W)
    story += provenance_section(result, site, st, W, sha)
    story += [KeepTogether(measured_section(result, site, st, W))]
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
    doc.build(story, canvasmaker=numbered_canvas(header, st.caution, box_h))
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
    register_fonts()
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
