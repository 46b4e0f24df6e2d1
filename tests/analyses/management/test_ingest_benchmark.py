"""``manage.py ingest_benchmark`` at a tiny size: it runs every path, prints the table, and
keeps nothing (its transaction is rolled back). Timings are not checked."""
from __future__ import annotations

from io import StringIO

import pytest
from django.core.management import call_command

from analyses.models import AuditEntry, Product, Result, Test

pytestmark = pytest.mark.django_db


def test_the_benchmark_prints_its_table_and_keeps_nothing():
    kept = (Result.objects.count(), Test.objects.count(), AuditEntry.objects.count(), Product.objects.count())
    out, err = StringIO(), StringIO()
    call_command("ingest_benchmark", "--results", "6", "--batch", "4", "--rounds", "2", stdout=out, stderr=err)
    text = out.getvalue()
    assert "| Path" in text
    for column in ("Results/s", "x raw insert", "SQL queries per request"):
        assert column in text
    for path in ("raw Result.objects.bulk_create", "POST /api/results/bulk/, batches of 4", "single POST /api/results/",
                 "POST /api/imports/, one CSV file"):
        assert any(line.startswith(f"| {path}") for line in text.splitlines()), text
    assert "queries per batch constant: yes" in text
    assert "2 round(s): median (range)" in text
    for number in (1, 2):  # progress lines, every path in every round on fresh tests
        assert f"round {number}/2: bulk API: 6/6 results" in err.getvalue()
        assert f"round {number}/2: file import: 6/6 results from one CSV" in err.getvalue()  # the instrument file's path (issue 11)
        assert f"round {number}/2: single posts: 6/6 results" in err.getvalue()
    assert (Result.objects.count(), Test.objects.count(), AuditEntry.objects.count(), Product.objects.count()) == kept


def test_the_tables_it_writes_are_checked_for_dead_rows_first(monkeypatch):
    from analyses.management.commands import ingest_benchmark

    asked = []
    monkeypatch.setattr(ingest_benchmark, "dead_rows_warning", lambda tables: asked.append(tables) or "warning: dead rows (invented)")
    out = StringIO()
    call_command("ingest_benchmark", "--results", "2", "--batch", "2", "--rounds", "1", stdout=out, stderr=StringIO())
    assert out.getvalue().startswith("warning: dead rows (invented)")
    [tables] = asked
    assert {"analyses_auditentry", "analyses_result", "analyses_resultuncertainty"} <= set(tables)
