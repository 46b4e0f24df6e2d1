"""The certificate of analysis as a PDF (reportlab), from ``certificate_layout``.

reportlab is imported inside ``certificate_pdf`` only, so that start-up stays light
(tests/labcore/test_startup.py)."""
from __future__ import annotations

import io
from typing import Any

from analyses.documents.certificate_layout import CertificateLayout, certificate_layout

MARGIN_MM = 18


def certificate_pdf(content: dict[str, Any], *, replaced_by: str | None = None) -> bytes:
    """The PDF bytes of the certificate whose stored content is ``content``."""
    from reportlab.lib import colors
    from reportlab.lib.enums import TA_RIGHT
    from reportlab.lib.pagesizes import A4
    from reportlab.lib.styles import ParagraphStyle, getSampleStyleSheet
    from reportlab.lib.units import mm
    from reportlab.pdfgen.canvas import Canvas
    from reportlab.platypus import KeepTogether, Paragraph, SimpleDocTemplate, Spacer, Table, TableStyle
    from xml.sax.saxutils import escape

    layout = certificate_layout(content, replaced_by=replaced_by)
    styles = getSampleStyleSheet()
    body = ParagraphStyle("body", parent=styles["Normal"], fontName="Helvetica", fontSize=9, leading=11.5)
    small = ParagraphStyle("small", parent=body, fontSize=8, leading=10)
    cell = ParagraphStyle("cell", parent=body, fontSize=8, leading=9.5)
    cell_right = ParagraphStyle("cell_right", parent=cell, alignment=TA_RIGHT)
    head = ParagraphStyle("head", parent=cell, fontName="Helvetica-Bold")
    title = ParagraphStyle("title", parent=body, fontName="Helvetica-Bold", fontSize=16, leading=20, spaceAfter=2)
    section = ParagraphStyle("section", parent=body, fontName="Helvetica-Bold", fontSize=10, leading=13, spaceBefore=8, spaceAfter=3)
    notice = ParagraphStyle("notice", parent=body, fontName="Helvetica-Bold", textColor=colors.HexColor("#8a1c1c"))

    def p(text: str, style=body) -> Paragraph:
        return Paragraph(escape(text), style)

    rule_colour = colors.HexColor("#9aa3ad")
    story: list = [p(layout.title, title), p(layout.issue_line, small), Spacer(1, 3 * mm)]
    story += [p(text, notice) for text in layout.notices]
    if layout.notices:
        story.append(Spacer(1, 2 * mm))

    facts = Table(
        [[p(label, head), p(value, cell)] for label, value in layout.facts],
        colWidths=[38 * mm, None], hAlign="LEFT",
    )
    facts.setStyle(TableStyle([
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LINEBELOW", (0, 0), (-1, -1), 0.25, rule_colour),
        ("TOPPADDING", (0, 0), (-1, -1), 2), ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
    ]))
    story += [p("Items tested", section), facts, p("Results", section)]

    header = ["Sample", "Parameter", "Method", "Result", "Unit"]
    widths = [28, 27, 40, 14, 19]
    if layout.show_uncertainty:
        header.append("U (k = 2)")
        widths.append(18)
    header += ["Limits", "Verdict"]
    widths += [19, 19]
    scale = (A4[0] - 2 * MARGIN_MM * mm) / (sum(widths) * mm)
    rows = [[p(text, head) for text in header]]
    for row in layout.rows:
        cells = [p(row.sample, cell), p(row.parameter, cell), p(row.method, cell), p(row.result, cell_right), p(row.unit, cell)]
        if layout.show_uncertainty:
            cells.append(p(row.uncertainty, cell_right))
        cells += [p(row.limits, cell), p(row.verdict, cell)]
        rows.append(cells)
    results = Table(rows, colWidths=[w * mm * scale for w in widths], repeatRows=1, hAlign="LEFT")
    results.setStyle(TableStyle([
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LINEABOVE", (0, 0), (-1, 0), 0.8, colors.black),
        ("LINEBELOW", (0, 0), (-1, 0), 0.5, colors.black),
        ("LINEBELOW", (0, 1), (-1, -1), 0.25, rule_colour),
        ("TOPPADDING", (0, 0), (-1, -1), 2.5), ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
    ]))
    story.append(results)

    story.append(p("Decision rule", section))
    story += [p(line, body) for line in layout.rule_lines]
    story += [p("Statement of conformity", section), p(layout.conformity, body)]

    signature = Table(
        [[p(label, head), p(value, cell)] for label, value in layout.signature],
        colWidths=[45 * mm, None], hAlign="LEFT",
    )
    signature.setStyle(TableStyle([
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("BOX", (0, 0), (-1, -1), 0.5, colors.black),
        ("TOPPADDING", (0, 0), (-1, -1), 3), ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
    ]))
    story.append(KeepTogether([p("Authorisation", section), signature, Spacer(1, 1.5 * mm), p(layout.electronic, small)]))
    story += [Spacer(1, 4 * mm), p(layout.relates_only, small), Spacer(1, 2 * mm), p(f"{layout.end_mark} {layout.number}", head)]

    class NumberedCanvas(Canvas):
        """Draws "page n of N" once every page is laid out (the total is known only then)."""

        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 (reportlab's name)
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                _frame(self, layout, self._pageNumber, total)
                super().showPage()
            super().save()

    def _frame(canvas, layout: CertificateLayout, page: int, total: int) -> None:
        width, height = A4
        # in line with the text, which the frame indents by its 6 pt padding
        left, right = MARGIN_MM * mm + 6, width - MARGIN_MM * mm - 6
        canvas.saveState()
        canvas.setFont("Helvetica-Bold", 10)
        canvas.drawString(left, height - 12 * mm, layout.lab_name)
        canvas.setFont("Helvetica", 8)
        canvas.drawString(left, height - 16 * mm, layout.lab_address)
        canvas.drawRightString(right, height - 12 * mm, layout.title)
        canvas.drawRightString(right, height - 16 * mm, f"No. {layout.number}")
        canvas.setLineWidth(0.8)
        canvas.line(left, height - 18.5 * mm, right, height - 18.5 * mm)
        canvas.setLineWidth(0.25)
        canvas.line(left, 14 * mm, right, 14 * mm)
        canvas.drawString(left, 10 * mm, f"Certificate {layout.number}")
        canvas.drawRightString(right, 10 * mm, f"page {page} of {total}")
        canvas.restoreState()

    buffer = io.BytesIO()
    document = SimpleDocTemplate(
        buffer, pagesize=A4, leftMargin=MARGIN_MM * mm, rightMargin=MARGIN_MM * mm,
        topMargin=24 * mm, bottomMargin=20 * mm,
        title=f"{layout.title} {layout.number}", author=layout.lab_name, subject=f"Lot {content['lot']['code']}",
        invariant=True,  # no creation time or random id inside: the same content gives the same bytes
    )
    document.build(story, canvasmaker=NumberedCanvas)
    return buffer.getvalue()
