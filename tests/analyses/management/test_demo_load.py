"""demo_load: the invented refinery, built through the services; running it twice adds nothing."""
from __future__ import annotations

from io import StringIO

import pytest
from django.core.management import call_command
from rest_framework.authtoken.models import Token

from analyses.audit import audit_chain_verify
from analyses.models import Alert, AuditEntry, Certificate, Investigation, Lot, Result, Sample, SampleState, StabilityStudy, Test
from analyses.services.audit_anchors import audit_anchors_read
from analyses.services.demo import demo_data

pytestmark = pytest.mark.django_db


def _counts() -> dict[str, int]:
    models = (Lot, Sample, Test, Result, Investigation, Certificate, AuditEntry, Token, Alert, StabilityStudy)
    return {model.__name__: model.objects.count() for model in models}


def _load() -> str:
    out = StringIO()
    call_command("demo_load", stdout=out)
    return out.getvalue()


def test_demo_load_builds_every_state_and_is_idempotent():
    first = _load()
    after_first = _counts()
    second = _load()
    assert _counts() == after_first
    assert "created 0 users, 0 products, 0 lots, 0 samples" in second
    assert "exists, skipped" in second

    assert "INVENTED DEMO DATA" in first
    data = demo_data()
    assert data["_notice"].startswith("INVENTED DEMO DATA")
    for login in ("manager", "analyst", "analyst2", "qa", "admin"):
        token = Token.objects.get(user__username=login).key
        assert f" {login} " in first and token in first
    assert data["demo_password"] in first and "DEMO ONLY" in first

    assert set(Sample.objects.values_list("state", flat=True)) == set(SampleState.values)
    assert Investigation.objects.filter(state="open").exclude(test__sample__kind="stability_pull").count() == 1
    assert set(Investigation.objects.exclude(state="open").values_list("conclusion", flat=True)) == {"confirmed", "lab_error"}
    assert set(Lot.objects.values_list("state", flat=True)) == {"open", "released", "rejected"}
    assert Certificate.objects.count() == Lot.objects.filter(state="released").count() == 2
    assert Result.objects.filter(status="superseded").exists()
    assert Test.objects.filter(state="sent_back").exists()
    assert AuditEntry.objects.filter(actor__username="qa", action="transition").exists()
    assert audit_chain_verify().ok
    # the head is anchored outside the database, so audit_verify passes straight after the demo
    last = AuditEntry.objects.order_by("sequence").last()
    assert [(a.sequence, a.hash) for a in audit_anchors_read()] == [(last.sequence, last.entry_hash)]
    verified = StringIO()
    call_command("audit_verify", stdout=verified)
    assert "audit chain intact" in verified.getvalue()


def test_demo_has_a_drifting_qc_series_and_an_accelerated_stability_study_with_live_alerts():
    out = _load()
    assert "QC series and stability study:" in out
    study = StabilityStudy.objects.get(code="MV-STAB-RSO-01")
    assert sorted(study.conditions.values_list("temperature_c", flat=True)) == [25, 30, 40, 50]
    evaluation = study.evaluation
    assert evaluation["predicted_shelf_life_months"] is not None
    # PV at 40 °C rises 1.8 per month (k at 25 °C 0.35, Ea 85 kJ/mol): more than the demo's 4 within
    # 3 months; the 30 °C data cover 3 of the 6 months that would show no change there
    assert evaluation["storage_category"] == "room_temperature"
    assert evaluation["extrapolation"]["branch"] == "room_temperature.intermediate_not_shown"
    assert evaluation["extrapolation"]["accelerated"]["temperatures_c"] == [40]
    assert evaluation["supported_shelf_life_months"] == 3  # X = 3 months, no extrapolation
    pv = next(a for a in evaluation["attributes"] if a["method_code"] == "pv")
    # generated with Ea = 85 kJ/mol (fixtures/demo_monitoring.json); the fit recovers it within the scatter
    assert pv["arrhenius"]["activation_energy_kj_per_mol"] == pytest.approx(85, rel=0.05)
    rules = set(Alert.objects.values_list("rule", flat=True))
    assert {"westgard_1_3s", "westgard_10_x", "shelf_life_short", "pull_out_of_limit"} <= rules
    assert not Alert.objects.filter(rule="pull_overdue").exists()  # every pull was tested on its day
