"""The startup_benchmark command prints both figures and their ratio. No timing is asserted."""
from __future__ import annotations

import io
import re

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError


def test_prints_calc_against_django_setup_with_the_ratio():
    out = io.StringIO()
    call_command("startup_benchmark", "--runs", "1", stdout=out)
    text = out.getvalue()
    assert "run 1/1: calc" in text
    assert "median of 1 run(s)" in text
    calc = re.search(r"manage.py calc sv …\s+([\d.]+) s\s+(\d+) MiB", text)
    setup = re.search(r"django.setup\(\)\s+([\d.]+) s\s+(\d+) MiB", text)
    ratio = re.search(r"ratio calc / setup\s+([\d.]+)x\s+([\d.]+)x", text)
    assert calc and setup and ratio, text
    assert float(ratio.group(1)) == pytest.approx(float(calc.group(1)) / float(setup.group(1)), abs=0.02)
    assert int(setup.group(2)) > 10  # a Python process with Django loaded is tens of MiB, not KiB


def test_refuses_no_runs():
    with pytest.raises(CommandError, match="--runs"):
        call_command("startup_benchmark", "--runs", "0")
