"""Certificates over REST: PDF and HTML renderings, versions, reissue, and the password that
signs a release, a rejection or a reissue."""
from __future__ import annotations

import io

import pytest
from pypdf import PdfReader

from analyses.models import AuditEntry, Certificate, LoginLockout, LotState
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db

SIGNED = {"password": SIGNING_PASSWORD}


def _text(pdf: bytes) -> str:
    return " ".join(" ".join(page.extract_text().split()) for page in PdfReader(io.BytesIO(pdf)).pages)


def test_the_certificate_as_pdf_and_html(lab, clients):
    lab.released()
    number = Certificate.objects.get().number
    pdf = clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate.pdf")
    assert pdf.status_code == 200 and pdf["Content-Type"] == "application/pdf"
    assert pdf["Content-Disposition"] == f'inline; filename="{number}.pdf"'
    text = _text(pdf.content)
    assert number in text and "released for shipment against specification v1" in text and "page 1 of" in text
    page = clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate.html")
    assert page.status_code == 200 and page["Content-Type"] == "text/html; charset=utf-8"
    assert number in page.content.decode() and "released for shipment against specification v1" in page.content.decode()


def test_before_release_there_is_no_certificate_in_any_form(lab, clients):
    for suffix in ("certificate/", "certificate.pdf", "certificate.html"):
        response = clients["qa"].get(f"/api/lots/{lab.lot.pk}/{suffix}")
        assert response.status_code == 404 and "not been released" in response.json()["detail"]
    assert clients["qa"].get(f"/api/lots/{lab.lot.pk}/certificates/").json() == []
    assert clients["qa"].get("/api/lots/999999/certificate.pdf").status_code == 404


def test_reissue_over_rest_keeps_every_version_retrievable(lab, clients):
    lab.released()
    first = clients["qa"].get(f"/api/lots/{lab.lot.pk}/certificate/").json()
    body = {"reason": "customer name corrected", "customer": "Invented Bakeries plc", **SIGNED}
    second = clients["qa"].post(f"/api/lots/{lab.lot.pk}/certificate/reissue/", body, format="json")
    assert second.status_code == 201, second.content
    second = second.json()
    assert second["version"] == 2 and second["replaces"] == first["number"] and second["replaced_by"] is None
    assert second["reissue_reason"] == "customer name corrected" and second["content"]["customer"] == "Invented Bakeries plc"
    assert clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate/").json() == second  # the current one
    old = clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate/?version=1").json()
    assert old["content"] == first["content"] and old["replaced_by"] == second["number"] and old["reissue_reason"] is None
    versions = clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificates/").json()
    assert [v["number"] for v in versions] == [second["number"], first["number"]]
    new_pdf = _text(clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate.pdf").content)
    assert f"Replaces certificate {first['number']}" in new_pdf and "Invented Bakeries plc" in new_pdf
    old_pdf = _text(clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate.pdf?version=1").content)
    assert f"Withdrawn: replaced by certificate {second['number']}" in old_pdf and "Invented Bakeries plc" not in old_pdf
    old_html = clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate.html?version=1").content.decode()
    assert f"replaced by certificate {second['number']}" in old_html
    assert clients["analyst"].get(f"/api/lots/{lab.lot.pk}/certificate.pdf?version=3").status_code == 404


@pytest.mark.parametrize("version", ["0", "-1", "one", "1.5", "²", "99999999999"])
def test_a_bad_version_is_a_400_naming_it(lab, clients, version):
    lab.released()
    for suffix in ("certificate/", "certificate.pdf", "certificate.html"):
        response = clients["analyst"].get(f"/api/lots/{lab.lot.pk}/{suffix}", {"version": version})
        assert response.status_code == 400 and "version" in response.json()["fields"], (suffix, version)


@pytest.mark.parametrize("action, body", [
    ("release/", {"note": "all met"}),
    ("reject/", {"reason": "water in tank"}),
])
@pytest.mark.parametrize("password", [None, "", "wrong"])
def test_release_and_reject_refuse_a_missing_or_wrong_password(lab, clients, action, body, password):
    lab.accepted()
    sent = body if password is None else {**body, "password": password}
    response = clients["qa"].post(f"/api/lots/{lab.lot.pk}/{action}", sent, format="json")
    assert response.status_code == 400, response.content
    assert list(response.json()["fields"]) == ["password"]
    lab.lot.refresh_from_db()
    assert lab.lot.state == LotState.OPEN and not Certificate.objects.exists()


def test_a_reissue_refuses_a_wrong_password(lab, clients):
    lab.released()
    response = clients["qa"].post(
        f"/api/lots/{lab.lot.pk}/certificate/reissue/", {"reason": "x", "customer": "Other", "password": "wrong"}, format="json",
    )
    assert response.status_code == 400 and list(response.json()["fields"]) == ["password"]
    assert Certificate.objects.count() == 1


def test_wrong_signing_passwords_count_towards_the_login_lock_out(lab, clients, settings):
    settings.LOGIN_FAILURES_PER_ACCOUNT = 3
    lab.accepted()
    url = f"/api/lots/{lab.lot.pk}/release/"
    for _ in range(3):
        assert clients["qa"].post(url, {"password": "guess"}, format="json").status_code == 400
    locked = clients["qa"].post(url, SIGNED, format="json")  # even the right one, while locked
    assert locked.status_code == 429 and int(locked["Retry-After"]) > 0
    lab.lot.refresh_from_db()
    assert lab.lot.state == LotState.OPEN
    # the lock-out is stored and audited, not rolled back with the refused release
    lockout = LoginLockout.objects.get(scope="account")
    assert lockout.subject == "qa" and lockout.failures == 3
    assert AuditEntry.objects.filter(object_type="analyses.loginlockout", object_id=str(lockout.pk)).exists()


def test_the_password_never_reaches_the_audit_trail(lab, clients):
    lab.accepted()
    assert clients["qa"].post(f"/api/lots/{lab.lot.pk}/release/", SIGNED, format="json").status_code == 201
    assert not any(SIGNING_PASSWORD in str(e.changes) + e.reason for e in AuditEntry.objects.all())


def test_a_lot_takes_an_optional_customer_for_its_certificate(lab, clients):
    body = {"code": "L-CUST", "product": lab.product.pk, "origin": "production", "customer": "Invented Foods Ltd"}
    created = clients["manager"].post("/api/lots/", body, format="json")
    assert created.status_code == 201 and created.json()["customer"] == "Invented Foods Ltd"
    too_long = clients["manager"].post("/api/lots/", {**body, "code": "L-CUST2", "customer": "x" * 201}, format="json")
    assert too_long.status_code == 400 and "customer" in too_long.json()["fields"]
    assert clients["manager"].get(f"/api/lots/{lab.lot.pk}/").json()["customer"] == ""
