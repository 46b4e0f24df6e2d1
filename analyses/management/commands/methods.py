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


def _bounds(spec: dict) -> str:
    """The hard bounds (refused beyond) and the plausible range (warned outside) of a quantity."""
    low, high = spec["minimum"], spec["maximum"]
    if low is not None and high is not None:
        hard = f"{low:g} to {high:g}"
    elif high is not None:
        hard = f"up to {high:g}"
    elif low is not None:
        hard = f"{'from' if spec['minimum_inclusive'] else 'above'} {low:g}"
    else:
        hard = "any"
    words = f"allowed {hard} {spec['unit']}"
    p_low, p_high = spec.get("plausible_minimum"), spec.get("plausible_maximum")
    if p_low is not None or p_high is not None:
        plausible = (
            f"{p_low:g} to {p_high:g}" if p_low is not None and p_high is not None
            else f"up to {p_high:g}" if p_high is not None else f"from {p_low:g}"
        )
        words += f"; plausible {plausible} {spec['unit']} ({spec['plausible_source']})"
    return words


class Command(BaseCommand):
    help = (
        "List the registered method plugins with code, title, unit, standards and inputs (each quantity "
        "with the bounds beyond which it is refused and the plausible range outside which it is flagged)."
    )
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
                    self.stdout.write(f"        {_bounds(spec)}")
                else:
                    self.stdout.write(f"      {spec['name']} (one of {', '.join(spec['choices'])}): {spec['help']}")
            for scope in method["scope"]:
                self.stdout.write(f"      scope: {_range(scope)} {method['result_unit']}, {scope['source']}")
        for rejected in get_registry().rejected:
            self.stderr.write(f"left out: {rejected.entry_point}: {rejected.reason}")
