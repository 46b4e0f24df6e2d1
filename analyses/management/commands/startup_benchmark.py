"""Start-up cost of a management command against the floor, ``django.setup()``.

Runs, in fresh interpreters and alternating so both see the same load on the machine,
the whole of ``manage.py calc`` (one saponification value) and a bare ``django.setup()``
with the project's settings, and prints the median wall time and peak memory (max RSS,
from ``wait4``) of each and their ratio. Nothing here is a timed test; it prints figures.
"""
from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

from django.core.management.base import BaseCommand, CommandError

ROOT = Path(__file__).resolve().parents[3]
CALC = ["manage.py", "calc", "sv", "sample_mass=2015 mg", "sample_volume=11.5", "blank_volume=25",
        "titrant_concentration=0.5"]
SETUP = ["-c", "import django; django.setup()"]


def measure(args: list[str]) -> tuple[float, float]:
    """Wall seconds and peak resident memory (MiB) of one run of ``python args``."""
    env = {**os.environ, "DJANGO_SETTINGS_MODULE": "labcore.settings"}
    started = time.perf_counter()
    process = subprocess.Popen([sys.executable, *args], cwd=ROOT, env=env,
                               stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(process.pid, 0)
    wall = time.perf_counter() - started
    process.returncode = os.waitstatus_to_exitcode(status)
    error = process.stderr.read().decode(errors="replace") if process.stderr else ""
    if process.stderr:
        process.stderr.close()
    if process.returncode != 0:
        raise CommandError(f"{' '.join(args)} failed ({process.returncode}): {error.strip()[-500:]}")
    return wall, usage.ru_maxrss / 1024  # Linux reports ru_maxrss in KiB


class Command(BaseCommand):
    help = "Median wall time and peak memory of `manage.py calc` against `django.setup()`, and their ratio."
    requires_system_checks: list[str] = []

    def add_arguments(self, parser):
        parser.add_argument("--runs", type=int, default=5, help="runs of each (default 5); the median is shown")

    def handle(self, *args, runs: int, **options):
        if runs < 1:
            raise CommandError("--runs must be at least 1")
        calc: list[tuple[float, float]] = []
        setup: list[tuple[float, float]] = []
        for number in range(1, runs + 1):
            calc.append(measure(CALC))
            setup.append(measure(SETUP))
            self.stdout.write(f"run {number}/{runs}: calc {calc[-1][0]:.2f} s, django.setup() {setup[-1][0]:.2f} s")
        calc_wall, calc_mem = (statistics.median(x) for x in zip(*calc))
        setup_wall, setup_mem = (statistics.median(x) for x in zip(*setup))
        rows = [
            ("manage.py calc sv …", f"{calc_wall:.2f} s", f"{calc_mem:.0f} MiB"),
            ("django.setup()", f"{setup_wall:.2f} s", f"{setup_mem:.0f} MiB"),
            ("ratio calc / setup", f"{calc_wall / setup_wall:.2f}x", f"{calc_mem / setup_mem:.2f}x"),
        ]
        self.stdout.write(f"\nmedian of {runs} run(s), each in a fresh interpreter, alternating")
        self.stdout.write(f"{'':22}{'wall':>10}{'peak memory':>14}")
        for name, wall, memory in rows:
            self.stdout.write(f"{name:22}{wall:>10}{memory:>14}")
