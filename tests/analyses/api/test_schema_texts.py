"""The API's documentation is written for a lab's integrator (issue 13): every operation and
every schema has a text, none of it in developer words; OPTIONS shows what a client may send."""
from __future__ import annotations

import re

import pytest
from rest_framework.test import APIClient

from analyses.api.integrator_texts import DEVELOPER_WORDS, OPERATIONS, SCHEMAS

pytestmark = pytest.mark.django_db

DEVELOPER_PHRASING = re.compile("|".join(DEVELOPER_WORDS), re.IGNORECASE)
HTTP_METHODS = ("get", "post", "put", "patch", "delete")


@pytest.fixture(scope="module")
def schema(django_db_blocker) -> dict:
    with django_db_blocker.unblock():
        return APIClient().get("/api/schema/", {"format": "json"}).json()


def _operations(schema: dict):
    for path, operations in schema["paths"].items():
        for method, operation in operations.items():
            if method in HTTP_METHODS:
                yield f"{method.upper()} {path}", operation


def _texts(node):
    """Every description and summary anywhere under ``node``."""
    if isinstance(node, dict):
        for key, value in node.items():
            if key in ("description", "summary", "title") and isinstance(value, str):
                yield value
            else:
                yield from _texts(value)
    elif isinstance(node, list):
        for value in node:
            yield from _texts(value)


def test_every_operation_has_a_summary_and_a_description(schema):
    missing = [name for name, operation in _operations(schema) if not (operation.get("summary") and operation.get("description"))]
    assert missing == []


def test_every_schema_component_is_described(schema):
    missing = [name for name, component in schema["components"]["schemas"].items() if not component.get("description")]
    assert missing == []


def test_no_developer_phrasing_reaches_the_schema(schema):
    found = sorted({text[:80] for text in _texts(schema["paths"]) if DEVELOPER_PHRASING.search(text)}
                   | {text[:80] for text in _texts(schema["components"]) if DEVELOPER_PHRASING.search(text)})
    assert found == []


def test_the_texts_name_only_operations_and_schemas_that_exist(schema):
    # a renamed route or serializer would otherwise leave its text behind, unread
    operation_ids = {operation["operationId"] for _, operation in _operations(schema)}
    assert sorted(set(OPERATIONS) - operation_ids) == []
    assert sorted(set(SCHEMAS) - set(schema["components"]["schemas"])) == []


def test_writes_say_who_may_call_them(schema):
    # "who may call it": a role, "anyone", "signed-in" or "QA" in the text of every write
    who = re.compile(r"\b(analysts?|lab managers?|QA|admins?|anyone|signed-in|your own|reviewer|who may)\b", re.IGNORECASE)
    silent = [name for name, operation in _operations(schema)
              if not name.startswith("GET") and not who.search(operation["description"])]
    assert silent == []


def test_the_replay_header_is_the_projects_own_and_documented(schema):
    # issue 13: "Idempotent-Replayed" was another service's convention
    record = schema["paths"]["/api/results/"]["post"]["responses"]["201"]
    assert set(record["headers"]) == {"Oleotrace-Replayed"}
    assert "Idempotent-Replayed" not in str(schema)


def test_options_on_a_list_that_creates_shows_the_fields_a_client_sends(schema):
    # issue 13: OPTIONS /api/products/ marked every field read-only although POST works
    from django.contrib.auth import get_user_model

    from analyses.roles import roles_ensure

    admin = get_user_model().objects.create_user("options-admin", password="x")
    admin.groups.add(roles_ensure()["admin"])
    client = APIClient()
    client.force_authenticate(admin)
    checked = set()
    for name, operation in _operations(schema):
        method, path = name.split(" ", 1)
        if method != "POST" or "{" in path or "requestBody" not in operation:
            continue
        actions = client.options(path).json().get("actions")
        if actions is None:
            continue  # a view without a form to describe (e.g. calculations): DRF lists no actions
        content = operation["requestBody"]["content"]
        body = (content.get("application/json") or content["multipart/form-data"])["schema"]
        component = schema["components"]["schemas"][body["$ref"].rsplit("/", 1)[1]]
        writable = {field for field, info in actions["POST"].items() if not info.get("read_only")}
        assert writable == set(component["properties"]), path
        checked.add(path)
    assert {"/api/products/", "/api/lots/", "/api/samples/", "/api/specifications/", "/api/stability-studies/",
            "/api/trends/baselines/", "/api/reagent-kinds/", "/api/reagent-lots/", "/api/instruments/"} <= checked
