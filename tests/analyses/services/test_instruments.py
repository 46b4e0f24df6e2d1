"""Instruments, calibrations and routine checks through the services, and the usability rules."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.errors import InvalidInput, NotAllowed
from analyses.models import AuditEntry
from analyses.selectors.traceability import instrument_facts
from analyses.services.instruments import calibration_record, instrument_check_record, instrument_register
from analyses.traceability.usability import instrument_refusal


@pytest.fixture
def balance(users):
    return instrument_register(users["manager"], asset_id="BAL-07", kind="balance", location="weighing room")


def calibrate(users, instrument, *, passed=True, days_ago=30, valid_days=365):
    today = timezone.localdate()
    return calibration_record(
        users["manager"], instrument, calibrated_on=today - dt.timedelta(days=days_ago),
        due_on=today - dt.timedelta(days=days_ago) + dt.timedelta(days=valid_days), certificate_ref="UKAS-0421/26",
        passed=passed, standard_uncertainty="0.00009", unit="g",
    )


def test_a_balance_needs_a_daily_check(balance):
    assert balance.check_every_days == 1


@pytest.mark.parametrize("role", ["analyst", "qa", "nobody"])
def test_only_managers_and_admins_register_and_calibrate(users, balance, role):
    with pytest.raises(NotAllowed):
        instrument_register(users[role], asset_id="X", kind="oven")
    with pytest.raises(NotAllowed):
        calibrate(users | {"manager": users[role]}, balance)


def test_uncalibrated_then_checked_then_usable_then_failed(users, balance):
    now = timezone.now()
    assert "uncalibrated" in instrument_refusal(instrument_facts(balance), now)
    calibrate(users, balance)
    assert "has no routine check" in instrument_refusal(instrument_facts(balance), now)
    check = instrument_check_record(users["analyst"], balance, kind="check_weight", nominal="100.0000 g", measured="100.0003", tolerance="0.0005")
    assert check.passed
    assert instrument_refusal(instrument_facts(balance), timezone.now()) is None
    failed = instrument_check_record(users["analyst"], balance, kind="check_weight", nominal="100 g", measured="100.0012 g", tolerance="0.5 mg")
    assert not failed.passed
    assert "failed its routine check" in instrument_refusal(instrument_facts(balance), timezone.now())
    assert AuditEntry.objects.filter(object_type="analyses.instrumentcheck").count() == 2


def test_overdue_and_failed_calibrations(users, balance):
    calibrate(users, balance, days_ago=400, valid_days=365)
    instrument_check_record(users["analyst"], balance, kind="check_weight", nominal="100", measured="100", tolerance="0.0005")
    assert "overdue for calibration" in instrument_refusal(instrument_facts(balance), timezone.now())
    calibrate(users, balance, passed=False, days_ago=1)
    assert "failed its calibration" in instrument_refusal(instrument_facts(balance), timezone.now())


def test_a_check_older_than_its_period_is_overdue(users, balance):
    calibrate(users, balance)
    instrument_check_record(users["analyst"], balance, kind="check_weight", nominal="100", measured="100", tolerance="0.0005",
                            performed_at=timezone.now() - dt.timedelta(days=2))
    assert "overdue for its routine check" in instrument_refusal(instrument_facts(balance), timezone.now())


def test_check_kind_must_fit_the_instrument(users, balance):
    with pytest.raises(InvalidInput) as caught:
        instrument_check_record(users["analyst"], balance, kind="reference_filter", nominal="0.5", measured="0.5", tolerance="0.01")
    assert "kind" in caught.value.fields


def test_spectrophotometer_reference_filter(users):
    spectro = instrument_register(users["admin"], asset_id="UV-02", kind="spectrophotometer", check_every_days=7)
    check = instrument_check_record(users["analyst"], spectro, kind="reference_filter", nominal="0.500", measured="0.512", tolerance="0.010")
    assert not check.passed


def test_qa_records_no_checks(users, balance):
    with pytest.raises(NotAllowed):
        instrument_check_record(users["qa"], balance, kind="check_weight", nominal="100", measured="100", tolerance="0.0005")
