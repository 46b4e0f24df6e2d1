"""The users list over REST, for lab managers choosing an assignee."""
from __future__ import annotations

import pytest

from tests.factories import UserFactory

pytestmark = pytest.mark.django_db


def test_a_manager_finds_the_analysts_to_assign_tests_to(lab, users, clients):
    UserFactory(username="zoe", first_name="Zoë", last_name="Invented", roles=["analyst", "qa_reviewer"])
    UserFactory(username="gone", roles=["analyst"], is_active=False)  # left the lab: not listed
    response = clients["manager"].get("/api/users/", {"role": "analyst"})
    assert response.status_code == 200, response.content
    rows = response.json()["results"]
    assert [(row["username"], row["roles"]) for row in rows] == [
        ("analyst", ["analyst"]), ("analyst2", ["analyst"]), ("zoe", ["analyst", "qa_reviewer"]),
    ]
    assert rows[0]["id"] == users["analyst"].pk and rows[2]["name"] == "Zoë Invented"
    # the id is what assignment takes
    tests = list(lab.received().tests.values_list("pk", flat=True))
    assigned = clients["manager"].post("/api/tests/assign/", {"tests": tests, "assignee": rows[0]["id"]}, format="json")
    assert assigned.status_code == 200
    everyone = clients["admin"].get("/api/users/").json()["results"]
    assert {row["username"] for row in everyone} == {"manager", "analyst", "analyst2", "qa", "admin", "nobody", "zoe"}


def test_superusers_count_as_admins(clients):
    UserFactory(username="root", is_superuser=True)
    admins = clients["manager"].get("/api/users/", {"role": "admin"}).json()["results"]
    assert [(row["username"], row["roles"]) for row in admins] == [("admin", ["admin"]), ("root", ["admin"])]


def test_an_unknown_role_is_a_400(clients):
    response = clients["manager"].get("/api/users/", {"role": "chemist"})
    assert response.status_code == 400
    assert "role" in response.json()["fields"]
