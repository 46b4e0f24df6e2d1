"""Stability studies over REST: create, evaluate, pull points, plots as data and images."""
import datetime as dt

import pytest

from analyses.models import AuditEntry, PullPoint, SampleKind, StabilityStudy, TestState
from tests.factories import SampleFactory, SpecificationLineFactory, TestFactory

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


def protocol(lot) -> dict:
    return {
        "code": "STAB-API-1", "title": "Refined soybean oil at 25 and 40 °C", "product": lot.product_id, "lots": [lot.pk],
        "started_on": "2026-01-01", "storage_temperature_c": 25, "claimed_shelf_life_months": 12,
        "conditions": [{"temperature_c": 25}, {"temperature_c": 40, "light": "dark"}],
        "pull_points": [{"offset": m} for m in (0, 1, 2, 3)],
        "attributes": [{"method_code": "pv", "maximum": 10}],
    }


def test_a_manager_creates_a_study_and_the_pull_schedule(clients, lot):
    response = clients["manager"].post("/api/stability-studies/", protocol(lot), format="json")
    assert response.status_code == 201, response.json()
    body = response.json()
    assert body["code"] == "STAB-API-1"
    assert [c["temperature_c"] for c in body["conditions"]] == [25, 40]
    pulls = clients["analyst"].get(f"/api/stability-studies/{body['id']}/pull-points/").json()
    assert pulls["count"] == 8
    assert pulls["results"][0]["due_on"] == "2026-01-01"


@pytest.mark.parametrize(
    "change, field",
    [
        ({"conditions": []}, "conditions"),
        ({"conditions": [{"temperature_c": "hot"}]}, "conditions.0.temperature_c"),
        ({"pull_points": [{"offset": -1}]}, "pull_points.0.offset"),
        ({"attributes": [{"method_code": "zz", "maximum": 1}]}, "attributes.0.method_code"),
        ({"attributes": [{"method_code": "pv"}]}, "attributes.0"),
        ({"lots": [987654]}, "lots"),
        ({"started_on": "yesterday"}, "started_on"),
        ({"shelf_life": 12}, "shelf_life"),
        ({"pull_points": [{"offset": 100000, "unit": "months"}]}, "pull_points.0.offset"),
        ({"pull_points": [{"offset": 10**10, "unit": "days"}]}, "pull_points.0.offset"),
        ({"pull_points": [{"offset": 241, "unit": "months"}]}, "pull_points.0.offset"),
        ({"started_on": "9999-12-15"}, "started_on"),
    ],
)
def test_bad_protocols_are_400_naming_the_field_and_write_nothing(clients, lot, change, field):
    audit_before = AuditEntry.objects.count()
    response = clients["manager"].post("/api/stability-studies/", protocol(lot) | change, format="json")
    assert response.status_code == 400
    assert any(name == field or name.startswith(field + ".") for name in response.json()["fields"]), response.json()
    assert not StabilityStudy.objects.exists()
    assert AuditEntry.objects.count() == audit_before


@pytest.mark.parametrize("role, expected", [("manager", 201), ("qa", 201), ("admin", 201), ("analyst", 403), ("nobody", 403), ("anonymous", 401)])
def test_who_may_create_a_study(clients, lot, role, expected):
    assert clients[role].post("/api/stability-studies/", protocol(lot), format="json").status_code == expected


@pytest.fixture
def study_with_results(clients, lot):
    study_id = clients["manager"].post("/api/stability-studies/", protocol(lot), format="json").json()["id"]
    line = SpecificationLineFactory(method_code="pv", maximum="1000")
    # invented data: PV rising 0.8 per month at 25 °C and 3.0 at 40 °C from 1.0
    for pull in PullPoint.objects.filter(study_id=study_id).select_related("condition"):
        rate = 0.8 if pull.condition.temperature_c == 25 else 3.0
        pull.sample = SampleFactory(lot=lot, kind=SampleKind.STABILITY_PULL, label=f"api-pull-{pull.pk}")
        pull.save(update_fields=["sample"])
        value = 1.0 + rate * pull.elapsed_months + (0.05 if pull.offset % 2 else -0.05)
        TestFactory(sample=pull.sample, specification_line=line, method_code="pv", state=TestState.ACCEPTED, value=value)
    return study_id


def test_evaluate_shows_the_predicted_shelf_life_and_raises_alerts(clients, study_with_results):
    response = clients["qa"].post(f"/api/stability-studies/{study_with_results}/evaluate/")
    assert response.status_code == 200
    body = response.json()
    assert 0 < body["predicted_shelf_life_months"] <= 12
    attribute = body["evaluation"]["attributes"][0]
    assert attribute["arrhenius"]["temperatures_c"] == [25, 40]
    alerts = clients["qa"].get("/api/alerts/", {"study": study_with_results}).json()
    assert {a["rule"] for a in alerts["results"]} >= {"pull_out_of_limit"}  # 40 °C passes PV 10 at 3 months


def test_evaluate_names_the_q1e_branch_and_why(clients, study_with_results):
    """PV at 40 °C reaches 10.05 at 3 months, beyond the limit: significant change at the
    accelerated condition, and no intermediate condition, so ICH Q1E allows no extrapolation
    (branch room_temperature.intermediate_not_shown): the supported shelf life is X = 3 months."""
    body = clients["qa"].post(f"/api/stability-studies/{study_with_results}/evaluate/").json()
    assert body["storage_category"] == "room_temperature"  # from the 25 °C storage temperature
    assert body["extrapolation_branch"] == "room_temperature.intermediate_not_shown"
    extrapolation = body["evaluation"]["extrapolation"]
    assert extrapolation["factor"] is None and "no intermediate condition was tested" in extrapolation["reason"]
    assert extrapolation["accelerated"]["temperatures_c"] == [40] and extrapolation["accelerated"]["first_months"] == 3
    assert body["evaluation"]["supported_shelf_life_months"] == 3
    # the plot caps at the same branch limit
    condition = StabilityStudy.objects.get(pk=study_with_results).conditions.get(temperature_c=25).pk
    plot = clients["analyst"].get(f"/api/stability-studies/{study_with_results}/plot/", {"method": "pv", "condition": condition}).json()
    assert plot["extrapolation_cap"] == 3


def test_a_study_declares_its_category_and_attribute_amounts(clients, lot):
    body = protocol(lot) | {"storage_category": "refrigerated", "attributes": [{"method_code": "pv", "maximum": 10, "significant_change": 2.5}]}
    response = clients["manager"].post("/api/stability-studies/", body, format="json")
    assert response.status_code == 201, response.json()
    assert response.json()["storage_category"] == "refrigerated"  # stricter than 25 °C suggests: allowed
    assert response.json()["attributes"][0]["significant_change"] == 2.5
    assert response.json()["extrapolation_branch"] is None  # not evaluated yet


@pytest.mark.parametrize("change", [{"storage_category": "ambient"}, {"storage_category": "room_temperature", "storage_temperature_c": 5}])
def test_a_category_that_does_not_fit_is_a_400_naming_it(clients, lot, change):
    response = clients["manager"].post("/api/stability-studies/", protocol(lot) | change, format="json")
    assert response.status_code == 400
    assert "storage_category" in response.json()["fields"]


def test_the_plot_comes_as_data_png_and_svg(clients, study_with_results):
    condition = StabilityStudy.objects.get(pk=study_with_results).conditions.get(temperature_c=25).pk
    query = {"method": "pv", "condition": condition}
    data = clients["analyst"].get(f"/api/stability-studies/{study_with_results}/plot/", query).json()
    assert data["limit"] == 10 and len(data["points"]) == 4 and data["lines"][0]["bound"]
    assert data["unit"] == "meq O2/kg"
    png = clients["analyst"].get(f"/api/stability-studies/{study_with_results}/plot.png", query)
    assert png.status_code == 200 and png["Content-Type"] == "image/png"
    assert png.content.startswith(PNG_SIGNATURE)
    svg = clients["analyst"].get(f"/api/stability-studies/{study_with_results}/plot.svg", query)
    assert svg["Content-Type"] == "image/svg+xml" and b"<svg" in svg.content


@pytest.mark.parametrize("query, field", [({"condition": 1}, "method"), ({"method": "pv"}, "condition"), ({"method": "av", "condition": 1}, "method")])
def test_plot_queries_are_checked(clients, study_with_results, query, field):
    response = clients["analyst"].get(f"/api/stability-studies/{study_with_results}/plot.png", query)
    assert response.status_code == 400
    assert field in response.json()["fields"]


def test_closing_needs_a_reason(clients, study_with_results):
    url = f"/api/stability-studies/{study_with_results}/close/"
    assert clients["qa"].post(url, {}, format="json").json()["fields"].keys() == {"reason"}
    for not_text in (0, 1.5, True, ["why"]):  # a reason is text; DRF's CharField alone took 0 as "0"
        refused = clients["qa"].post(url, {"reason": not_text}, format="json")
        assert refused.status_code == 400 and refused.json()["fields"].keys() == {"reason"}
    assert StabilityStudy.objects.get(pk=study_with_results).state == "running"
    closed = clients["qa"].post(url, {"reason": "claim confirmed"}, format="json")
    assert closed.status_code == 200 and closed.json()["state"] == "closed"


def test_unknown_study_is_404(clients):
    assert clients["qa"].get("/api/stability-studies/999999/").status_code == 404
    assert clients["qa"].get("/api/stability-studies/999999/pull-points/").status_code == 404
    assert clients["qa"].get(f"/api/stability-studies/{10**20}/pull-points/").status_code == 404
    assert clients["qa"].get(f"/api/stability-studies/{10**20}/plot/", {"method": "pv", "condition": 1}).status_code == 404
    assert clients["qa"].post("/api/stability-studies/999999/evaluate/").status_code == 404
