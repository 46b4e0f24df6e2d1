"""Instrument file import over REST: multipart upload, replay header, refusals by row and column."""
from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from analyses.models import Result

from tests.analyses.services.test_imports import COLUMNS, GOOD, _file

pytestmark = pytest.mark.django_db


@pytest.fixture
def mapping_id(clients):
    response = clients["manager"].post("/api/import-mappings/", {"name": "titrator 2 export", "layout": "titrator", "columns": COLUMNS}, format="json")
    assert response.status_code == 201, response.json()
    return response.json()["id"]


def _upload(client, content: bytes, name: str = "run-0412.csv", mapping: str = "titrator 2 export"):
    return client.post("/api/imports/", {"file": SimpleUploadedFile(name, content, content_type="text/csv"), "mapping": mapping}, format="multipart")


def test_an_analyst_imports_a_file_and_a_repeat_is_flagged_as_a_replay(clients, assigned_tests, mapping_id):
    first = _upload(clients["analyst"], GOOD)
    assert first.status_code == 201, first.json()
    body = first.json()
    assert body["rows"] == 4 and len(body["results"]) == 4 and body["mapping"] == "titrator 2 export"
    assert "Oleotrace-Replayed" not in first.headers
    again = _upload(clients["analyst"], GOOD, name="again.csv")
    assert again.status_code == 201 and again.headers["Oleotrace-Replayed"] == "true"
    assert again.json()["id"] == body["id"] and Result.objects.count() == 4
    listed = clients["qa"].get("/api/imports/").json()
    assert [item["id"] for item in listed["results"]] == [body["id"]]
    assert clients["qa"].get(f"/api/imports/{body['id']}/").json()["sha256"] == body["sha256"]


def test_a_bad_cell_answers_400_naming_row_and_column(clients, assigned_tests, mapping_id):
    response = _upload(clients["analyst"], _file("L-100-A,av,lots,0.05,20.0,KOH-BENCH,BAL-BENCH;BUR-BENCH"))
    assert response.status_code == 400
    assert response.json()["fields"]["file"][0].startswith("row 2, column V (mL): ")
    assert not Result.objects.exists()


def test_who_may_import_and_make_mappings(clients, assigned_tests, mapping_id):
    assert _upload(clients["qa"], GOOD).status_code == 403  # QA never enters raw data
    assert _upload(clients["anonymous"], GOOD).status_code == 401
    assert clients["analyst"].post("/api/import-mappings/", {"name": "x", "layout": "titrator", "columns": COLUMNS}, format="json").status_code == 403
    assert clients["analyst"].get(f"/api/import-mappings/{mapping_id}/").json()["columns"] == COLUMNS


def test_missing_parts_of_the_upload_are_named(clients, assigned_tests, mapping_id):
    response = clients["analyst"].post("/api/imports/", {"mapping": "titrator 2 export"}, format="multipart")
    assert response.status_code == 400 and "file" in response.json()["fields"]
    unknown = _upload(clients["analyst"], GOOD, mapping="nope")
    assert unknown.status_code == 400 and "mapping" in unknown.json()["fields"]


def test_a_mapping_is_named_by_its_name_even_when_it_looks_like_a_number(clients, assigned_tests, mapping_id):
    # schemathesis sent "0": a name that names no mapping is a 400 on mapping, never a 404
    response = _upload(clients["analyst"], GOOD, mapping=str(mapping_id))
    assert response.status_code == 400 and "mapping" in response.json()["fields"]


def test_a_file_of_40_rows_runs_the_same_number_of_queries_as_one_of_4(postgres, lab, clients, mapping_id):
    """An instrument file goes through the set-based bulk entry (issue 12): its size does not
    change the number of queries. Each sample's rows are GOOD's, on a sample of its own."""
    from django.db import connection
    from django.test.utils import CaptureQueriesContext

    def rows(label: str) -> list[str]:
        lab.assigned("analyst", label=label)
        return [line.replace("L-100-A", label) for line in GOOD.decode().splitlines()[1:]]

    small, large = _file(*rows("F-0")), _file(*[row for n in range(1, 11) for row in rows(f"F-{n}")])
    counts = []
    for number, content in enumerate((small, large)):
        with CaptureQueriesContext(connection) as captured:
            response = _upload(clients["analyst"], content, name=f"run-{number}.csv")
        assert response.status_code == 201, response.json()
        assert len(response.json()["results"]) == content.count(b"\n") - 1
        # the token's last use is written at most once a while: not part of the import
        counts.append([q["sql"][:150] for q in captured.captured_queries if "analyses_apitoken" not in q["sql"]])
    assert len(counts[1]) == len(counts[0]), "\n".join(counts[0]) + "\n----\n" + "\n".join(counts[1])
