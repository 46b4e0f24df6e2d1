"""Compute one determination from the command line, through the same service as the API."""
from __future__ import annotations

import json

from django.core.management.base import BaseCommand, CommandError

from analyses.checks import PLUGINS_TAG
from analyses.errors import DomainError
from analyses.services.calculation import calculation_run


class Command(BaseCommand):
    help = 'Compute one determination: calc CODE name=value ... (values may carry units, e.g. sample_mass="2015 mg").'
    # Only the check that concerns a calculation: rejected plugins (analyses.W001). The others load
    # the whole API (URLconf, DRF) only to look at it; `manage.py check` runs them all.
    requires_system_checks = [PLUGINS_TAG]

    def add_arguments(self, parser):
        parser.add_argument("code", help="method code, e.g. sv, iv, av, pv, ffa")
        parser.add_argument("assignments", nargs="*", metavar="name=value", help="one input each")
        parser.add_argument("--json", action="store_true", help="print a JSON object with value, reported and unit")
        parser.add_argument("--minimum", help="lower limit to judge the result against, as written (e.g. 187)")
        parser.add_argument("--maximum", help="upper limit to judge the result against, as written (e.g. 0.6)")
        parser.add_argument("--oil-type", help="judge against the method's Codex default limits for this oil type")
        parser.add_argument("--comparison", help="ASTM E29 comparison: absolute (default) or rounding")

    def handle(self, *args, **options):
        inputs: dict[str, str] = {}
        for assignment in options["assignments"]:
            name, sep, value = assignment.partition("=")
            if not sep or not name.strip():
                raise CommandError(f"{assignment}: expected name=value")
            if name.strip() in inputs:
                raise CommandError(f"{name.strip()}: given twice")
            inputs[name.strip()] = value.strip()
        try:
            calculation = calculation_run(
                options["code"],
                inputs,
                minimum=options["minimum"],
                maximum=options["maximum"],
                oil_type=options["oil_type"],
                comparison=options["comparison"],
            )
        except DomainError as exc:
            raise CommandError(exc.detail) from None
        if options["json"]:
            self.stdout.write(json.dumps(calculation.as_dict()))
            return
        result = calculation.result
        self.stdout.write(f"{result.reported} {result.unit}  (unrounded {result.judged})")
        if calculation.limits is not None:
            limits = calculation.limits
            bounds = " to ".join(filter(None, [limits.minimum and f"min {limits.minimum}", limits.maximum and f"max {limits.maximum}"]))
            self.stdout.write(f"verdict: {calculation.verdict}  ({bounds}, ASTM E29 {limits.comparison})")
        for warning in calculation.review_warnings:
            self.stdout.write(f"review warning: {warning}")
