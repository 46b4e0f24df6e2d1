"""The daily traceability look-ahead: one alert per item and due date, through the alert delivery."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.models import Alert, AlertSource
from analyses.services.due_scan import traceability_due_scan
from tests.factories import (
    CalibrationFactory,
    InstrumentCheckFactory,
    InstrumentFactory,
    ReagentKindFactory,
    ReagentLotFactory,
    StandardisationFactory,
)

pytestmark = pytest.mark.django_db
TODAY = timezone.localdate()


def keys() -> set[str]:
    return set(Alert.objects.filter(source=AlertSource.TRACEABILITY).values_list("episode_key", flat=True))


@pytest.fixture
def queued(monkeypatch):
    """The notifications the alerts queue (the ordinary alert delivery), by alert id."""
    sent: list[int] = []
    monkeypatch.setattr("analyses.services.alerts.enqueue_on_commit", lambda task, alert_id: sent.append(alert_id))
    return sent


def test_due_items_raise_one_alert_each_and_a_second_scan_nothing(bench, queued):
    # the bench is all in date: a week-valid standardisation, calibrations due in 335 days
    before = keys()
    oven = InstrumentFactory(asset_id="OV-1", kind="oven")
    CalibrationFactory(instrument=oven, calibrated_on=TODAY - dt.timedelta(days=360), due_on=TODAY + dt.timedelta(days=5), unit="")
    lot = ReagentLotFactory(code="HCL-OLD", kind=ReagentKindFactory(name="HCl 0.5 mol/L x", substance="HCl", validity_days=30),
                            expires_on=TODAY + dt.timedelta(days=3))
    StandardisationFactory(lot=lot, valid_until=timezone.now() + dt.timedelta(days=2))
    scan = traceability_due_scan(days=14)
    new = keys() - before
    assert new == {
        f"calibration_due:instrument:OV-1:{TODAY + dt.timedelta(days=5)}",
        f"lot_expiring:reagent_lot:HCL-OLD:{TODAY + dt.timedelta(days=3)}",
        f"standardisation_due:reagent_lot:HCL-OLD:{TODAY + dt.timedelta(days=2)}",
    }
    assert scan.alerts_raised == 3 and sorted(queued) == sorted(Alert.objects.filter(episode_key__in=new).values_list("pk", flat=True))
    warning = Alert.objects.get(episode_key__startswith="calibration_due:instrument:OV-1")
    assert warning.severity == "warning" and "falls due" in warning.message
    assert traceability_due_scan(days=14).alerts_raised == 0  # deduplicated by episode
    # a new calibration is a new due date: a new episode once it too falls due
    CalibrationFactory(instrument=oven, calibrated_on=TODAY, due_on=TODAY + dt.timedelta(days=10), unit="")
    assert traceability_due_scan(days=14).alerts_raised == 1


def test_the_look_ahead_is_configurable(bench, settings, queued):
    oven = InstrumentFactory(asset_id="OV-2", kind="oven")
    CalibrationFactory(instrument=oven, calibrated_on=TODAY - dt.timedelta(days=300), due_on=TODAY + dt.timedelta(days=20), unit="")
    settings.TRACEABILITY_DUE_DAYS = 14
    assert traceability_due_scan().alerts_raised == 0  # due in 20 days, beyond 14
    settings.TRACEABILITY_DUE_DAYS = 30
    assert traceability_due_scan().alerts_raised == 1


def test_daily_checks_alert_only_once_missed(bench, queued):
    # BAL-BENCH was checked an hour ago: due tomorrow, as every day; not raised
    traceability_due_scan(days=7)
    assert not any(key.startswith("check_due:instrument:BAL-BENCH") for key in keys())
    balance = InstrumentFactory(asset_id="BAL-IDLE", kind="balance")
    CalibrationFactory(instrument=balance)
    InstrumentCheckFactory(instrument=balance, performed_at=timezone.now() - dt.timedelta(days=3))
    traceability_due_scan(days=7)
    missed = Alert.objects.get(episode_key__startswith="check_due:instrument:BAL-IDLE")
    assert missed.severity == "alarm" and "was due" in missed.message


def test_the_task_runs_the_scan(bench, queued):
    from analyses.tasks import traceability_due_scan_task

    assert traceability_due_scan_task.run()["looked_ahead_days"] == 14
