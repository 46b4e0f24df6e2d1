"""demo_load: the invented refinery, built through the services; running it twice adds nothing."""
from __future__ import annotations

from io import StringIO

import pytest
from django.core.management import call_command
from rest_framework.authtoken.models import Token

from analyses.audit import audit_chain_verify
from analyses.models import AuditEntry, Certificate, Investigation, Lot, Result, Sample, SampleState, Test
from analyses.services.demo import demo_data

pytestmark = pytest.mark.django_db


def _counts() -> dict[str, int]:
    return {model.__name__: model.objects.count() for model in (Lot, Sample, Test, Result, Investigation, Certificate, AuditEntry, Token)}


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
    assert Investigation.objects.filter(state="open").count() == 1
    assert set(Investigation.objects.exclude(state="open").values_list("conclusion", flat=True)) == {"confirmed", "lab_error"}
    assert set(Lot.objects.values_list("state", flat=True)) == {"open", "released", "rejected"}
    assert Certificate.objects.count() == Lot.objects.filter(state="released").count() == 2
    assert Result.objects.filter(status="superseded").exists()
    assert Test.objects.filter(state="sent_back").exists()
    assert AuditEntry.objects.filter(actor__username="qa", action="transition").exists()
    assert audit_chain_verify().ok
