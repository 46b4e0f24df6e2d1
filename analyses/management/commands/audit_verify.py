"""Verify the audit trail's SHA-256 chain; exit non-zero naming the first broken entry.

It prints the chain's head (last sequence and hash). Record that line outside the
database (a ticket, a signed log); ``--expect-head SEQUENCE:HASH`` later checks that the
chain still holds that entry unchanged, which the database alone cannot prove if someone
with database access removed entries and rewrote the head row too."""
from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from analyses.audit import audit_chain_verify, parse_head


class Command(BaseCommand):
    help = (
        "Check every audit entry's hash and link, and the chain's head; report the first entry that was "
        "changed or removed. Prints the head (SEQUENCE:HASH) to record outside the database."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--expect-head", metavar="SEQUENCE:HASH",
            help="a head printed by an earlier run: that entry must still be in the chain, unchanged",
        )

    def handle(self, *args, **options):
        expect_head = None
        if options.get("expect_head"):
            try:
                expect_head = parse_head(options["expect_head"])
            except ValueError as exc:
                raise CommandError(f"--expect-head: {exc}") from None
        report = audit_chain_verify(expect_head)
        if not report.ok:
            where = f"entry {report.broken_sequence}" + (f" (id {report.broken_id})" if report.broken_id else "")
            raise CommandError(
                f"audit chain broken at {where}: {report.problem}; {report.checked} entries before it are intact"
            )
        self.stdout.write(f"audit chain intact: {report.checked} entries verified")
        self.stdout.write(f"head: {report.head_sequence}:{report.head_hash}")
