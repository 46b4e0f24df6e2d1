"""Verify the audit trail's SHA-256 chain; exit non-zero naming the first broken entry."""
from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from analyses.audit import audit_chain_verify


class Command(BaseCommand):
    help = "Check every audit entry's hash and link; report the first entry that was changed or removed."

    def handle(self, *args, **options):
        report = audit_chain_verify()
        if not report.ok:
            raise CommandError(
                f"audit chain broken at entry {report.broken_sequence} (id {report.broken_id}): {report.problem}; "
                f"{report.checked} entries before it are intact"
            )
        self.stdout.write(f"audit chain intact: {report.checked} entries verified")
