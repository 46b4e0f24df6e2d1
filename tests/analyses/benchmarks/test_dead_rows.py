"""The warning both benchmarks give when earlier rolled-back runs left the tables full of dead rows."""
from __future__ import annotations

import pytest

from analyses.benchmarks import dead_rows
from analyses.benchmarks.dead_rows import dead_rows_note, dead_rows_warning

pytestmark = pytest.mark.django_db


def test_dead_rows_from_earlier_runs_are_warned_of():
    assert dead_rows_note(900_000, 300_000) is not None and "VACUUM ANALYZE" in dead_rows_note(900_000, 300_000)
    assert dead_rows_note(5_000, 0) is None  # a few, as any working database has
    assert dead_rows_note(200_000, 300_000) is None


def test_the_warning_reads_postgresqls_row_statistics_of_the_tables_named(postgres, monkeypatch):
    seen = []
    monkeypatch.setattr(dead_rows, "dead_rows_note", lambda dead, live: seen.append((dead, live)) or None)
    assert dead_rows_warning(["analyses_auditentry", "analyses_result"]) is None
    [(dead, live)] = seen  # the tables' dead and live rows, as the statistics count them
    assert isinstance(dead, int) and isinstance(live, int) and dead >= 0 and live >= 0
    assert dead_rows_warning(["no_such_table"]) is None and seen[-1] == (0, 0)


def test_elsewhere_there_is_nothing_to_read(monkeypatch):
    from types import SimpleNamespace

    monkeypatch.setattr(dead_rows, "connection", SimpleNamespace(vendor="sqlite"))  # no statistics to ask
    assert dead_rows_warning(["analyses_result"]) is None
