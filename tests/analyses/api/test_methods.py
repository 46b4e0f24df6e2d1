"""Methods and the stateless calculation over REST."""
import pytest
from rest_framework.test import APIClient


@pytest.fixture
def api():
    return APIClient()


def test_method_list_carries_metadata(api, db):
    response = api.get("/api/methods/")
    assert response.status_code == 200
    codes = [m["code"] for m in response.json()]
    assert codes == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "totox", "unsap"]


def test_method_detail_and_unknown_method(api, db):
    assert api.get("/api/methods/pv/").json()["standards"] == ["AOCS Cd 8b-90", "ISO 3960"]
    # issue 9: what an entry must name
    av = api.get("/api/methods/av/").json()
    assert av["titrants"] == ["KOH", "NaOH"]
    assert av["instruments"] == [{"any_of": ["balance"]}, {"any_of": ["burette", "automatic_titrator"]}]
    assert api.get("/api/methods/anv/").json()["instruments"] == [{"any_of": ["balance"]}, {"any_of": ["spectrophotometer"]}]
    missing = api.get("/api/methods/nope/")
    assert missing.status_code == 404
    assert "unknown method 'nope'" in missing.json()["detail"]


def test_calculation_returns_value_reported_and_unit(api, db):
    # AOCS Cd 1d-92 / ISO 3961: IV = (B - S) * c * 12.69 / m = 14.0 * 0.1 * 12.69 / 0.2 = 88.83
    response = api.post(
        "/api/calculations/",
        {"method": "iv", "inputs": {"sample_mass": "200 mg", "sample_volume": 31.0, "blank_volume": 45.0, "titrant_concentration": 0.1}},
        format="json",
    )
    assert response.status_code == 200, response.json()
    body = response.json()
    assert body["value"] == pytest.approx(88.83, abs=1e-9)
    assert body["reported"] == "88.8"
    assert body["unit"] == "g I2/100 g"


@pytest.mark.parametrize(
    "payload, field",
    [
        ({"method": "sv", "inputs": {"sample_mass": "2 mL", "sample_volume": 1, "blank_volume": 25, "titrant_concentration": 0.5}}, "sample_mass"),
        ({"method": "sv", "inputs": {"sample_mass": -2, "sample_volume": 1, "blank_volume": 25, "titrant_concentration": 0.5}}, "sample_mass"),
        ({"method": "sv", "inputs": {"sample_mass": 2, "sample_volume": 30, "blank_volume": 25, "titrant_concentration": 0.5}}, "sample_volume"),
        ({"method": "pv", "inputs": {"sample_mass": 5, "sample_volume": -0.1, "titrant_concentration": 0.01}}, "sample_volume"),
        ({"method": "pv", "inputs": {"sample_mass": 5, "sample_volume": 1, "titrant_concentration": "abc"}}, "titrant_concentration"),
        ({"method": "ffa", "inputs": {"sample_mass": 5, "sample_volume": 1, "titrant_concentration": 0.1, "fatty_acid_basis": "x"}}, "fatty_acid_basis"),
        ({"method": "av", "inputs": {"sample_mass": 5, "sample_volume": 1}}, "titrant_concentration"),
        ({"method": "av", "inputs": {"sample_mass": 5, "sample_volume": 1, "titrant_concentration": 0.1, "colour": 3}}, "colour"),
        ({"method": "av", "inputs": {"sample_mass": [5], "sample_volume": 1, "titrant_concentration": 0.1}}, "sample_mass"),
        ({"inputs": {}}, "method"),
        ({"method": "av", "inputs": "text"}, "inputs"),
    ],
)
def test_calculation_bad_input_is_400_naming_the_field(api, db, payload, field):
    response = api.post("/api/calculations/", payload, format="json")
    assert response.status_code == 400
    body = response.json()
    assert field in body["fields"], body
    assert body["detail"]


def test_calculation_malformed_json_is_400(api, db):
    response = api.post("/api/calculations/", "{not json", content_type="application/json")
    assert response.status_code == 400
    assert "body" in response.json()["fields"]


def test_schema_and_docs_are_served(api, db):
    schema = api.get("/api/schema/", HTTP_ACCEPT="application/vnd.oai.openapi+json")
    assert schema.status_code == 200
    assert "/api/calculations/" in schema.json()["paths"]
    assert api.get("/api/docs/").status_code == 200


# The audit's five exact-at-limit reproducers (issue 7), sent as a user would: limits as the
# Codex defaults (CXS 210 maize SV min 187, palm IV min 50.0, refined AV max 0.6 and PV max 10;
# found) or, for FFA, our own test limit 0.3.
EXACT_AT_LIMIT = [
    ("sv", {"sample_mass": "1.965", "sample_volume": "11.90", "blank_volume": "25.00", "titrant_concentration": "0.5"}, {"oil_type": "maize"}),
    ("av", {"sample_mass": "9.35", "sample_volume": "1.00", "titrant_concentration": "0.1"}, {"oil_type": "refined"}),
    ("iv", {"sample_mass": "0.2538", "sample_volume": "40.0", "blank_volume": "50.0", "titrant_concentration": "0.1"}, {"oil_type": "palm"}),
    ("pv", {"sample_mass": "4.97", "sample_volume": "4.97", "blank_volume": "0", "titrant_concentration": "0.01"}, {"oil_type": "refined"}),
    ("ffa", {"sample_mass": "9.4", "sample_volume": "1.00", "titrant_concentration": "0.1"}, {"maximum": "0.3"}),
]


@pytest.mark.parametrize(("method", "inputs", "limits"), EXACT_AT_LIMIT)
@pytest.mark.parametrize("as_json_numbers", [False, True])
def test_calculation_passes_every_exact_at_limit_case(api, db, method, inputs, limits, as_json_numbers):
    sent = {k: float(v) for k, v in inputs.items()} if as_json_numbers else inputs
    response = api.post("/api/calculations/", {"method": method, "inputs": sent, **limits}, format="json")
    assert response.status_code == 200, response.json()
    body = response.json()
    assert body["verdict"] == "pass"
    assert body["limits"]["comparison"] == "absolute"


def test_calculation_without_limits_has_no_verdict(api, db):
    response = api.post("/api/calculations/", {"method": EXACT_AT_LIMIT[1][0], "inputs": EXACT_AT_LIMIT[1][1]}, format="json")
    assert response.json()["verdict"] is None
    assert response.json()["limits"] is None


def test_a_profile_is_described_and_calculated_per_component(api, db):
    fac = api.get("/api/methods/fac/").json()
    assert fac["headline"] == "iv_calc" and "C18:2" in [c["name"] for c in fac["components"]]
    assert api.get("/api/methods/iv/").json()["components"] == []
    run = {"C16:0": "9.0", "C18:0": "3.4", "C18:1": "19.0", "C18:2": "62.1", "C18:3": "6.5"}
    answer = api.post("/api/calculations/", {"method": "fac:C18:2", "inputs": run, "oil_type": "soybean"}, format="json")
    assert answer.status_code == 200, answer.json()
    body = answer.json()
    # Codex CXS 210 soybean C18:2 48.0-59.0 (from memory, shared/references.md)
    assert body["reported"] == "62.1" and body["unit"] == "%" and body["verdict"] == "oos"
    assert body["limits"]["maximum"] == "59.0" and body["components"]["iv_calc"]["unit"] == "g I2/100 g"
    assert any("above the 59.0 % maximum for soybean oil" in w for w in body["review_warnings"])
    unknown = api.post("/api/calculations/", {"method": "fac:C99:9", "inputs": run}, format="json")
    assert unknown.status_code == 404
