"""Review warnings of a test, from its current replicates (``plugins.review_warnings``), and
the inputs a specification line completes (the basis its unit follows)."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from analyses.models import DecisionRule, Result, ResultStatus, SpecificationLine, Test, Verdict
from analyses.services.result_trace import stored_inputs
from plugins.blanks import blank_warnings
from plugins.contract import MethodInputError, MethodPlugin
from plugins.registry import UnknownMethod, get_registry
from plugins.review_warnings import input_warnings, raw_input_warnings, scope_warnings


def line_inputs(plugin: MethodPlugin, line: SpecificationLine, inputs: Mapping[str, Any]) -> Mapping[str, Any]:
    """``inputs`` with the line's basis where the analyst gave none: on a line "% as palmitic"
    an FFA entered without ``fatty_acid_basis`` is expressed as palmitic, not as the
    plugin's default. A basis given is kept, and refused later if it disagrees with the line."""
    if plugin.basis is None or not line.basis:
        return inputs
    given = inputs.get(plugin.basis.input_name)
    if given is not None and not (isinstance(given, str) and not given.strip()):
        return inputs
    return {**inputs, plugin.basis.input_name: line.basis}


def result_input_warnings(result: Result) -> list[str]:
    """The inputs of one stored result outside their plausible ranges, each warning naming its
    input; shown on the result as soon as it is entered (no query: the result's own row)."""
    try:
        plugin = get_registry().get(result.method_code)
    except UnknownMethod:
        return []
    return raw_input_warnings(plugin, stored_inputs(result))


def _replicate_warnings(
    plugin: MethodPlugin, test: Test, current: Sequence[Result] | None = None,
    validated: Mapping[int, Mapping[str, Any]] | None = None,
) -> list[str]:
    """Implausible inputs and blank warnings of each current replicate, one line per distinct
    warning naming the replicates. ``validated`` holds, by replicate number, the inputs the
    plugin has just validated from what that replicate stores (a batch has them from computing
    its results), which are not validated again."""
    by_warning: dict[str, list[int]] = {}
    if current is None:
        current = test.results.filter(status=ResultStatus.CURRENT).order_by("replicate")
    for result in current:
        values = validated.get(result.replicate) if validated else None
        if values is None:
            try:
                values = plugin.validate(line_inputs(plugin, test.specification_line, stored_inputs(result)))
            except MethodInputError as exc:  # entered under an older version of the method's checks
                found = [f"its inputs no longer pass method {plugin.code}'s checks ({exc.field}: {exc.reason})"]
        if values is not None:
            found = input_warnings(plugin, values) + blank_warnings(plugin.blank, values)
        for warning in found:
            by_warning.setdefault(warning, []).append(result.replicate)
    lines = []
    for warning, replicates in by_warning.items():
        label = "replicate" if len(replicates) == 1 else "replicates"
        lines.append(f"{label} {', '.join(str(n) for n in replicates)}: {warning}")
    return lines


# "not given": read it from the database
_READ = object()


def test_review_warnings(
    plugin: MethodPlugin, test: Test, mean: Any, *, current: Sequence[Result] | None = None, expanded: Any = _READ,
    validated: Mapping[int, Mapping[str, Any]] | None = None,
) -> list[str]:
    """What the reviewer should weigh before accepting ``test``, whose replicates are all in:
    inputs outside their plausible ranges, their blanks, the mean against the method's scope,
    a profile's own warnings, and a conditional pass. Never a reason to refuse.
    A caller that holds them passes the current replicates (by replicate number) and the
    mean's expanded U (None: none), which are otherwise read, and may pass ``validated``
    (``_replicate_warnings``)."""
    return (
        _replicate_warnings(plugin, test, current, validated) + scope_warnings(plugin, mean, test.specification_line.unit)
        + _profile_warnings(plugin, test, current) + _decision_warnings(test, mean, expanded)
    )


def _profile_warnings(plugin: MethodPlugin, test: Test, current: Sequence[Result] | None = None) -> list[str]:
    """A profile's own warnings (the fatty-acid identity screen against the product's declared oil
    type, unidentified area), from each current replicate's inputs as stored; every test on a
    component of the profile carries them, so whoever reviews any of them sees them."""
    if not plugin.components:
        return []
    oil_type = test.sample.lot.product.oil_type
    if current is None:
        current = test.results.filter(status=ResultStatus.CURRENT).order_by("replicate")
    found: list[str] = []
    for result in current:
        try:
            outcome = plugin.calculate(line_inputs(plugin, test.specification_line, stored_inputs(result)))
        except MethodInputError:
            continue  # said by _replicate_warnings
        for warning in plugin.profile_warnings(outcome, oil_type):
            if warning not in found:
                found.append(warning)
    return found


def _decision_warnings(test: Test, mean: Any, expanded: Any = _READ) -> list[str]:
    """A conditional pass (ILAC G8 non-binary statements) is no OOS; it releases, and is said."""
    from analyses.services.uncertainty import mean_expanded_uncertainty
    from analyses.services.pull_judging import study_attribute_of
    from analyses.services.verdicts import guard_band_for, line_verdict

    line = test.specification_line
    if line.decision_rule != DecisionRule.NON_BINARY or study_attribute_of(test) is not None:  # a pull: the study's limits
        return []
    if expanded is _READ:
        expanded = mean_expanded_uncertainty(test)
    if line_verdict(mean, line, expanded) != Verdict.CONDITIONAL_PASS:
        return []
    return [
        f"conditional pass: the mean is inside the specification limit by less than the guard band "
        f"w = {guard_band_for(line, expanded)} ({line.guard_band_multiple} x U, U = {expanded}, k = 2; ILAC G8:09/2019)"
    ]


test_review_warnings.__test__ = False  # a service, not a pytest test
