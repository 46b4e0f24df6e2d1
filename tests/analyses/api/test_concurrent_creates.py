"""Creates with a unique key sent by several clients at the same moment (issue 8): exactly
one succeeds and every other gets what a sequential duplicate gets (400 naming the field),
never a 500. Creates whose repeat is not a duplicate (a control baseline is replaced, a
specification gets the next version) serialise instead: every request succeeds.

These need PostgreSQL: SQLite serialises all writers, so the race cannot happen there."""
from __future__ import annotations

import pytest
from rest_framework.test import APIClient

from analyses.audit import audit_chain_verify
from analyses.models import AuditEntry, ControlBaseline, Lot, Product, Sample, Specification, StabilityStudy
from analyses.services.lots import lot_create
from analyses.services.tokens import token_issue
from tests.analyses.concurrency import THREADS, race

pytestmark = pytest.mark.django_db(transaction=True)


def _sender(user):
    """A function posting as ``user`` from any thread (one APIClient per call); the token is
    made here, beforehand, so the threads only read it."""
    key = token_issue(user, name="concurrency").secret

    def post(path: str, body: dict):
        client = APIClient()  # a client is not shared between threads
        client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
        return client.post(path, body, format="json")

    return post


def _one_wins(outcomes: list, duplicate) -> None:
    """One 201; every other answer is the sequential duplicate's 400, body and all."""
    errors = [o for o in outcomes if isinstance(o, Exception)]
    assert errors == [], errors
    statuses = sorted(o.status_code for o in outcomes)
    assert statuses == [201] + [duplicate.status_code] * (THREADS - 1), [o.content for o in outcomes]
    assert duplicate.status_code == 400
    for response in outcomes:
        if response.status_code != 201:
            assert response.json() == duplicate.json()


def _creates_recorded(model, **lookup) -> int:
    row = model.objects.get(**lookup)
    return AuditEntry.objects.filter(
        object_type=model._meta.label_lower, object_id=str(row.pk), action="create"
    ).count()


def test_lots_with_one_code(postgres, lab):
    post = _sender(lab.manager)
    body = {"code": "L-RACE", "product": lab.product.pk, "origin": "production"}
    outcomes = race(lambda i: post("/api/lots/", body))
    duplicate = post("/api/lots/", body)
    _one_wins(outcomes, duplicate)
    assert "code" in duplicate.json()["fields"]
    assert Lot.objects.filter(code="L-RACE").count() == 1
    assert _creates_recorded(Lot, code="L-RACE") == 1
    assert audit_chain_verify().ok


def test_products_with_one_code(postgres, lab):
    post = _sender(lab.manager)
    body = {"code": "HOO", "name": "High-oleic sunflower oil (invented)"}
    outcomes = race(lambda i: post("/api/products/", body))
    duplicate = post("/api/products/", body)
    _one_wins(outcomes, duplicate)
    assert "code" in duplicate.json()["fields"]
    assert Product.objects.filter(code="HOO").count() == 1
    assert _creates_recorded(Product, code="HOO") == 1
    assert audit_chain_verify().ok


def test_stability_studies_with_one_code(postgres, lab):
    post = _sender(lab.users["qa"])
    body = {
        "code": "STAB-RACE", "title": "Invented shelf-life study", "product": lab.product.pk, "lots": [lab.lot.pk],
        "started_on": "2026-01-01", "storage_temperature_c": 25, "claimed_shelf_life_months": 12,
        "conditions": [{"temperature_c": 25}, {"temperature_c": 40}],
        "pull_points": [{"offset": m} for m in (0, 1, 2)], "attributes": [{"method_code": "pv", "maximum": 10}],
    }
    outcomes = race(lambda i: post("/api/stability-studies/", body))
    duplicate = post("/api/stability-studies/", body)
    _one_wins(outcomes, duplicate)
    assert "code" in duplicate.json()["fields"]
    study = StabilityStudy.objects.get(code="STAB-RACE")
    assert study.pull_points.count() == 2 * 3  # the winner's schedule, nothing from the losers
    assert _creates_recorded(StabilityStudy, code="STAB-RACE") == 2  # the study and its pull schedule
    assert audit_chain_verify().ok


def test_samples_with_one_label_on_different_lots(postgres, lab):
    """A lot's own samples queue on the lot's lock; the same label on two lots meets only at the index."""
    other = lot_create(lab.manager, code="L-201", product=lab.product, origin="production")
    lots = [lab.lot.pk, other.pk]
    post = _sender(lab.manager)
    outcomes = race(lambda i: post("/api/samples/", {"lot": lots[i % 2], "label": "RACE-1"}))
    duplicate = post("/api/samples/", {"lot": lots[0], "label": "RACE-1"})
    _one_wins(outcomes, duplicate)
    assert "label" in duplicate.json()["fields"]
    assert Sample.objects.filter(label="RACE-1").count() == 1
    assert _creates_recorded(Sample, label="RACE-1") == 1
    assert audit_chain_verify().ok


def test_control_baselines_for_one_series_are_entered_one_after_another(postgres, lab):
    """A repeat replaces the baseline, sequentially and at once: every request succeeds,
    one row, one creation and the rest changes in the audit trail."""
    post = _sender(lab.users["qa"])
    key = f"qc:{lab.lot.pk}:av"
    outcomes = race(lambda i: post("/api/trends/baselines/", {
        "series_key": key, "mean": 0.35 + i / 1000, "sd": 0.01, "reason": "reference oil certificate (invented)",
    }))
    assert [o for o in outcomes if isinstance(o, Exception)] == []
    assert [o.status_code for o in outcomes] == [201] * THREADS, [o.content for o in outcomes]
    baseline = ControlBaseline.objects.get(series_key=key)
    entries = AuditEntry.objects.filter(object_type="analyses.controlbaseline", object_id=str(baseline.pk))
    assert sorted(entries.values_list("action", flat=True)) == ["change"] * (THREADS - 1) + ["create"]
    last = entries.latest("sequence")
    assert baseline.mean == pytest.approx(last.changes["mean"][1])  # the row holds the last one written
    assert audit_chain_verify().ok


def test_specification_drafts_for_one_product_get_successive_versions(postgres, lab):
    post = _sender(lab.manager)
    first = lab.specification.version
    body = {"product": lab.product.pk, "effective_from": "2031-01-01", "lines": [{"method": "av", "maximum": "0.6"}]}
    outcomes = race(lambda i: post("/api/specifications/", body))
    assert [o for o in outcomes if isinstance(o, Exception)] == []
    assert [o.status_code for o in outcomes] == [201] * THREADS, [o.content for o in outcomes]
    versions = sorted(Specification.objects.filter(product=lab.product).values_list("version", flat=True))
    assert versions == list(range(first, first + THREADS + 1))


def test_revisions_of_one_specification_get_successive_versions(postgres, lab):
    post = _sender(lab.users["qa"])
    source = lab.specification
    outcomes = race(lambda i: post(f"/api/specifications/{source.pk}/revise/", {"effective_from": "2031-01-01"}))
    assert [o for o in outcomes if isinstance(o, Exception)] == []
    assert [o.status_code for o in outcomes] == [201] * THREADS, [o.content for o in outcomes]
    versions = sorted(Specification.objects.filter(revised_from=source).values_list("version", flat=True))
    assert versions == list(range(source.version + 1, source.version + THREADS + 1))
