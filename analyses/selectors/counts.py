"""How many rows a list holds, for its page count."""
from __future__ import annotations

from django.db import connection
from django.db.models import QuerySet
from django.db.models.sql.datastructures import BaseTable

# tables whose rows PostgreSQL counts as they are written (migration 0022: triggers into
# analyses_rowcount), because COUNT(*) over them is slow: 300,000 tests took 35 ms
COUNTED_TABLES = frozenset({"analyses_test"})


def _whole_table(queryset: QuerySet) -> bool:
    """The queryset's rows are all the rows of its table: no condition, join, grouping,
    DISTINCT, slice or combination that could leave some out or repeat them."""
    query = queryset.query
    return (
        not query.where
        # a join no expression uses any more (resolving an OuterRef leaves one) is not in the SQL
        and all(isinstance(table, BaseTable) or not query.alias_refcount[alias] for alias, table in query.alias_map.items())
        and not query.distinct
        and query.group_by is None
        and not query.is_sliced
        and not query.combinator
    )


def list_count(queryset: QuerySet) -> int:
    """``queryset.count()``, exactly; for a whole counted table on PostgreSQL read from the count
    the database keeps instead of counting every row (one query either way)."""
    table = queryset.model._meta.db_table
    if connection.vendor == "postgresql" and table in COUNTED_TABLES and _whole_table(queryset):
        with connection.cursor() as cursor:
            cursor.execute("SELECT row_count FROM analyses_rowcount WHERE table_name = %s", [table])
            kept = cursor.fetchone()
        if kept is not None:
            return kept[0]
    return queryset.count()
