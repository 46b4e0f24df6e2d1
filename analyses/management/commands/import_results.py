"""Import results from an instrument export file, as ``POST /api/imports/`` does."""
from __future__ import annotations

from pathlib import Path

from django.contrib.auth import get_user_model
from django.core.management.base import BaseCommand, CommandError

from analyses.errors import DomainError


class Command(BaseCommand):
    help = (
        "Import results from a CSV or XLSX export through a named import mapping, all or nothing. "
        "The same file imported again is a replay: nothing is entered twice."
    )

    def add_arguments(self, parser):
        parser.add_argument("file", help="the export: .csv (UTF-8) or .xlsx")
        parser.add_argument("--mapping", required=True, help="the import mapping's name")
        parser.add_argument("--user", required=True, help="the analyst entering the results (user name); the tests must be theirs")

    def handle(self, *args, **options):
        from analyses.services.imports import results_import

        path = Path(options["file"])
        if not path.is_file():
            raise CommandError(f"{path}: no such file")
        user = get_user_model().objects.filter(username=options["user"], is_active=True).first()
        if user is None:
            raise CommandError(f"--user: no active user named {options['user']!r}")
        try:
            outcome = results_import(
                user, content=path.read_bytes(), file_name=path.name, mapping=options["mapping"],
                progress=lambda line: self.stdout.write(line),
            )
        except DomainError as exc:
            raise CommandError(exc.detail) from None
        done = outcome.result_import
        if outcome.replayed:
            self.stdout.write(f"{path.name} was imported before (import {done.pk}, {done.imported_at:%Y-%m-%d %H:%M} UTC): "
                              f"nothing new entered; its {len(done.result_ids)} results stand")
        else:
            self.stdout.write(self.style.SUCCESS(f"import {done.pk}: {len(done.result_ids)} results from {done.rows} rows"))
