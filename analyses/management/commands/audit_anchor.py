"""Append the audit chain's head to the anchor file now (beat does it every AUDIT_ANCHOR_SECONDS).

Run it once after installing or upgrading, so that ``audit_verify`` has an anchor to check
against before beat writes the first one."""
from __future__ import annotations

from django.core.management.base import BaseCommand, CommandError

from analyses.services.audit_anchors import anchor_path, audit_anchor_write


class Command(BaseCommand):
    help = "Record the audit chain's head (sequence, hash, time) in the anchor file outside the database."

    def handle(self, *args, **options):
        outcome = audit_anchor_write()
        if outcome.problem:
            raise CommandError(f"no anchor written: {outcome.problem}")
        if outcome.written:
            self.stdout.write(f"anchored {outcome.sequence}:{outcome.hash} in {anchor_path()}")
        elif outcome.sequence == 0:
            self.stdout.write("the audit chain is empty: nothing to anchor yet")
        else:
            self.stdout.write(f"already anchored: {outcome.sequence}:{outcome.hash} in {anchor_path()}")
        if outcome.webhook_error:
            self.stderr.write(f"the anchor webhook failed: {outcome.webhook_error}")
