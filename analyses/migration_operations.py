"""Operations that migrations share (kept outside ``migrations/``, whose every module Django
loads as a migration)."""
from __future__ import annotations

from django.db import migrations


class PostgreSQLOnly(migrations.RunSQL):
    """RunSQL that runs on PostgreSQL and does nothing elsewhere: triggers and functions in
    plpgsql, which SQLite has not (there the application's own checks and counts stand in)."""

    def database_forwards(self, app_label, schema_editor, from_state, to_state):
        if schema_editor.connection.vendor == "postgresql":
            super().database_forwards(app_label, schema_editor, from_state, to_state)

    def database_backwards(self, app_label, schema_editor, from_state, to_state):
        if schema_editor.connection.vendor == "postgresql":
            super().database_backwards(app_label, schema_editor, from_state, to_state)
