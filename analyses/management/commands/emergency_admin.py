"""Create (or end) an emergency superuser on purpose; the audit trail records both, and
every sign-in of the account."""
from __future__ import annotations

import getpass

from django.core.management.base import BaseCommand, CommandError

from analyses.errors import DomainError
from analyses.services.emergency import emergency_admin_create, emergency_admin_end


def _os_user() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):  # no login name in a bare container
        return "unknown"


class Command(BaseCommand):
    help = (
        "Create an emergency superuser (opens /admin/, holds the admin's permissions, never the QA decisions) "
        "and print its one-time password; --end disables it. Creation, sign-ins and the end are audited."
    )

    def add_arguments(self, parser):
        parser.add_argument("username")
        parser.add_argument("--reason", required=True, help="why the account is needed (or why it ends)")
        parser.add_argument("--email", default="")
        parser.add_argument("--requested-by", default=None, help="who asked for it (default: the operating-system user)")
        parser.add_argument("--end", action="store_true", help="end the emergency: the account can no longer sign in")

    def handle(self, *args, **options):
        requested_by = options["requested_by"] or _os_user()
        try:
            if options["end"]:
                user = emergency_admin_end(username=options["username"], reason=options["reason"], requested_by=requested_by)
                self.stdout.write(f"emergency account {user.username} ended: it can no longer sign in (recorded in the audit trail)")
                return
            account = emergency_admin_create(
                username=options["username"], reason=options["reason"], requested_by=requested_by, email=options["email"],
            )
        except DomainError as exc:
            raise CommandError(exc.detail) from None
        self.stdout.write(f"emergency superuser {account.user.username} created (recorded in the audit trail)")
        self.stdout.write(f"password (shown once, store it safely): {account.password}")
        self.stdout.write(
            "Every sign-in of this account is audited. End it when the emergency is over: "
            f"python manage.py emergency_admin {account.user.username} --end --reason '...'"
        )
