"""Migration 0011: FFA lines written before it get the basis their unit already names."""
from __future__ import annotations

import datetime as dt

import pytest
from django.db import connection
from django.db.migrations.executor import MigrationExecutor

BEFORE = [("analyses", "0007_admin_without_qa_decisions")]
AFTER = [("analyses", "0011_scope_basis_review_warnings")]


def migrate(targets):
    executor = MigrationExecutor(connection)
    executor.loader.build_graph()
    executor.migrate(targets)
    return executor.loader.project_state(targets).apps


@pytest.mark.django_db(transaction=True)
def test_existing_ffa_lines_take_the_basis_of_their_unit():
    try:
        old = migrate(BEFORE)
        user = old.get_model("auth", "User").objects.create(username="migrator")
        product = old.get_model("analyses", "Product").objects.create(
            code="EVOO", name="Olive oil", oil_type="olive_extra_virgin", created_by=user, created_at=dt.datetime(2024, 1, 1, tzinfo=dt.timezone.utc)
        )
        specification = old.get_model("analyses", "Specification").objects.create(
            product=product, version=1, effective_from=dt.date(2024, 1, 1), created_by=user,
            created_at=dt.datetime(2024, 1, 1, tzinfo=dt.timezone.utc),
        )
        line_model = old.get_model("analyses", "SpecificationLine")
        ffa = line_model.objects.create(specification=specification, method_code="ffa", unit="% as oleic", maximum="0.8")
        pv = line_model.objects.create(specification=specification, method_code="pv", unit="meq O2/kg", maximum="20")

        new = migrate(AFTER)
        lines = new.get_model("analyses", "SpecificationLine").objects
        assert lines.get(pk=ffa.pk).basis == "oleic"
        assert lines.get(pk=pv.pk).basis == ""
    finally:
        executor = MigrationExecutor(connection)
        executor.loader.build_graph()
        executor.migrate(executor.loader.graph.leaf_nodes())
