"""Updating many rows of one model, each with its own values, in one statement.

Django's ``bulk_update`` writes ``SET field = CASE WHEN id = 1 THEN … WHEN id = 2 THEN … END``
for every field, and builds an expression object per row and field: for 100 tests and 8
fields it spent longer building the query than the database spent running it (issue 12).
On PostgreSQL ``rows_update`` writes ``UPDATE … FROM (VALUES (id, …), …)`` instead, with
each value prepared by its field as Django would; elsewhere (SQLite) it is ``bulk_update``.
"""
from __future__ import annotations

from collections.abc import Sequence

from django.db import connections, models, router

from analyses.models.immutable import AppendOnlyQuerySet, ImmutableRowError


def rows_update(objects: Sequence[models.Model], fields: Sequence[str]) -> None:
    """Write ``fields`` of each of ``objects`` (all of one model, all saved) to its row."""
    if not objects:
        return
    model = type(objects[0])
    if isinstance(model._default_manager.all(), AppendOnlyQuerySet):
        raise ImmutableRowError(f"{model.__name__} rows are append-only; update refused")
    if any(obj.pk is None for obj in objects):
        raise ValueError(f"every {model.__name__} must be saved before its row is updated")
    connection = connections[router.db_for_write(model)]
    if connection.vendor != "postgresql":
        model._default_manager.bulk_update(objects, fields)
        return
    meta = model._meta
    columns = [meta.pk, *(meta.get_field(name) for name in fields)]
    quote = connection.ops.quote_name
    # a cast on every value: VALUES takes each column's type from its first row, and a NULL
    # there would make the column text
    row = "(" + ", ".join(f"%s::{column.db_type(connection)}" for column in columns) + ")"
    params = [
        column.get_db_prep_save(getattr(obj, column.attname), connection)
        for obj in objects
        for column in columns
    ]
    names = [quote(column.column) for column in columns]
    sql = (
        f"UPDATE {quote(meta.db_table)} SET "
        + ", ".join(f"{name} = changed.{name}" for name in names[1:])
        + f" FROM (VALUES {', '.join([row] * len(objects))}) AS changed ({', '.join(names)})"
        + f" WHERE {quote(meta.db_table)}.{names[0]} = changed.{names[0]}"
    )
    with connection.cursor() as cursor:
        cursor.execute(sql, params)
