"""Django's PostgreSQL compilers, with bulk inserts as VALUES lists (see the package docstring)."""
from django.db.backends.postgresql.compiler import (  # noqa: F401 (re-exported for the backend)
    SQLAggregateCompiler,
    SQLCompiler,
    SQLDeleteCompiler,
    SQLUpdateCompiler,
)
from django.db.models.sql import compiler


class SQLInsertCompiler(compiler.SQLInsertCompiler):
    """Django's generic insert (one VALUES row per object), without the UNNEST arrays."""
