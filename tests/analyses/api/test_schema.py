"""The OpenAPI 3 description is complete enough to generate a client from."""
from __future__ import annotations

import re

import pytest
import yaml
from django.core.management import call_command
from drf_spectacular.drainage import GENERATOR_STATS, reset_generator_stats

from analyses.api.urls import urlpatterns


@pytest.fixture
def schema(tmp_path) -> dict:
    """``spectacular --validate --fail-on-warn``: raises on any warning or error, and on a
    schema that does not validate against the OpenAPI 3 JSON schema."""
    reset_generator_stats()
    target = tmp_path / "schema.yaml"
    call_command("spectacular", "--validate", "--fail-on-warn", "--file", str(target))
    assert not GENERATOR_STATS  # neither warnings nor errors
    return yaml.safe_load(target.read_text())


def test_schema_validates_without_warnings(schema):
    assert schema["openapi"].startswith("3.")


def schema_path(route: str) -> str:
    """"lots/<int:pk>/release/" -> "/api/lots/{id}/release/" (drf-spectacular names pk "id")."""
    return "/api/" + re.sub(r"<(?:\w+:)?(\w+)>", lambda m: "{id}" if m[1] == "pk" else "{" + m[1] + "}", route)


def test_every_route_and_method_is_described_with_bodies_and_errors(schema):
    ours = {schema_path(str(pattern.pattern)) for pattern in urlpatterns}
    assert ours <= set(schema["paths"])
    for path in sorted(ours):
        operations = schema["paths"][path]
        for method, operation in operations.items():
            responses = operation["responses"]
            success = [code for code in responses if code.startswith("2")]
            assert success, (method, path)
            assert "content" in responses[success[0]], (method, path)  # a typed body for clients
            if method in ("post", "put") and not path.startswith(("/api/calculations/", "/api/auth/")):
                assert {"401", "403"} <= set(responses), (method, path)
            if path.startswith(("/api/methods/", "/api/calculations/")):
                continue  # the open method catalogue predates this API
            assert "401" in responses or path == "/api/auth/token/", (method, path)


def test_errors_and_the_idempotency_header_are_documented(schema):
    components = schema["components"]["schemas"]
    assert set(components["InvalidInputError"]["properties"]) == {"detail", "fields"}
    assert "missing" in components["Error"]["properties"]
    record = schema["paths"]["/api/results/"]["post"]
    assert any(p["name"] == "Idempotency-Key" and p["in"] == "header" for p in record["parameters"])
    release = schema["paths"]["/api/lots/{id}/release/"]["post"]["responses"]
    assert release["201"]["content"]["application/json"]["schema"]["$ref"].endswith("/Certificate")
    assert release["409"]["content"]["application/json"]["schema"]["$ref"].endswith("/Error")
    listing = schema["paths"]["/api/tests/"]["get"]
    assert {"state", "method", "lot", "product", "assignee", "due_on_after", "page_size"} <= {p["name"] for p in listing["parameters"]}
    assert components["TestStateEnum"]["enum"][0] == "pending"


def test_result_inputs_say_how_to_keep_the_digits_as_written(schema):
    """A JSON number loses trailing zeros in parsing (1.30 -> 1.3); the docs say to send strings."""
    components = schema["components"]["schemas"]
    described = sorted(
        name for name, component in components.items()
        if 'e.g. "1.30"' in component.get("properties", {}).get("inputs", {}).get("description", "")
    )
    assert described == ["BulkResultItemRequest", "ResultCorrectRequest", "ResultRecordRequest"]


def test_the_answers_the_framework_gives_are_documented(schema):
    """401 wherever a caller must authenticate, 404 wherever the path names an object and on
    every paged list (DRF answers ?page=0 with 404): the drift the attack run found (issue 8)."""
    for path, operations in schema["paths"].items():
        for method, operation in operations.items():
            responses = operation["responses"]
            if {} not in operation.get("security", [{}]):
                assert "401" in responses, (method, path)
            if "{" in path:
                assert "404" in responses, (method, path)
            if any(p["name"] == "page" and p["in"] == "query" for p in operation.get("parameters", [])):
                assert "404" in responses and "?page=0" in responses["404"]["description"], (method, path)
    assert "404" in schema["paths"]["/api/methods/{code}/"]["get"]["responses"]
    assert "401" not in schema["paths"]["/api/methods/"]["get"]["responses"]  # open to anyone
    listing = schema["paths"]["/api/stability-studies/"]["get"]["responses"]
    assert listing["404"]["content"]["application/json"]["schema"]["$ref"].endswith("/Error")


def test_values_not_set_yet_are_null_in_the_schema_as_in_the_answers(schema):
    components = schema["components"]["schemas"]
    for component, field in (("Test", "verdict"), ("SampleTest", "verdict"), ("Investigation", "conclusion")):
        described = components[component]["properties"][field]
        assert described["nullable"] is True, component
        enum = components[described["allOf"][0]["$ref"].rsplit("/", 1)[1]]["enum"]
        assert "" not in enum, component
