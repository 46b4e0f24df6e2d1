"""The certificate of analysis as a PDF, read back with a PDF text extractor (pypdf), and page 1
turned into a PNG with pdftoppm for a person to look at."""
from __future__ import annotations

import io
import shutil
import subprocess
from decimal import Decimal

import pytest
from pypdf import PdfReader

from analyses.documents.certificate_pdf import certificate_pdf
from analyses.models import Test
from analyses.services.certificates import DECISION_RULE
from tests.analyses.documents.conftest import INTERNAL_NOTE, LIMITS_SOURCE
from tests.conftest import service_missing

pytestmark = pytest.mark.django_db


def pdf_text(pdf: bytes) -> list[str]:
    """Each page's text, whitespace collapsed (the extractor breaks lines where the layout wraps)."""
    return [" ".join(page.extract_text().split()) for page in PdfReader(io.BytesIO(pdf)).pages]


def test_the_pdf_shows_every_parameter_limit_verdict_the_rule_and_the_signature(released_lot):
    certificate = released_lot.certificates.get()
    pages = pdf_text(certificate_pdf(certificate.content))
    text = " ".join(pages)
    assert "Certificate of analysis" in text and certificate.number in text
    assert "Marrowvale Oils Ltd" in text  # the lab, from settings (invented demo default)
    assert "Invented Bakeries plc" in text and "Refined soybean oil (RSO)" in text and "L-100" in text
    assert "version 1, effective from 2020-01-01" in text
    assert "Received" in text and "Tested" in text
    for test in Test.objects.filter(sample__lot=released_lot).select_related("specification_line"):
        row = next(r for r in certificate.content["results"] if r["test"] == test.pk)
        assert row["method_title"] in text
        assert ", ".join(row["standards"]) in text
        assert f"{test.reported} {test.unit}" in text
        assert f"max. {test.specification_line.maximum}" in text  # the limit as the specification writes it
    assert text.count("Conforms") >= 2  # one verdict per parameter
    assert " ".join(DECISION_RULE.split()) in text
    assert "Conforms to specification v1" in text  # the statement of conformity
    assert "released for shipment against specification v1" in text  # the signature's meaning
    assert "Released by qa" in text
    assert "page 1 of" in pages[0] and f"End of certificate {certificate.number}" in pages[-1]


def test_the_pdf_shows_no_internal_notes_ids_or_unrounded_numbers(released_lot):
    certificate = released_lot.certificates.get()
    text = " ".join(pdf_text(certificate_pdf(certificate.content)))
    assert INTERNAL_NOTE not in text and "from memory" not in text
    assert LIMITS_SOURCE not in text and "(found)" not in text  # sources and evidence tags stay in the lab
    assert "fridge 2" not in text and "sealed, clear" not in text  # storage place, condition on receipt
    assert "analyst2" not in text  # the reviewer is internal; the release signs the certificate
    assert "sha256" not in text.lower()
    for test in Test.objects.filter(sample__lot=released_lot):
        assert f"test {test.pk}" not in text.lower()
        exact = Decimal(test.value_exact)
        if exact != Decimal(test.reported):
            assert test.value_exact not in text  # the unrounded mean
        for replicate in test.results.all():
            if replicate.value_exact != replicate.reported:
                assert replicate.value_exact not in text


def test_expanded_uncertainty_and_the_rule_with_its_risk_are_shown_only_when_the_data_has_them(released_lot):
    content = released_lot.certificates.get().content
    # issue 10: every result carries its U (k = 2) and the lines' rules their ILAC G8 risk
    row = content["results"][0]
    assert row["expanded_uncertainty"]
    text = " ".join(" ".join(pdf_text(certificate_pdf(content))).split())
    assert "U (k = 2)" in text and f"± {row['expanded_uncertainty']}" in text
    assert [rule["rule"] for rule in content["decision_rules"]] == ["simple"]
    assert "up to 50 %" in text  # simple acceptance's risk at the limit (ILAC G8:09/2019)
    # without those keys (a certificate stored before issue 10) nothing of them is shown
    for result in content["results"]:
        result.pop("expanded_uncertainty")
    content.pop("decision_rules")
    plain = " ".join(" ".join(pdf_text(certificate_pdf(content))).split())
    assert "U (k = 2)" not in plain and "up to 50 %" not in plain


def test_a_long_certificate_numbers_its_pages(released_lot):
    content = released_lot.certificates.get().content
    content["results"] = content["results"] * 30  # more rows than one page holds
    pages = pdf_text(certificate_pdf(content))
    assert len(pages) >= 2
    for number, page in enumerate(pages, start=1):
        assert f"page {number} of {len(pages)}" in page
        assert content["certificate_number"] in page  # every page carries the number
    assert "Sample Parameter Method Result" in pages[1]  # the table's header repeats


def test_the_same_content_renders_the_same_bytes(released_lot):
    content = released_lot.certificates.get().content
    assert certificate_pdf(content) == certificate_pdf(content)


@pytest.mark.pdftoppm
def test_page_one_converts_to_a_png(released_lot, tmp_path):
    """Poppler's pdftoppm reads the PDF as a viewer would; the PNG is left in tmp_path to look at."""
    if shutil.which("pdftoppm") is None:
        service_missing("pdftoppm (poppler-utils) is not installed")
    from PIL import Image

    pdf = tmp_path / "certificate.pdf"
    pdf.write_bytes(certificate_pdf(released_lot.certificates.get().content))
    subprocess.run(["pdftoppm", "-png", "-r", "60", "-f", "1", "-l", "1", "-singlefile", str(pdf), str(tmp_path / "page1")], check=True)
    with Image.open(tmp_path / "page1.png") as image:
        width, height = image.size
        assert abs(width / height - 210 / 297) < 0.01  # A4 portrait
        darkest, lightest = image.convert("L").getextrema()
        assert darkest < 80 and lightest > 240  # text on a white page, not a blank one
