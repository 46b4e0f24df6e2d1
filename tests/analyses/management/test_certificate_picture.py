"""manage.py certificate_picture: page 1 of a certificate as a PNG (the README's picture)."""
from __future__ import annotations

import shutil
from io import StringIO

import pytest
from django.core.management import CommandError, call_command

from analyses.services.lots import lot_release
from analyses.services.review import test_accept
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)
from tests.analyses.lab_setup import enter_passing
from tests.conftest import service_missing
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.pdftoppm


@pytest.fixture(autouse=True)
def _needs_pdftoppm():
    if shutil.which("pdftoppm") is None:
        service_missing("pdftoppm (poppler-utils) is not installed")


def _is_a4_page_with_text(path) -> bool:
    from PIL import Image

    with Image.open(path) as image:
        width, height = image.size
        darkest, lightest = image.convert("L").getextrema()
    return abs(width / height - 210 / 297) < 0.01 and darkest < 80 and lightest > 240


def test_the_invented_example_needs_no_database(tmp_path):
    out = StringIO()
    call_command("certificate_picture", "--output", str(tmp_path / "page1.png"), "--resolution", "40", stdout=out)
    assert "MVO-2026-00042" in out.getvalue()
    assert _is_a4_page_with_text(tmp_path / "page1.png")


@pytest.mark.django_db
def test_a_released_lots_certificate(users, assigned_tests, tmp_path):
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    lot = assigned_tests[0].sample.lot
    certificate = lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    out = StringIO()
    call_command("certificate_picture", "--lot", lot.code, "--output", str(tmp_path / "lot.png"), "--resolution", "40", stdout=out)
    assert certificate.number in out.getvalue() and _is_a4_page_with_text(tmp_path / "lot.png")
    with pytest.raises(CommandError, match="no certificate version 2"):
        call_command("certificate_picture", "--lot", lot.code, "--certificate-version", "2", "--output", str(tmp_path / "x.png"))
    with pytest.raises(CommandError, match="no lot"):
        call_command("certificate_picture", "--lot", "NOPE", "--output", str(tmp_path / "x.png"))
