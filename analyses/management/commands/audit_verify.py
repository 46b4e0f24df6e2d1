"""Verify the audit trail's SHA-256 chain; exit non-zero naming the first broken entry.

The chain is checked against every anchor in the anchor file (the heads that beat recorded
outside the database, ``AUDIT_ANCHOR_DIR``), so entries removed from the end, or a rewrite
that recomputed every later hash, are found without any argument. It prints the head;
``--expect-head SEQUENCE:HASH`` also checks against a head recorded by hand."""
from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from analyses.audit import parse_head
from analyses.services.audit_anchors import audit_chain_verify_anchored


class Command(BaseCommand):
    help = (
        "Check every audit entry's hash and link, the chain's head, and the anchors recorded outside the database; "
        "report the first entry that was changed or removed. Prints the head (SEQUENCE:HASH)."
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
        result = audit_chain_verify_anchored(expect_head)
        report = result.chain
        if not report.ok:
            where = f"entry {report.broken_sequence}" + (f" (id {report.broken_id})" if report.broken_id else "")
            checked = (
                f"the {report.checked} entries in the database link up among themselves"
                if report.against_record else f"{report.checked} entries before it are intact"
            )
            raise CommandError(f"audit chain broken at {where}: {report.problem}; {checked}")
        if result.anchor_problem:
            raise CommandError(
                f"audit chain not proven: {result.anchor_problem}; the {report.checked} entries link up, "
                "but without an anchor a truncated or rewritten chain cannot be told from an intact one"
            )
        self.stdout.write(f"audit chain intact: {report.checked} entries verified")
        self.stdout.write(f"head: {report.head_sequence}:{report.head_hash}")
        if result.latest is not None:
            latest = result.latest
            self.stdout.write(
                f"anchored: entry {latest.sequence} at {latest.at.isoformat()} ({result.path}); "
                f"{report.head_sequence - latest.sequence} entries after it not yet anchored"
            )
        else:
            self.stdout.write(f"anchored: nothing yet ({result.path}); the chain is empty")
