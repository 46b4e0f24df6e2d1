"""The methods command lists every registered plugin."""
import json

from django.core.management import call_command


def test_methods_json_lists_every_registered_method(capsys):
    call_command("methods", "--json")
    listed = json.loads(capsys.readouterr().out)
    assert [m["code"] for m in listed] == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "totox", "unsap"]
    sv = next(m for m in listed if m["code"] == "sv")
    assert sv["standards"] == ["AOCS Cd 3-25", "ISO 3657"]
    assert sv["result_unit"] == "mg KOH/g"
    assert {i["name"] for i in sv["inputs"]} == {"sample_mass", "sample_volume", "blank_volume", "titrant_concentration"}


def test_methods_text_shows_code_title_unit_standards_and_inputs(capsys):
    call_command("methods")
    out = capsys.readouterr().out
    assert "iv    Iodine value (Wijs)  [g I2/100 g]" in out
    assert "AOCS Cd 1d-92; ISO 3961" in out
    assert "titrant_concentration (mol/L)" in out


def test_methods_text_shows_each_scope_with_its_source(capsys):
    call_command("methods")
    out = capsys.readouterr().out
    # ISO 3960 (found): 0-30 meq/kg; AOCS Cd 8b-90 (found): erratic at 70 and above; Cd 1d-92 (found): 18-165
    assert "scope: 0 to 30 meq O2/kg, ISO 3960" in out
    assert "scope: up to below 70" not in out and "scope: below 70 meq O2/kg, AOCS Cd 8b-90" in out
    assert "scope: 18 to 165 g I2/100 g, AOCS Cd 1d-92" in out


def test_methods_text_shows_each_quantitys_bounds_and_plausible_range(capsys):
    call_command("methods")
    out = capsys.readouterr().out
    # AOCS Cd 8b-90 (found): 5.00 ± 0.05 g; refused below a tenth and above ten times the portion
    assert "allowed 0.5 to 50 g; plausible 4.95 to 5.05 g (AOCS Cd 8b-90 test portion: 5.00 g ± 0.05 g)" in out
    assert "plausible up to 50 mL (one filling of a 50 mL burette (common practice, no source))" in out
