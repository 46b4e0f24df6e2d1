"""The README's examples work as written."""
import re
from pathlib import Path

from plugins.registry import plugin_problem

README = (Path(__file__).resolve().parents[1] / "README.md").read_text()


def test_readme_outside_plugin_example_keeps_the_contract():
    block = re.search(r"```python\n(.*?)```", README, re.S).group(1)
    namespace: dict = {}
    exec(compile(block, "README.md", "exec"), namespace)
    plugin_class = namespace["MoistureVolatileMatter"]
    assert plugin_problem(plugin_class) is None
    # ISO 662: % = mass loss x 100 / m = 0.01 x 100 / 5.0 = 0.2 (formula in shared/references.md, found)
    assert plugin_class().calculate({"sample_mass": "5 g", "mass_loss": "10 mg"}).value == 0.2


def test_readme_quick_start_has_exactly_the_two_commands_and_ci_runs_the_test_one():
    commands = re.findall(r"```sh\n(python3 -m venv[^\n]*)\n```", README)
    assert len(commands) == 2
    ci = (Path(__file__).resolve().parents[1] / ".ci" / "run").read_text()
    assert commands[1] in ci
