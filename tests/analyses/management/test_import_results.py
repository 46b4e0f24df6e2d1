"""``manage.py import_results``: progress lines, the count, a replay, and errors in one line."""
from __future__ import annotations

from io import StringIO

import pytest
from django.core.management import CommandError, call_command

from analyses.models import Result
from analyses.services.imports import import_mapping_create

from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)
from tests.analyses.services.test_imports import COLUMNS, GOOD, _file

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def mapping(users):
    return import_mapping_create(users["manager"], name="titrator 2 export", layout="titrator", columns=COLUMNS)


def test_the_command_imports_and_a_second_run_replays(users, assigned_tests, tmp_path):
    path = tmp_path / "run-0412.csv"
    path.write_bytes(GOOD)
    out = StringIO()
    call_command("import_results", str(path), "--mapping", "titrator 2 export", "--user", "analyst", stdout=out)
    assert "read 4 rows" in out.getvalue() and "4 results from 4 rows" in out.getvalue()
    again = StringIO()
    call_command("import_results", str(path), "--mapping", "titrator 2 export", "--user", "analyst", stdout=again)
    assert "was imported before" in again.getvalue() and Result.objects.count() == 4


def test_errors_are_one_line_naming_row_and_column(users, assigned_tests, tmp_path):
    path = tmp_path / "bad.csv"
    path.write_bytes(_file("L-100-A,av,1.30,0.05,-1,KOH-BENCH,BAL-BENCH;BUR-BENCH"))
    with pytest.raises(CommandError, match=r"^row 2, column Mass \(g\): "):
        call_command("import_results", str(path), "--mapping", "titrator 2 export", "--user", "analyst", stdout=StringIO())
    with pytest.raises(CommandError, match="no such file"):
        call_command("import_results", str(tmp_path / "none.csv"), "--mapping", "x", "--user", "analyst")
