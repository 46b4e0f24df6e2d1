"""list_benchmark prints a table of every main list, leaves nothing behind, and each list
runs as many SQL queries per page for 60 samples as for 20. No timing is asserted."""
from __future__ import annotations

import io
import re

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError

from analyses.benchmarks.list_timing import LISTINGS
from analyses.models import AuditChainHead, AuditEntry, Lot, Result, Sample, Test

pytestmark = pytest.mark.django_db

ROW = re.compile(
    r"^\| (?P<name>[^|]+?) \| (?P<rows>\d+) \| (?P<total>[\d,]+) \| (?P<p50>[\d.]+) \| (?P<p95>[\d.]+) \| "
    r"(?P<max>[\d.]+) \| (?P<sql>[\d.]+) \| (?P<cpu>[\d.]+) \| (?P<queries>\d+)(?P<other> \([^)]*\))? \|$",
    re.MULTILINE,
)


def _run(*args: str) -> tuple[str, dict[str, dict[str, str]]]:
    out = io.StringIO()
    call_command("list_benchmark", *args, stdout=out)
    text = out.getvalue()
    return text, {match["name"]: match.groupdict() for match in ROW.finditer(text)}


def _rows_everywhere() -> dict[str, int]:
    head = AuditChainHead.objects.filter(id=1).values_list("last_sequence", flat=True).first()
    counts = {model.__name__: model.objects.count() for model in (Lot, Sample, Test, Result, AuditEntry)}
    return {**counts, "head": head or 0}


def test_prints_every_list_with_its_figures_and_leaves_nothing_behind():
    before = _rows_everywhere()
    text, rows = _run("--samples", "50", "--repeat", "2")
    assert list(rows) == [listing.name for listing in LISTINGS], text
    for name, row in rows.items():
        assert int(row["rows"]) >= 1, name  # every list has something to show, even at 50 samples
        assert float(row["p50"]) <= float(row["p95"]) <= float(row["max"]), name
        assert int(row["queries"]) >= 2, name  # at least the token and the page
    assert rows["samples"]["total"] == "50"
    assert rows["tests"]["total"] == "150"  # three tests per sample
    assert "seeding: 50 / 50 samples" in text
    assert "rolled back" in text
    assert "target p95 < 50 ms" in text
    assert _rows_everywhere() == before


def test_query_counts_per_page_do_not_grow_with_the_samples(postgres):
    """20 samples against 60 (half of them in testing, so the queues grow too): more rows on
    each page, the same number of SQL queries."""
    _, few = _run("--samples", "20", "--repeat", "2", "--open-share", "0.5")
    _, many = _run("--samples", "60", "--repeat", "2", "--open-share", "0.5")
    assert set(few) == set(many) == {listing.name for listing in LISTINGS}
    for name in few:
        assert many[name]["queries"] == few[name]["queries"], (name, few[name], many[name])
        assert not many[name]["other"], (name, many[name])  # the same count on every request
    grown = [name for name in few if int(many[name]["rows"]) > int(few[name]["rows"])]
    # the per-object lists (one test's results, one sample's or lot's trail) do not grow with N
    assert set(grown) >= {
        "samples", "samples in testing", "tests", "tests assigned to an analyst", "work queue (av)", "my queue",
        "review queue",
    }, (few, many)


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (("--samples", "0"), "--samples"),
        (("--repeat", "0"), "--repeat"),
        (("--page-size", "201"), "--page-size"),
        (("--open-share", "1.5"), "--open-share"),
    ],
)
def test_refuses_bad_arguments(args, message):
    with pytest.raises(CommandError, match=message):
        call_command("list_benchmark", *args)


def test_refuses_a_production_installation_without_force(settings):
    settings.PRODUCTION = True
    before = _rows_everywhere()
    with pytest.raises(CommandError, match="production.*--force"):
        call_command("list_benchmark", "--samples", "10", "--repeat", "1")
    assert _rows_everywhere() == before


def test_runs_on_a_production_installation_with_force(settings):
    settings.PRODUCTION = True
    settings.ALLOWED_HOSTS = ["lab.example.com"]
    settings.SECURE_SSL_REDIRECT = True
    _, rows = _run("--samples", "10", "--repeat", "1", "--force")
    assert rows["samples"]["total"] == "10"


def test_explain_prints_the_plan_of_every_list(postgres):
    text, rows = _run("--samples", "10", "--repeat", "1", "--explain")
    for listing in LISTINGS:
        assert f"== plans of {listing.name} ==" in text
    assert text.count("Execution Time") >= 3 * len(LISTINGS)  # token, count and page of each list at least
    assert len(rows) == len(LISTINGS)


def test_the_listed_tables_are_checked_for_dead_rows(monkeypatch):
    from analyses.management.commands import list_benchmark

    asked = []
    monkeypatch.setattr(list_benchmark, "dead_rows_warning", lambda tables: asked.append(tables) or "warning: dead rows (invented)")
    text, _ = _run("--samples", "5", "--repeat", "1")
    assert asked == [list_benchmark.LISTED_TABLES]
    assert "warning: dead rows (invented)" in text
