"""Turnaround per method over REST (lab managers)."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.services.samples import sample_register

pytestmark = pytest.mark.django_db


def test_turnaround_per_method_from_receipt_to_acceptance(lab, users, clients):
    """48 h between receipt and acceptance, set by the receipt time; the mean is plain
    arithmetic (common practice, no source)."""
    arrived = timezone.now() - dt.timedelta(hours=48)
    sample = sample_register(lab.manager, lab.lot, label="L-200-A", registered_at=arrived)  # receipt is never before registration
    received = clients["manager"].post(
        f"/api/samples/{sample.pk}/receive/",
        {"condition": "sealed", "storage_place": "A1", "received_at": arrived.isoformat()},
        format="json",
    )
    assert received.status_code == 200
    lab.accepted()
    rows = clients["manager"].get("/api/turnaround/").json()
    assert [row["method"] for row in rows] == ["av", "pv"]
    assert all(row["count"] == 1 and row["mean_hours"] == pytest.approx(48, abs=0.5) for row in rows)
    assert rows[0]["median_hours"] == pytest.approx(rows[0]["mean_hours"])
    assert clients["manager"].get("/api/turnaround/", {"since": "2999-01-01T00:00:00Z"}).json() == []
