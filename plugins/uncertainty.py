"""Measurement uncertainty of a result by first-order propagation (GUM, JCGM 100:2008, 5.1.2).

A plugin's ``compute()`` is the measurement model y = f(x1, ..., xN). For each quantity input xi
a *budget source* (:class:`BudgetSource`) gives its standard uncertainty u(xi) and says where it
comes from; the plugin's ``sensitivities()`` hook gives ci = df/dxi (central differences on the
exact compute() by default, see plugins.contract). The method's repeatability enters as one more
term: an additive deviation with c = 1 and u = s_r.

Each term's contribution is |ci| u(xi), and the combined standard uncertainty of uncorrelated
inputs is u_c = sqrt(sum(ci^2 u(xi)^2)) (GUM 5.1.2), the Euclidean norm of the contributions,
taken by ``math.hypot``. The tests check both against the ``uncertainties`` package's own
propagation of y0 + sum(ci * dxi) (which took a tenth of result entry's time when it did the
work: issue 12).

The mean of n replicates (:func:`mean_budget`) treats each input's uncertainty as shared by the
replicates (same balance calibration, same burette, same titrant standardisation: fully
correlated, the conservative choice for calibration terms), so the mean's coefficient is the
replicates' mean coefficient; only the repeatability falls by sqrt(n).

The expanded uncertainty is U = k u_c with k = 2 (about 95 %, GUM 6.2 / 6.3, found), written as a
Decimal to two significant digits (GUM 7.2.6 allows at most two; from memory), rounded up so a
guard band built on it is never narrower than the computed U.
"""
from __future__ import annotations

import math
from collections.abc import Collection, Mapping, Sequence
from dataclasses import dataclass
from decimal import ROUND_UP, Decimal
from functools import cached_property
from typing import TYPE_CHECKING, Any, Protocol

from plugins.contract import QuantityInput, float_as_decimal

if TYPE_CHECKING:
    from plugins.contract import MethodPlugin

COVERAGE_FACTOR = 2  # GUM (JCGM 100:2008) 6.3: k = 2 for about 95 % coverage (found)
REPEATABILITY = "repeatability"
# ISO 5725-6: the repeatability limit r = 2.8 s_r (2 x sqrt(2) x s_r, rounded). From memory.
R_OVER_SR = 2.8


@dataclass(frozen=True)
class StandardUncertainty:
    """One input's standard uncertainty ``u`` (in the input's unit) and where it comes from."""

    u: float
    basis: str


class BudgetSource(Protocol):
    """Where the standard uncertainties come from. Today the per-method defaults
    (``plugins.default_budget``); later the traceability records (the balance's calibration,
    the titrant lot's standardisation) can implement the same two methods."""

    name: str

    def input_uncertainty(self, plugin: MethodPlugin, spec: QuantityInput, value: Decimal | float) -> StandardUncertainty | None:
        """u of one quantity input at ``value``; None where the source has none (left out)."""

    def repeatability(self, plugin: MethodPlugin, result: float) -> StandardUncertainty | None:
        """s_r of one determination at ``result``; None where the method has none."""


@dataclass(frozen=True)
class BudgetTerm:
    name: str
    unit: str
    value: float
    u: float
    sensitivity: float
    contribution: float  # |c| u, in the result's unit
    share: float  # contribution^2 / u_c^2, a fraction of the combined variance
    basis: str

    def as_dict(self) -> dict[str, Any]:
        return {
            "name": self.name, "unit": self.unit, "value": self.value, "u": self.u,
            "sensitivity": self.sensitivity, "contribution": self.contribution, "share": self.share,
            "basis": self.basis,
        }


@dataclass(frozen=True)
class Budget:
    value: float
    unit: str
    terms: tuple[BudgetTerm, ...]
    combined: float
    source: str
    replicates: int = 1
    k: int = COVERAGE_FACTOR

    @cached_property  # a batch asks for it several times per budget; the budget never changes
    def expanded(self) -> Decimal:
        """U = k u_c as a Decimal, two significant digits, rounded up."""
        return two_significant_up(self.k * self.combined)

    def dominant(self, *, inputs_only: bool = False) -> BudgetTerm:
        terms = [t for t in self.terms if not (inputs_only and t.name == REPEATABILITY)]
        return max(terms, key=lambda t: t.contribution)

    def as_dict(self) -> dict[str, Any]:
        return {
            "value": self.value,
            "unit": self.unit,
            "combined_standard_uncertainty": self.combined,
            "coverage_factor": self.k,
            "expanded_uncertainty": str(self.expanded),
            "replicates": self.replicates,
            "source": self.source,
            "terms": [t.as_dict() for t in self.terms],
        }


def two_significant_up(number: float) -> Decimal:
    if not math.isfinite(number):
        raise ValueError(f"no finite uncertainty: {number!r}")
    exact = float_as_decimal(abs(number))
    if exact == 0:
        return Decimal(0)
    return exact.quantize(Decimal(1).scaleb(exact.adjusted() - 1), rounding=ROUND_UP)


@dataclass(frozen=True)
class _Term:
    name: str
    unit: str
    value: float
    u: float
    sensitivity: float
    basis: str = ""


def combine(terms: Sequence[_Term]) -> tuple[float, list[float]]:
    """u_c and each term's contribution |ci| u(xi), for independent inputs (GUM 5.1.2)."""
    if not terms:
        raise ValueError("a budget needs at least one term: no input has an uncertainty and the method no repeatability")
    contributions = [abs(term.sensitivity * term.u) for term in terms]
    return math.hypot(*contributions), contributions


def _budget(value: float, unit: str, terms: Sequence[_Term], source: str, replicates: int) -> Budget:
    combined, contributions = combine(terms)
    variance = combined ** 2
    return Budget(
        value=value,
        unit=unit,
        terms=tuple(
            BudgetTerm(
                name=t.name, unit=t.unit, value=t.value, u=t.u, sensitivity=t.sensitivity, contribution=c,
                share=(c * c / variance) if variance else 0.0, basis=t.basis,
            )
            for t, c in zip(terms, contributions)
        ),
        combined=combined,
        source=source,
        replicates=replicates,
    )


def result_budget(
    plugin: MethodPlugin, values: Mapping[str, Any], source: BudgetSource, *, given: Collection[str] | None = None,
    component: str = "",
) -> Budget:
    """The budget of one determination from its validated ``values`` (as compute() takes them).
    ``given``: the inputs the analyst entered; an input filled in by its default (a blank of 0
    where none was run) was not measured and has no uncertainty term. ``component``: one
    component of a profile plugin (default: its headline, or the single value)."""
    from decimal import localcontext

    from plugins.contract import exact_context

    with localcontext(exact_context()):
        y = float(plugin.compute_profile(values)[component] if component else plugin.compute(values))
    coefficients = plugin.component_sensitivities(values, component) if component else plugin.sensitivities(values)
    specs = {spec.name: spec for spec in plugin.inputs if isinstance(spec, QuantityInput)}
    terms: list[_Term] = []
    for name, c in coefficients.items():
        if given is not None and name not in given:
            continue
        standard = source.input_uncertainty(plugin, specs[name], values[name])
        if standard is None:
            continue
        terms.append(_Term(name, specs[name].unit, float(values[name]), standard.u, c, standard.basis))
    unit = plugin.component_spec(component).unit if component else plugin.unit_for(values)
    repeatability = source.repeatability(plugin, y)
    if repeatability is not None:
        terms.append(_Term(REPEATABILITY, unit, 0.0, repeatability.u, 1.0, repeatability.basis))
    return _budget(y, unit, terms, source.name, 1)


def mean_budget(replicates: Sequence[Budget | Mapping[str, Any]]) -> Budget:
    """The budget of the mean of the replicates' budgets (as Budget or its ``as_dict``).

    Input terms: shared by the replicates (see the module docstring), so value, u and c are the
    replicates' means. Repeatability: s_r of the mean is s_r / sqrt(n), c = 1."""
    budgets = [b.as_dict() if isinstance(b, Budget) else b for b in replicates]
    if not budgets:
        raise ValueError("the mean of no replicates has no budget")
    n = len(budgets)
    names: list[str] = []
    for budget in budgets:
        names.extend(t["name"] for t in budget["terms"] if t["name"] not in names)
    terms = []
    for name in names:
        rows = [t for b in budgets for t in b["terms"] if t["name"] == name]
        mean = lambda key: sum(float(r[key]) for r in rows) / len(rows)  # noqa: E731
        if name == REPEATABILITY:
            terms.append(_Term(name, rows[0]["unit"], 0.0, mean("u") / math.sqrt(n), 1.0, rows[0]["basis"] + f"; mean of {n}: s_r / sqrt({n})"))
        else:
            terms.append(_Term(name, rows[0]["unit"], mean("value"), mean("u"), mean("sensitivity"), rows[0]["basis"]))
    value = sum(float(b["value"]) for b in budgets) / n
    return _budget(value, budgets[0]["unit"], terms, budgets[0]["source"], n)


def repeatability_sd(plugin: MethodPlugin, result: float) -> float | None:
    """s_r at ``result`` from the plugin's repeatability limit r: s_r = r / 2.8."""
    if plugin.repeatability is None:
        return None
    return plugin.repeatability.limit_for(result) / R_OVER_SR


def repeatability_from_duplicates(pairs: Sequence[tuple[float, float]], *, relative: bool) -> float:
    """s_r from the lab's own duplicate pairs: sqrt(sum(d^2) / 2N) (pooled duplicates; common
    practice, no source). With ``relative`` each difference is divided by its pair's mean, and
    the answer is a fraction of the result."""
    if not pairs:
        raise ValueError("no duplicate pairs")
    squares = []
    for a, b in pairs:
        d = a - b
        if relative:
            mean = (a + b) / 2
            if mean == 0:
                continue
            d /= mean
        squares.append(d * d)
    if not squares:
        raise ValueError("no usable duplicate pairs")
    return math.sqrt(sum(squares) / (2 * len(squares)))
