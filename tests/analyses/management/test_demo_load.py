"""demo_load: the invented refinery, built through the services; running it twice adds nothing."""
from __future__ import annotations

from io import StringIO

import pytest
from django.contrib.auth import get_user_model
from django.core.management import call_command
from django.db.models import Q
from knox.crypto import hash_token

from analyses.audit import audit_chain_verify
from analyses.models import Alert, ApiToken, AuditEntry, Certificate, Investigation, Lot, Result, Sample, SampleState, StabilityStudy, Test
from analyses.services.audit_anchors import audit_anchors_read
from analyses.services.demo import demo_data

pytestmark = pytest.mark.django_db


def _counts() -> dict[str, int]:
    models = (Lot, Sample, Test, Result, Investigation, Certificate, AuditEntry, ApiToken, Alert, StabilityStudy)
    return {model.__name__: model.objects.count() for model in models}


def _load(*args: str) -> str:
    out = StringIO()
    call_command("demo_load", *args, stdout=out)
    return out.getvalue()


def _printed_tokens(output: str) -> dict[str, str]:
    """username -> the token printed on its line (lines "  <role> <username> <token>")."""
    tokens = {}
    for line in output.splitlines():
        parts = line.split()
        if len(parts) == 3 and parts[2].startswith("olt_"):
            tokens[parts[1]] = parts[2]
    return tokens


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
    printed = _printed_tokens(first)
    assert set(printed) == {"manager", "analyst", "analyst2", "qa", "admin"}
    for login, token in printed.items():
        # the database holds the token's hash only, and the printed token is the one it hashes
        stored = ApiToken.objects.get(user__username=login, name="demo")
        assert stored.digest == hash_token(token) and token not in stored.digest
    assert not _printed_tokens(second)  # shown once
    assert "shown only once" in second
    assert data["demo_password"] in first and "DEMO ONLY" in first
    # no demo user is a superuser or staff (issue 8): the superuser flag is for emergency accounts
    assert not get_user_model().objects.filter(Q(is_superuser=True) | Q(is_staff=True)).exists()

    assert set(Sample.objects.values_list("state", flat=True)) == set(SampleState.values)
    assert Investigation.objects.filter(state="open", kind="release").count() == 1
    # stability pulls are judged against their study and open no investigation (issue 13); the
    # released lot MV-RSO-2401's retained sample, retested after a complaint, opens a post-release one
    assert not Investigation.objects.filter(test__sample__kind="stability_pull").exists()
    finding = Investigation.objects.get(kind="post_release")
    assert (finding.state, finding.lot.code, finding.lot.state) == ("open", "MV-RSO-2401", "released")
    assert Test.objects.get(pk=finding.test_id).sample.label == "MV-RSO-2401-R"
    assert f"post-release investigation {finding.pk} open, lot still released" in first
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


def test_demo_load_with_new_tokens_replaces_the_demo_tokens_and_prints_them():
    first = _printed_tokens(_load())
    again = _printed_tokens(_load("--new-tokens"))
    assert set(again) == set(first) and not set(again.values()) & set(first.values())
    assert ApiToken.objects.filter(name="demo").count() == len(again)
    for login, token in again.items():
        assert ApiToken.objects.get(user__username=login).digest == hash_token(token)
    assert AuditEntry.objects.filter(object_type="analyses.apitoken", changes__state=["active", "revoked"]).count() == len(first)
    assert audit_chain_verify().ok


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
    assert {"westgard_1_3s", "westgard_10_x", "shelf_life_short", "pull_out_of_limit", "released_lot_oos"} <= rules
    # the 40 and 50 °C pulls beyond the study's limits raise its alert, never a release investigation
    failed_pulls = Test.objects.filter(sample__pull_point__study=study, verdict="oos")
    assert failed_pulls.exists()
    assert set(failed_pulls.values_list("sample__pull_point__condition__temperature_c", flat=True)) <= {40, 50}
    assert Alert.objects.filter(rule="pull_out_of_limit", study=study).count() == failed_pulls.count()
    assert not Investigation.objects.filter(test__in=failed_pulls).exists()
    assert not Alert.objects.filter(rule="pull_overdue").exists()  # every pull was tested on its day


def test_a_demo_admin_left_a_superuser_by_an_older_demo_loses_the_flag():
    _load()
    admin = get_user_model().objects.get(username="admin")
    get_user_model().objects.filter(pk=admin.pk).update(is_superuser=True, is_staff=True)  # as the old demo made it
    out = _load()
    admin.refresh_from_db()
    assert not (admin.is_superuser or admin.is_staff) and admin.groups.filter(name="admin").exists()
    assert "superuser and staff flags removed" in out
    entry = AuditEntry.objects.filter(object_type="auth.user", object_id=str(admin.pk)).latest("sequence")
    assert entry.changes == {"is_superuser": [True, False], "is_staff": [True, False]}
    assert audit_chain_verify().ok


def test_demo_has_gc_runs_with_an_identity_failure_and_imported_instrument_files():
    # issue 11: GC runs for the soybean and palm olein products, an invented blend failing the
    # Codex soybean ranges, and a titrator export imported through a named mapping
    from analyses.models import ResultImport

    out = _load()
    imports = {i.file_name: i for i in ResultImport.objects.all()}
    assert set(imports) == {"demo_gc_run.csv", "demo_titrator_export.csv"}
    assert imports["demo_titrator_export.csv"].rows == 8 and len(imports["demo_titrator_export.csv"].result_ids) == 8
    blend = Test.objects.get(sample__label="MV-RSO-2412-01", method_code="fac:C18:2")
    assert blend.reported == "62.1" and blend.verdict == "oos"  # above the 59.0 % line from the Codex soybean range
    assert any("C18:2 62.1 % is above the 59.0 % maximum for soybean oil" in w for w in blend.review_warnings)
    genuine = Test.objects.get(sample__label="MV-RSO-2410-01", method_code="fac:C18:2")
    assert genuine.verdict == "pass" and not [w for w in genuine.review_warnings if "maximum for soybean" in w]
    assert "the identity screen warns on review" in out
    # a second load replays the files: nothing is entered twice
    again = _load()
    assert ResultImport.objects.count() == 2 and "imported before, nothing entered" in again
