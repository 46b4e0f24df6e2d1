"""List the registered method plugins."""
from __future__ import annotations

import json

from django.core.management.base import BaseCommand

from analyses.checks import PLUGINS_TAG
from analyses.selectors.methods import method_list
from plugins.registry import get_registry


def _range(scope: dict) -> str:
    low = "" if scope["minimum"] is None else f"{scope['minimum']:g}"
    high = "" if scope["maximum"] is None else f"{scope['maximum']:g}"
    if not high:
        return f"from {low}"
    upper = high if scope["maximum_inclusive"] else f"below {high}"
    if low:
        return f"{low} to {upper}"
    return upper if not scope["maximum_inclusive"] else f"up to {high}"


class Command(BaseCommand):
    help = "List the registered method plugins with code, title, unit, standards and inputs."
    # Only the check that concerns the methods: rejected plugins (analyses.W001). The others load
    # the whole API (URLconf, DRF) only to look at it; `manage.py check` runs them all.
    requires_system_checks = [PLUGINS_TAG]

    def add_arguments(self, parser):
        parser.add_argument("--json", action="store_true", help="print a JSON list of objects, each with a 'code' key")

    def handle(self, *args, **options):
        methods = method_list()
        if options["json"]:
            self.stdout.write(json.dumps(methods, indent=2))
            return
        for method in methods:
            self.stdout.write(f"{method['code']:<5} {method['title']}  [{method['result_unit']}]")
            self.stdout.write(f"      standards: {'; '.join(method['standards'])}")
            for spec in method["inputs"]:
                if spec["kind"] == "quantity":
                    optional = "" if spec["required"] else ", optional"
                    self.stdout.write(f"      {spec['name']} ({spec['unit']}{optional}): {spec['help']}")
                else:
                    self.stdout.write(f"      {spec['name']} (one of {', '.join(spec['choices'])}): {spec['help']}")
            for scope in method["scope"]:
                self.stdout.write(f"      scope: {_range(scope)} {method['result_unit']}, {scope['source']}")
        for rejected in get_registry().rejected:
            self.stderr.write(f"left out: {rejected.entry_point}: {rejected.reason}")
