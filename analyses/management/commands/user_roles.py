"""Create, deactivate and reactivate users and grant or revoke their roles, with an audit entry
for each change. The admin site shows users and groups but changes neither; this is the way."""
from __future__ import annotations

import getpass
import sys

from django.core.management.base import BaseCommand, CommandError

from analyses.errors import DomainError
from analyses.roles import ROLES
from analyses.selectors.users import roles_of, user_list
from analyses.services.users import Operator, role_grant, role_revoke, user_create, user_deactivate, user_reactivate


def _os_user() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):
        return "unknown"


class Command(BaseCommand):
    help = "Manage users and their roles (lab_manager, analyst, qa_reviewer, admin); every change is audited."

    def add_arguments(self, parser):
        parser.add_argument("--by", default=None, help="who is making the change, for the audit trail (default: the OS user)")
        actions = parser.add_subparsers(dest="action", required=True)
        actions.add_parser("list", help="active users and their roles")
        create = actions.add_parser("create", help="create an active user")
        create.add_argument("username")
        create.add_argument("--role", action="append", required=True, choices=ROLES, help="repeat for several roles")
        create.add_argument("--email", default="")
        create.add_argument("--staff", action="store_true", help="may open the view-only admin site")
        create.add_argument(
            "--password-stdin", action="store_true",
            help="read the password from standard input; without it the password is asked for on a terminal, "
            "or left unusable when there is none",
        )
        for name, text in (("grant", "give a user a role"), ("revoke", "take a role from a user")):
            action = actions.add_parser(name, help=text)
            action.add_argument("username")
            action.add_argument("role", choices=ROLES)
            action.add_argument("--reason", default="")
        for name, text in (("deactivate", "stop a user logging in and revoke their API tokens"), ("reactivate", "let a user log in again")):
            action = actions.add_parser(name, help=text)
            action.add_argument("username")
            action.add_argument("--reason", required=True)

    def handle(self, *args, **options):
        operator = Operator(f"{options['by'] or _os_user()} (manage.py user_roles)"[:150])
        action = options["action"]
        try:
            if action == "list":
                for user in user_list():
                    self.stdout.write(f"{user.username:<20} {', '.join(roles_of(user)) or '(no role)'}")
                return
            username = options["username"]
            if action == "create":
                user = user_create(
                    operator, username=username, roles=options["role"], email=options["email"],
                    password=self._password(options["password_stdin"]), staff=options["staff"],
                )
                self.stdout.write(f"created {user.username} with roles {', '.join(sorted(set(options['role'])))}")
            elif action == "grant":
                role_grant(operator, username, options["role"], reason=options["reason"])
                self.stdout.write(f"{username} now holds {options['role']}")
            elif action == "revoke":
                role_revoke(operator, username, options["role"], reason=options["reason"])
                self.stdout.write(f"{username} no longer holds {options['role']}")
            elif action == "deactivate":
                user_deactivate(operator, username, reason=options["reason"])
                self.stdout.write(f"{username} deactivated; their API tokens are revoked")
            elif action == "reactivate":
                user_reactivate(operator, username, reason=options["reason"])
                self.stdout.write(f"{username} reactivated")
        except DomainError as exc:
            raise CommandError(exc.detail) from None

    def _password(self, from_stdin: bool) -> str | None:
        if from_stdin:
            password = sys.stdin.readline().rstrip("\n")
        elif sys.stdin.isatty():
            password = getpass.getpass("Password: ")
            if password != getpass.getpass("Password again: "):
                raise CommandError("the passwords differ")
        else:
            return None
        if not password:
            raise CommandError("the password is empty")
        return password
