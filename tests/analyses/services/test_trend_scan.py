"""The periodic trend scan: baselines, rules per series kind, one alert per episode."""
import numpy as np
import pytest

from analyses.errors import InvalidInput, NotAllowed
from analyses.models import Alert, AlertSeverity, AuditEntry, BaselineSource, ControlBaseline, SampleKind
from analyses.services.trend_scan import control_baseline_set, trend_scan
from tests.analyses.series_setup import accepted_series
from tests.factories import LotFactory

MEAN, SD = 0.30, 0.01


def in_control(n: int) -> list[float]:
    """Values alternating around the mean at ±0.3 s, starting below it: no run of one side,
    nothing beyond 1 s, and too few to alternate for 14 points (Nelson 4) in these tests."""
    return [MEAN + (0.3 if i % 2 else -0.3) * SD for i in range(n)]


@pytest.fixture
def qc_lot(db):
    return LotFactory(code="REF-OIL-1")


def test_baseline_is_established_from_the_first_20_results_and_stored(qc_lot):
    values = [MEAN + d for d in np.linspace(-0.01, 0.01, 20)] + [MEAN]
    accepted_series(qc_lot, values)
    summary = trend_scan()
    baseline = ControlBaseline.objects.get(series_key=f"qc:{qc_lot.pk}:av")
    # Westgard: mean and SD from at least 20 control results (from memory); checked against numpy
    assert baseline.mean == pytest.approx(np.mean(values[:20]))
    assert baseline.sd == pytest.approx(np.std(values[:20], ddof=1))
    assert (baseline.source, baseline.n_points) == (BaselineSource.ESTABLISHED, 20)
    assert summary.results_scanned == 21
    assert AuditEntry.objects.filter(object_type="analyses.controlbaseline", object_id=str(baseline.pk)).exists()


def test_a_qc_point_beyond_3s_raises_one_westgard_alert_and_a_rescan_raises_none(qc_lot, users):
    control_baseline_set(users["qa"], series_key=f"qc:{qc_lot.pk}:av", mean=MEAN, sd=SD, reason="from the supplier's certificate")
    tests = accepted_series(qc_lot, in_control(10) + [MEAN + 3.5 * SD])
    # Westgard 1-3s: one point beyond ±3 s (references.md, found)
    first = trend_scan()
    alert = Alert.objects.get(rule="westgard_1_3s")
    assert first.alerts_raised >= 1
    assert alert.series_key == f"qc:{qc_lot.pk}:av"
    assert [p["test_id"] for p in alert.points] == [tests[-1].pk]
    assert alert.severity == AlertSeverity.ALARM
    assert Alert.objects.filter(rule="westgard_1_2s").get().severity == AlertSeverity.WARNING  # 1-2s only warns
    before = Alert.objects.count()
    assert trend_scan().alerts_raised == 0
    accepted_series(qc_lot, [MEAN], first_index=11)
    assert trend_scan().alerts_raised == 0
    assert Alert.objects.count() == before


def test_production_drift_raises_nelson_2_once(db, users):
    lot = LotFactory(code="RSO-2026-01")
    control_baseline_set(users["qa"], series_key=f"production:{lot.product_id}:av", mean=MEAN, sd=SD)
    # Nelson 2: nine points in a row on one side of the centre line (references.md, found)
    accepted_series(lot, in_control(5) + [MEAN + 0.5 * SD] * 9, kind=SampleKind.ROUTINE)
    trend_scan()
    assert Alert.objects.filter(rule="nelson_2", series_key=f"production:{lot.product_id}:av").count() == 1
    assert not Alert.objects.filter(rule__startswith="westgard").exists()  # production series get no Westgard rules


def test_eight_points_on_one_side_do_not_trigger_nelson_2(db, users):
    lot = LotFactory(code="RSO-2026-02")
    control_baseline_set(users["qa"], series_key=f"production:{lot.product_id}:av", mean=MEAN, sd=SD)
    accepted_series(lot, in_control(5) + [MEAN + 0.5 * SD] * 8, kind=SampleKind.ROUTINE)
    trend_scan()
    assert not Alert.objects.filter(rule="nelson_2").exists()


def test_a_short_series_without_baseline_is_reported_not_scanned(qc_lot):
    accepted_series(qc_lot, in_control(5))
    summary = trend_scan()
    assert summary.series_without_baseline == [f"qc:{qc_lot.pk}:av"]
    assert Alert.objects.count() == 0


def test_only_qa_enters_a_baseline(qc_lot, users):
    with pytest.raises(NotAllowed):
        control_baseline_set(users["analyst"], series_key=f"qc:{qc_lot.pk}:av", mean=1, sd=0.1)
    assert not ControlBaseline.objects.exists()


@pytest.mark.parametrize(
    "key, sd, field",
    [("qc:1:av", 0, "sd"), ("qc:1:av", -1, "sd"), ("lot:1:av", 0.1, "series_key"), ("qc:x:av", 0.1, "series_key")],
)
def test_bad_baselines_name_the_field(users, key, sd, field):
    with pytest.raises(InvalidInput) as caught:
        control_baseline_set(users["qa"], series_key=key, mean=1, sd=sd)
    assert field in caught.value.fields
    assert not ControlBaseline.objects.exists()


def test_replacing_a_baseline_records_old_and_new_values(qc_lot, users):
    key = f"qc:{qc_lot.pk}:av"
    control_baseline_set(users["qa"], series_key=key, mean=1.0, sd=0.1)
    baseline = control_baseline_set(users["qa"], series_key=key, mean=1.2, sd=0.1, reason="new reference oil batch")
    entry = AuditEntry.objects.filter(object_type="analyses.controlbaseline", object_id=str(baseline.pk)).order_by("-sequence").first()
    assert entry.changes == {"mean": [1.0, 1.2]}
    assert entry.reason == "new reference oil batch"


def test_ewma_smoothing_and_width_come_from_settings(db, users, settings):
    lot = LotFactory(code="RSO-2026-03")
    control_baseline_set(users["qa"], series_key=f"production:{lot.product_id}:av", mean=MEAN, sd=SD)
    # A sustained shift of +1.5 s. NIST/SEMATECH e-Handbook EWMA: the limits tend to
    # ±L s sqrt(λ/(2 − λ)) = ±1.0 s for λ = 0.2, L = 3, which the EWMA crosses; for L = 6 they
    # tend to ±2.0 s, which an EWMA of values at 1.4-1.6 s never reaches.
    accepted_series(lot, in_control(5) + [MEAN + 1.4 * SD, MEAN + 1.6 * SD] * 6, kind=SampleKind.ROUTINE)
    settings.TREND_EWMA_WIDTH = 6.0
    trend_scan()
    assert not Alert.objects.filter(rule="ewma").exists()
    settings.TREND_EWMA_WIDTH = 3.0
    trend_scan()
    assert Alert.objects.filter(rule="ewma").exists()
