"""The periodic trend scan: baselines, rules per series kind, one alert per episode."""
import datetime as dt

import numpy as np
import pytest

from analyses.errors import InvalidInput, NotAllowed
from analyses.models import Alert, AlertSeverity, AuditEntry, BaselineSource, ControlBaseline, SampleKind
from analyses.services.trend_scan import control_baseline_set, trend_scan
from analyses.selectors.trend_series import trend_series_frame
from tests.analyses.concurrency import race
from tests.analyses.series_setup import START, accepted_series
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


@pytest.mark.parametrize(
    "key, words",
    [("production:999999:pv", "product 999999"), ("qc:999999:av", "lot 999999"), ("qc:{lot}:xyz", "method 'xyz'")],
    ids=["no-product", "no-lot", "no-method"],
)
def test_a_baseline_for_a_series_that_does_not_exist_is_refused(qc_lot, users, key, words):
    with pytest.raises(InvalidInput) as caught:
        control_baseline_set(users["qa"], series_key=key.format(lot=qc_lot.pk), mean=1, sd=0.1)
    assert list(caught.value.fields) == ["series_key"]
    assert words in caught.value.fields["series_key"][0]
    assert not ControlBaseline.objects.exists()


def test_a_baseline_may_come_before_the_series_first_result(qc_lot, users):
    """From a reference material's certificate: the lot exists, no result yet."""
    baseline = control_baseline_set(users["qa"], series_key=f"qc:{qc_lot.pk}:pv", mean=4.0, sd=0.2)
    assert baseline.method_code == "pv"


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


def trend_then(lot, last: float, verdict: str):
    """Ten routine results rising steadily by 0.2 s, then one more far off that line."""
    values = [MEAN + 0.2 * SD * i for i in range(10)]
    accepted_series(lot, values, kind=SampleKind.ROUTINE)
    accepted_series(lot, [last], kind=SampleKind.ROUTINE, first_index=10, verdict=verdict)


def test_a_result_far_off_its_trend_but_in_specification_is_out_of_trend(db, users):
    lot = LotFactory(code="RSO-OOT-1")
    control_baseline_set(users["qa"], series_key=f"production:{lot.product_id}:av", mean=MEAN, sd=SD)
    # project's own rule (common practice, no source): outside the 99 % prediction interval of the last 10
    trend_then(lot, MEAN - 1.0 * SD, verdict="pass")
    trend_scan()
    assert Alert.objects.filter(rule="out_of_trend").count() == 1


def test_an_out_of_specification_result_is_not_also_out_of_trend(db, users):
    lot = LotFactory(code="RSO-OOT-2")
    control_baseline_set(users["qa"], series_key=f"production:{lot.product_id}:av", mean=MEAN, sd=SD)
    trend_then(lot, MEAN - 1.0 * SD, verdict="oos")
    trend_scan()
    assert not Alert.objects.filter(rule="out_of_trend").exists()


def test_r_4s_compares_qc_results_of_the_same_run_only(qc_lot, users):
    # Westgard R-4s: within a run, one point above +2 s and one below -2 s (references.md, found)
    control_baseline_set(users["qa"], series_key=f"qc:{qc_lot.pk}:av", mean=MEAN, sd=SD)
    day = dt.datetime(2026, 3, 2, 8, tzinfo=dt.timezone.utc)
    accepted_series(qc_lot, [MEAN + 2.5 * SD], start=day)
    accepted_series(qc_lot, [MEAN - 2.5 * SD], start=day + dt.timedelta(days=1), first_index=1)  # next day's run
    trend_scan()
    assert not Alert.objects.filter(rule="westgard_r_4s").exists()
    accepted_series(qc_lot, [MEAN + 2.5 * SD, MEAN - 2.5 * SD], start=day + dt.timedelta(days=7), first_index=2)  # one run
    trend_scan()
    assert Alert.objects.filter(rule="westgard_r_4s").count() == 1


def test_a_late_result_that_shifts_an_episode_raises_no_second_alert(qc_lot, users):
    control_baseline_set(users["qa"], series_key=f"qc:{qc_lot.pk}:av", mean=MEAN, sd=SD)
    # Westgard 10-x: ten consecutive results on one side of the mean (references.md, found)
    accepted_series(qc_lot, [MEAN + 0.5 * SD] * 10, start=START + dt.timedelta(hours=1))
    trend_scan()
    assert Alert.objects.filter(rule="westgard_10_x").count() == 1
    # a result received earlier but accepted only now lengthens the run at its start
    accepted_series(qc_lot, [MEAN + 0.5 * SD], start=START, first_index=99)
    trend_scan()
    assert Alert.objects.filter(rule="westgard_10_x").count() == 1


def test_a_series_whose_first_results_are_all_equal_is_reported_without_baseline(qc_lot):
    accepted_series(qc_lot, [MEAN] * 21)
    assert trend_scan().series_without_baseline == [f"qc:{qc_lot.pk}:av"]


def test_a_named_series_is_read_alone(db, qc_lot):
    other = LotFactory(code="REF-OIL-2")
    accepted_series(qc_lot, [MEAN] * 3)
    accepted_series(other, [MEAN] * 4)
    frame = trend_series_frame([f"qc:{other.pk}:av", "nonsense", "qc:999999999999999999999:av"])
    assert set(frame["series_id"]) == {f"qc:{other.pk}:av"} and len(frame) == 4


# Across control materials within a run. Westgard (LabCE "Westgard Multi-Rule Approach",
# labce.com/spg113780 and spg574557, found): R-4s and 2-2s compare the levels measured in the
# same run; with three levels, 2 of 3 beyond the same 2 s. A run is one method on one day.
LEVELS = {"low": (0.30, 0.01), "high": (2.00, 0.05), "third": (4.00, 0.10)}
RUN_DAY = dt.datetime(2026, 4, 6, 8, tzinfo=dt.timezone.utc)


@pytest.fixture
def levels(db, users):
    """Three invented control oils, each with its own baseline for the acid value and the peroxide value."""
    lots = {name: LotFactory(code=f"REF-{name.upper()}") for name in LEVELS}
    for name, (mean, sd) in LEVELS.items():
        for method in ("av", "pv"):
            control_baseline_set(users["qa"], series_key=f"qc:{lots[name].pk}:{method}", mean=mean, sd=sd)
    return lots


def check(lots, name: str, z: float, day: int = 0, method: str = "av"):
    """One accepted QC check of level ``name`` at ``z`` s, received on RUN_DAY + ``day``."""
    mean, sd = LEVELS[name]
    return accepted_series(lots[name], [mean + z * sd], method_code=method, start=RUN_DAY + dt.timedelta(days=day), first_index=day)[0]


def test_r_4s_fires_on_a_two_level_run_once(levels):
    low, high = check(levels, "low", 2.5), check(levels, "high", -2.5)
    first = trend_scan()
    alert = Alert.objects.get(rule="westgard_r_4s_across")
    assert alert.series_key == "qc-runs:av" and alert.method_code == "av" and alert.lot_id is None
    assert alert.severity == AlertSeverity.ALARM
    assert sorted((p["test_id"], p["series_key"]) for p in alert.points) == sorted(
        [(low.pk, f"qc:{levels['low'].pk}:av"), (high.pk, f"qc:{levels['high'].pk}:av")]
    )
    assert first.alerts_raised >= 1
    assert not Alert.objects.filter(rule="westgard_r_4s").exists()  # one check per level: the within-material rule cannot see it
    assert trend_scan().alerts_raised == 0


def test_r_4s_does_not_compare_different_days_or_methods(levels):
    check(levels, "low", 2.5, day=0)
    check(levels, "high", -2.5, day=1)
    check(levels, "low", 2.5, day=2, method="av")
    check(levels, "high", -2.5, day=2, method="pv")
    check(levels, "high", 1.9, day=3)
    check(levels, "low", -2.5, day=3)
    trend_scan()
    assert not Alert.objects.filter(rule__endswith="_across").exists()


def test_rescanning_one_level_brings_in_the_other_levels_of_its_run(levels):
    check(levels, "low", 2.5)
    check(levels, "high", -2.5)
    # what an accepted result queues: a rescan of its own series only
    trend_scan([f"qc:{levels['low'].pk}:av"])
    assert Alert.objects.filter(rule="westgard_r_4s_across", series_key="qc-runs:av").count() == 1


def test_2_2s_across_fires_when_both_levels_are_beyond_the_same_2s(levels):
    check(levels, "low", 2.5)
    check(levels, "high", 2.2)
    check(levels, "low", -2.2, day=1)
    check(levels, "high", 1.5, day=1)
    trend_scan()
    alert = Alert.objects.get(rule="westgard_2_2s_across")
    assert alert.episode_key.split("|")[2] == "+" and len(alert.points) == 2
    assert not Alert.objects.filter(rule__in=["westgard_r_4s_across", "westgard_2of3_2s", "westgard_2_2s"]).exists()


def test_2_of_3_2s_fires_on_a_three_level_run(levels):
    check(levels, "low", -2.3)
    check(levels, "high", 0.4)
    check(levels, "third", -2.7)
    trend_scan()
    alert = Alert.objects.get(rule="westgard_2of3_2s")
    assert alert.episode_key.split("|")[2] == "-" and len(alert.points) == 2
    assert not Alert.objects.filter(rule="westgard_2_2s_across").exists()  # a three-level run is judged by 2 of 3


def test_one_of_three_levels_beyond_2s_raises_only_the_warning(levels):
    check(levels, "low", 2.3)
    check(levels, "high", 0.4)
    check(levels, "third", 1.9)
    trend_scan()
    assert list(Alert.objects.values_list("rule", flat=True)) == ["westgard_1_2s"]


@pytest.mark.django_db(transaction=True)
def test_scans_running_at_once_establish_a_baseline_once_on_postgresql(postgres):
    """A rescan queued by an accepted result may meet the periodic scan: the baseline both
    would establish is stored once, and neither scan fails (issue 8)."""
    lot = LotFactory(code="REF-OIL-RACE")
    accepted_series(lot, in_control(21))
    outcomes = race(lambda i: trend_scan())
    assert [o for o in outcomes if isinstance(o, Exception)] == []
    baseline = ControlBaseline.objects.get(series_key=f"qc:{lot.pk}:av")
    assert all(o.series_scanned == 1 and not o.series_without_baseline for o in outcomes)
    creates = AuditEntry.objects.filter(object_type="analyses.controlbaseline", object_id=str(baseline.pk), action="create")
    assert creates.count() == 1
