"""Load the invented demo refinery and print how to log in as each role (demo only)."""
from __future__ import annotations

from django.core.management.base import BaseCommand

from analyses.services.audit_anchors import audit_anchor_write
from analyses.services.demo import DEMO_FILE, demo_load


class Command(BaseCommand):
    help = "Load the INVENTED demo refinery (Marrowvale Oils Ltd) through the services; safe to run again."

    def add_arguments(self, parser):
        parser.add_argument("--file", default=str(DEMO_FILE), help="demo data file (default: fixtures/demo_refinery.json)")

    def handle(self, *args, **options):
        self.stdout.write(f"Loading INVENTED DEMO DATA from {options['file']} ...")
        summary = demo_load(path=options["file"], log=self.stdout.write)
        # so that audit_verify has an anchor to check against before beat writes the next one
        anchor = audit_anchor_write()
        if anchor.problem:
            self.stderr.write(f"audit anchor not written: {anchor.problem}")
        created = ", ".join(f"{count} {name}" for name, count in summary.created.items())
        self.stdout.write(f"Done: created {created} (existing ones were skipped).")
        self.stdout.write("")
        self.stdout.write(f"Demo logins for {summary.company}. DEMO ONLY: shared password {summary.password!r}")
        self.stdout.write(f"  {'role':<12} {'username':<10} API token")
        for login in summary.logins:
            self.stdout.write(f"  {login.role:<12} {login.username:<10} {login.token}")
        self.stdout.write("Use a token as:  curl -H 'Authorization: Token <token>' http://127.0.0.1:8000/api/")
        self.stdout.write("or log in with username and password; the admin user also opens /admin/ (view only).")
