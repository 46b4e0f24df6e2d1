"""The calc command: one determination from the command line, bad input named, no traceback."""
import json
import subprocess
import sys
from pathlib import Path

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError

ROOT = Path(__file__).resolve().parents[3]


def run_manage(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "manage.py", *args], cwd=ROOT, capture_output=True, text=True, timeout=120
    )


def test_calc_json_gives_value_reported_and_unit(capsys):
    # AOCS Cd 3-25: SV = (B - S) * c * 56.1 / m = 13.5 * 0.5 * 56.1 / 2.015
    call_command("calc", "sv", "sample_mass=2015 mg", "sample_volume=11.5", "blank_volume=25", "titrant_concentration=0.5", "--json")
    out = json.loads(capsys.readouterr().out)
    assert out["value"] == pytest.approx(13.5 * 0.5 * 56.1 / 2.015, rel=1e-12)
    assert out["reported"] == "187.9"
    assert out["unit"] == "mg KOH/g"


def test_calc_plain_output_shows_reported_value_and_unit(capsys):
    # AOCS Cd 8b-90: PV = (S - B) * c * 1000 / m = 5.0 * 0.01 * 1000 / 5.0 = 10.0
    call_command("calc", "pv", "sample_mass=5", "sample_volume=5", "blank_volume=0", "titrant_concentration=0.01")
    assert capsys.readouterr().out.strip().startswith("10.0 meq O2/kg")


@pytest.mark.parametrize(
    "args, field",
    [
        (["sv", "sample_mass=2 mL", "sample_volume=11.5", "blank_volume=25", "titrant_concentration=0.5"], "sample_mass"),
        (["sv", "sample_mass=0", "sample_volume=11.5", "blank_volume=25", "titrant_concentration=0.5"], "sample_mass"),
        (["iv", "sample_mass=0.2", "sample_volume=50", "blank_volume=45", "titrant_concentration=0.1"], "sample_volume"),
        (["av", "sample_mass=10", "sample_volume=-1", "titrant_concentration=0.1"], "sample_volume"),
        (["av", "sample_mass=10", "sample_volume=1", "titrant_concentration=0"], "titrant_concentration"),
        (["ffa", "sample_mass=10", "sample_volume=1", "titrant_concentration=0.1", "fatty_acid_basis=stearic"], "fatty_acid_basis"),
    ],
)
def test_calc_bad_input_names_the_field(args, field):
    with pytest.raises(CommandError) as caught:
        call_command("calc", *args)
    assert str(caught.value).startswith(f"{field}:")


def test_calc_process_exits_non_zero_with_one_line_and_no_traceback():
    done = run_manage("calc", "sv", "sample_mass=2 mL", "sample_volume=11.5", "blank_volume=25", "titrant_concentration=0.5")
    assert done.returncode != 0
    lines = [line for line in done.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, done.stderr
    assert "sample_mass" in lines[0]
    assert "Traceback" not in done.stderr


def test_calc_unknown_method_exits_non_zero():
    done = run_manage("calc", "xyz", "sample_mass=1")
    assert done.returncode != 0
    assert "unknown method 'xyz'" in done.stderr
    assert "Traceback" not in done.stderr


def test_calc_rejects_an_argument_without_equals_sign():
    with pytest.raises(CommandError, match="expected name=value"):
        call_command("calc", "sv", "sample_mass")


def test_calc_refuses_an_input_given_twice():
    with pytest.raises(CommandError, match="sample_mass: given twice"):
        call_command("calc", "pv", "sample_mass=5", "sample_mass=6", "sample_volume=1", "titrant_concentration=0.01")


# The audit's five exact-at-limit reproducers (issue 7). Limits: Codex CXS 210 maize SV min 187 and palm
# IV min 50.0 (found); CXS 210 appendix AV max 0.6 and PV max 10 for refined oils (found); FFA max 0.3
# is our own test limit. Each result is the limit exactly on paper.
EXACT_AT_LIMIT = [
    (["sv", "sample_mass=1.965", "sample_volume=11.90", "blank_volume=25.00", "titrant_concentration=0.5", "--oil-type", "maize"], "187.0"),
    (["av", "sample_mass=9.35", "sample_volume=1.00", "titrant_concentration=0.1", "--oil-type", "refined"], "0.60"),
    (["iv", "sample_mass=0.2538", "sample_volume=40.0", "blank_volume=50.0", "titrant_concentration=0.1", "--oil-type", "palm"], "50.0"),
    (["pv", "sample_mass=4.97", "sample_volume=4.97", "blank_volume=0", "titrant_concentration=0.01", "--oil-type", "refined"], "10.0"),
    (["ffa", "sample_mass=9.4", "sample_volume=1.00", "titrant_concentration=0.1", "--maximum", "0.3"], "0.30"),
]


@pytest.mark.parametrize(("args", "reported"), EXACT_AT_LIMIT)
@pytest.mark.parametrize("comparison", ["absolute", "rounding"])
def test_calc_passes_every_exact_at_limit_case(capsys, args, reported, comparison):
    call_command("calc", *args, "--comparison", comparison, "--json")
    out = json.loads(capsys.readouterr().out)
    assert out["reported"] == reported
    assert out["verdict"] == "pass"
    assert out["limits"]["comparison"] == comparison


def test_calc_plain_output_names_the_verdict_and_the_limit():
    # as a user runs it: the audit's SV case against the Codex maize minimum
    done = run_manage("calc", *EXACT_AT_LIMIT[0][0])
    assert done.returncode == 0, done.stderr
    assert "187.0 mg KOH/g" in done.stdout
    assert "verdict: pass  (min 187 to max 195, ASTM E29 absolute)" in done.stdout


def test_calc_judges_just_beyond_the_limit_as_oos(capsys):
    # 9.34 g instead of 9.35 g: AV = 5.61 / 9.34 = 0.6006... > 0.6 (ISO 660 formula)
    call_command("calc", "av", "sample_mass=9.34", "sample_volume=1.00", "titrant_concentration=0.1", "--maximum", "0.6", "--json")
    assert json.loads(capsys.readouterr().out)["verdict"] == "oos"


@pytest.mark.parametrize(
    ("extra", "field"),
    [
        (["--oil-type", "olive_lampante"], "oil_type"),
        (["--maximum", "abc"], "maximum"),
        (["--minimum", "2", "--maximum", "1"], "maximum"),
        (["--maximum", "1", "--comparison", "nearest"], "comparison"),
        (["--comparison", "rounding"], "comparison"),
        (["--maximum", "1", "--oil-type", "refined"], "oil_type"),
    ],
)
def test_calc_bad_limits_name_the_field(extra, field):
    with pytest.raises(CommandError, match=field):
        call_command("calc", "av", "sample_mass=9.35", "sample_volume=1.00", "titrant_concentration=0.1", *extra)


def test_calc_prints_review_warnings_and_puts_them_in_json(capsys):
    # PV without a blank (Reg. (EEC) 2568/91 Annex III prescribes one, found): 5.0 x 0.01 x 1000 / 5.0 = 10.0
    call_command("calc", "pv", "sample_mass=5", "sample_volume=5", "blank_not_run=true", "titrant_concentration=0.01")
    lines = capsys.readouterr().out.strip().splitlines()
    assert lines[0].startswith("10.0 meq O2/kg")
    assert lines[1].startswith("review warning: no blank was run")
    call_command("calc", "pv", "sample_mass=5", "sample_volume=5", "blank_volume=0", "titrant_concentration=0.01", "--json")
    assert json.loads(capsys.readouterr().out)["review_warnings"] == []
