"""Alerts, baselines and control charts over REST."""
import pytest

from analyses.models import Alert, ControlBaseline, SampleKind
from analyses.services.trend_scan import trend_scan
from tests.analyses.series_setup import accepted_series
from tests.factories import LotFactory

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature
MEAN, SD = 0.35, 0.01


@pytest.fixture
def qc_key(clients, lot):
    key = f"qc:{lot.pk}:av"
    response = clients["qa"].post("/api/trends/baselines/", {"series_key": key, "mean": MEAN, "sd": SD, "reason": "reference oil certificate"}, format="json")
    assert response.status_code == 201, response.json()
    # Westgard 1-3s: the last point is 0.39, 4 s above the mean (references.md, found)
    accepted_series(lot, [0.347, 0.353] * 5 + [0.39])
    trend_scan()
    return key


def test_alerts_are_listed_filtered_and_acknowledged_by_qa(clients, qc_key):
    listed = clients["analyst"].get("/api/alerts/", {"rule": "westgard_1_3s"}).json()
    assert listed["count"] == 1
    alert = listed["results"][0]
    assert alert["series_key"] == qc_key and alert["state"] == "open" and alert["severity"] == "alarm"
    assert clients["analyst"].post(f"/api/alerts/{alert['id']}/acknowledge/", {"comment": "seen"}, format="json").status_code == 403
    missing = clients["qa"].post(f"/api/alerts/{alert['id']}/acknowledge/", {}, format="json")
    assert missing.status_code == 400 and "comment" in missing.json()["fields"]
    done = clients["qa"].post(f"/api/alerts/{alert['id']}/acknowledge/", {"comment": "titrant restandardised"}, format="json")
    assert done.status_code == 200 and done.json()["acknowledged_by"] == "qa"
    again = clients["qa"].post(f"/api/alerts/{alert['id']}/acknowledge/", {"comment": "again"}, format="json")
    assert again.status_code == 409
    assert clients["qa"].get("/api/alerts/", {"state": "open", "rule": "westgard_1_3s"}).json()["count"] == 0


@pytest.mark.parametrize("query, field", [({"state": "closed"}, "state"), ({"raised_after": "soon"}, "raised_after"), ({"product": 999999}, "product")])
def test_bad_alert_filters_name_the_parameter(clients, query, field):
    response = clients["qa"].get("/api/alerts/", query)
    assert response.status_code == 400
    assert field in response.json()["fields"]


def test_alert_list_runs_a_fixed_number_of_queries(clients, lot, django_assert_num_queries):
    accepted_series(lot, [MEAN] * 3)
    Alert.objects.bulk_create([
        Alert(source="trend", rule="nelson_1", series_key="qc:1:av", episode_key=f"k{i}", message="m", raised_at="2026-01-01T00:00:00Z", lot=lot, product=lot.product)
        for i in range(30)
    ])
    client = clients["qa"]
    client.get("/api/alerts/", {"page_size": 1})  # warm up (token and user rows)
    # token and user, count, one page with its related rows joined
    with django_assert_num_queries(3):
        assert len(client.get("/api/alerts/", {"page_size": 1}).json()["results"]) == 1
    with django_assert_num_queries(3):
        assert len(client.get("/api/alerts/", {"page_size": 30}).json()["results"]) == 30


def test_only_qa_enters_baselines_and_bad_ones_are_refused(clients, lot):
    key = f"qc:{lot.pk}:av"
    assert clients["analyst"].post("/api/trends/baselines/", {"series_key": key, "mean": 1, "sd": 0.1}, format="json").status_code == 403
    for body, field in (({"series_key": key, "mean": 1, "sd": 0}, "sd"), ({"series_key": "x", "mean": 1, "sd": 1}, "series_key"),
                        ({"series_key": key, "mean": "a", "sd": 1}, "mean")):
        response = clients["qa"].post("/api/trends/baselines/", body, format="json")
        assert response.status_code == 400 and field in response.json()["fields"]
    assert not ControlBaseline.objects.exists()


def test_a_baseline_for_a_series_that_does_not_exist_is_a_400_naming_the_key(clients):
    # issue 13: this was a 201
    response = clients["qa"].post("/api/trends/baselines/", {"series_key": "production:999:pv", "mean": 4, "sd": 0.5}, format="json")
    assert response.status_code == 400
    assert list(response.json()["fields"]) == ["series_key"] and "product 999" in response.json()["detail"]
    assert not ControlBaseline.objects.exists()


def test_series_and_their_control_charts(clients, qc_key):
    series = clients["qa"].get("/api/trends/series/").json()
    # paged like every other list (issue 13)
    assert series["count"] == 1 and series["next"] is None
    assert series["results"] == [{"series_key": qc_key, "kind": "qc", "method_code": "av", "results": 11,
                       "baseline": {"mean": MEAN, "sd": SD, "source": "entered"}}]
    chart = clients["qa"].get(f"/api/trends/series/{qc_key}/chart/").json()
    # Shewhart/Levey-Jennings limits at mean ± 3 s
    assert chart["centre"] == pytest.approx(MEAN)
    assert chart["limits"] == {"lower": pytest.approx(MEAN - 3 * SD), "upper": pytest.approx(MEAN + 3 * SD)}
    assert chart["flagged"] == [10]
    assert chart["unit"] == "mg KOH/g"  # the av plugin's result unit
    ewma = clients["qa"].get(f"/api/trends/series/{qc_key}/chart/", {"chart": "ewma"}).json()
    assert ewma["smoothing"] == 0.2 and len(ewma["points"]) == 11
    png = clients["qa"].get(f"/api/trends/series/{qc_key}/chart.png")
    assert png["Content-Type"] == "image/png" and png.content.startswith(PNG_SIGNATURE)
    assert b"<svg" in clients["qa"].get(f"/api/trends/series/{qc_key}/chart.svg").content


def test_chart_errors_are_4xx(clients, lot):
    assert clients["qa"].get("/api/trends/series/qc:999:av/chart/").status_code == 404
    accepted_series(lot, [MEAN] * 3, kind=SampleKind.ROUTINE)
    short = clients["qa"].get(f"/api/trends/series/production:{lot.product_id}:av/chart/")
    assert short.status_code == 400 and "series_key" in short.json()["fields"]
    assert clients["qa"].get(f"/api/trends/series/production:{lot.product_id}:av/chart/", {"chart": "pie"}).json()["fields"].keys() == {"chart"}


def test_an_across_material_alert_is_listed_under_its_method_runs(clients):
    # Westgard R-4s across the levels of one run (LabCE "Westgard Multi-Rule Approach", found):
    # the low level at +2.5 s and the high level at −2.5 s on the same day.
    levels = {"low": (LotFactory(code="REF-LOW"), 0.30, 0.01), "high": (LotFactory(code="REF-HIGH"), 2.00, 0.05)}
    for lot, mean, sd in levels.values():
        response = clients["qa"].post("/api/trends/baselines/", {"series_key": f"qc:{lot.pk}:av", "mean": mean, "sd": sd}, format="json")
        assert response.status_code == 201, response.json()
    for (lot, mean, sd), z in zip(levels.values(), (2.5, -2.5)):
        accepted_series(lot, [mean + z * sd])
    trend_scan()
    listed = clients["analyst"].get("/api/alerts/", {"series_key": "qc-runs:av"}).json()
    assert [a["rule"] for a in listed["results"]] == ["westgard_r_4s_across"]
    assert {p["series_key"] for p in listed["results"][0]["points"]} == {f"qc:{lot.pk}:av" for lot, _, _ in levels.values()}
