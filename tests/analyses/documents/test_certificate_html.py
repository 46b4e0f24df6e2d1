"""The certificate of analysis as an HTML page: the same layout as the PDF, every value escaped."""
from __future__ import annotations

import html
import re

import pytest

from analyses.documents.certificate_html import certificate_html
from tests.analyses.documents.conftest import INTERNAL_NOTE, LIMITS_SOURCE

pytestmark = pytest.mark.django_db


def visible_text(page: str) -> str:
    without_style = re.sub(r"<style>.*?</style>", " ", page, flags=re.S)
    return " ".join(html.unescape(re.sub(r"<[^>]+>", " ", without_style)).split())


def test_the_html_shows_what_the_pdf_shows_and_no_internal_notes(released_lot):
    content = released_lot.certificates.get().content
    text = visible_text(certificate_html(content))
    assert content["certificate_number"] in text and "Invented Bakeries plc" in text
    for row in content["results"]:
        assert row["method_title"] in text and row["reported"] in text and f"max. {row['maximum']}" in text
    assert "released for shipment against specification v1" in text
    assert "Simple acceptance" in text and "Conforms to specification v1" in text
    assert INTERNAL_NOTE not in text and LIMITS_SOURCE not in text


def test_values_are_escaped(released_lot):
    content = released_lot.certificates.get().content
    content["customer"] = "<script>alert(1)</script> & Co"
    page = certificate_html(content)
    assert "<script>" not in page and "&lt;script&gt;alert(1)&lt;/script&gt; &amp; Co" in page


def test_a_replaced_version_says_so(released_lot):
    content = released_lot.certificates.get().content
    text = visible_text(certificate_html(content, replaced_by="MVO-2099-00002"))
    assert "Withdrawn: replaced by certificate MVO-2099-00002" in text
