"""Compute one determination from the command line, through the same service as the API."""
from __future__ import annotations

import json

from django.core.management.base import BaseCommand, CommandError

from analyses.errors import DomainError
from analyses.services.calculation import calculation_review_warnings, calculation_run


class Command(BaseCommand):
    help = 'Compute one determination: calc CODE name=value ... (values may carry units, e.g. sample_mass="2015 mg").'

    def add_arguments(self, parser):
        parser.add_argument("code", help="method code, e.g. sv, iv, av, pv, ffa")
        parser.add_argument("assignments", nargs="*", metavar="name=value", help="one input each")
        parser.add_argument("--json", action="store_true", help="print a JSON object with value, reported and unit")

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
            result = calculation_run(options["code"], inputs)
        except DomainError as exc:
            raise CommandError(exc.detail) from None
        warnings = calculation_review_warnings(result)
        if options["json"]:
            self.stdout.write(json.dumps({**result.as_dict(), "review_warnings": warnings}))
        else:
            self.stdout.write(f"{result.reported} {result.unit}  (unrounded {result.value!r})")
            for warning in warnings:
                self.stdout.write(f"review warning: {warning}")
