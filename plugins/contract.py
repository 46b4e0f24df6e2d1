"""The method plugin contract: the one module every analytical method follows.

A method plugin is a subclass of :class:`MethodPlugin`. Its static facts are class
attributes; its computation is the :meth:`MethodPlugin.compute` method.

Static facts
    code            short, unique, lower-case ("sv", "iv", ...)
    title           the method's name
    version         the plugin's own version; stored with every result
    standards       the published methods it follows, e.g. ("AOCS Cd 3-25", "ISO 3657")
    inputs          a tuple of :class:`QuantityInput` / :class:`ChoiceInput`; a quantity has
                    hard bounds (beyond them: refused) and, optionally, a plausible range
                    with its source (outside it: accepted with a review warning naming the
                    input); see :class:`QuantityInput`
    result_unit     the trade's form of the unit ("mg KOH/g", "g I2/100 g", ...)
    decimals        reporting precision, in decimal places
    replicates      determinations per test (2 = duplicates)
    repeatability   a :class:`Repeatability`, or None where no limit applies
    spec_limits     default limits per oil type, each a :class:`SpecLimit` with its source
    examples        worked examples, each a :class:`WorkedExample` with its source
    cautions        reagent hazards, for the docs and the API

Traceability (what a result must name when it is entered; issue 9)
    titrants        the titrant substances the method accepts, e.g. ("KOH", "NaOH"); the
                    lot's standardised concentration becomes the ``titrant_concentration``
                    input. Empty: the method uses no titrant. A method with titrants must
                    declare a ``titrant_concentration`` input.
    instruments     the instrument kinds it needs, one tuple per need, met by any kind in it:
                    (("balance",), ("burette", "automatic_titrator")) for a titration. Kinds
                    are those of :data:`INSTRUMENT_KINDS`.

Computation
    ``compute(values)`` receives the validated inputs as exact ``Decimal`` values in each
    input's default unit, as the analyst wrote them ("1.965" is 1.965, "2015 mg" is
    exactly 2.015 g), and strings for choices. It returns the unrounded result in
    ``result_unit`` as a ``Decimal``; write its constants as Decimals too
    (``Decimal("56.1")``). It runs in a 60-digit decimal context, so a result that is a
    limit on paper is that limit exactly, and the verdict and the reported value are
    decided on it: never on float noise. A compute() that mixes in a float raises
    TypeError, and the registry leaves such a plugin out at start-up.

    Exception: a plugin whose formula needs transcendental functions (log, exp, powers
    with fractional exponents) sets ``exact_arithmetic = False`` and says why in
    ``inexact_reason``. It then receives and returns floats, and its result is judged
    through :func:`float_as_decimal` (the float written to 15 significant digits).

    Cross-field rules go in ``check(values)``, which raises :class:`MethodInputError`
    naming the field; it receives the same values as ``compute``.

Uncertainty (GUM, JCGM 100:2008)
    ``sensitivities(values)`` returns the sensitivity coefficient df/dx of each quantity input
    present in ``values`` (the same values compute() takes), as floats in result unit per input
    unit. The default takes central differences on ``compute()`` itself, with Decimal steps of a
    millionth of each value (1e-6 where it is 0) in the 60-digit context: for the products and
    quotients of titration formulas this is exact to some 12 significant digits, and a plugin
    never writes its formula twice. Where a step leaves the formula's domain (a titre equal to
    the blank), a one-sided difference is used. A plugin may override it with analytic
    derivatives. ``plugins.uncertainty`` combines the coefficients with the inputs' standard
    uncertainties from a budget source; ``default_uncertainties`` (name -> ``UnitDefault`` of
    ``plugins.default_budget``) overrides the default budget's per-unit values for one input.

Profiles (several named components from one determination; issue 11)
    A plugin that declares ``components`` (a tuple of :class:`Component`) returns a profile:
    every component has its own value, unit, rounding (``decimals``) and default limits per
    oil type (``spec_limits``, e.g. the Codex CXS 210 composition ranges), and is either a
    ``measured`` component (a fatty acid, "C18:2") or a ``derived`` value computed from the
    others ("iv_calc"). Such a plugin implements ``compute_profile(values)`` (name ->
    unrounded Decimal, every declared component present) instead of ``compute``; the
    contract's ``compute`` then returns the ``headline`` component, whose unit and places
    are ``result_unit`` and ``decimals``, so everything written for one value (worked
    examples, sensitivities, uncertainty budgets) works on the headline unchanged.
    ``calculate`` returns a :class:`MethodResult` whose ``components`` hold a
    :class:`ComponentValue` per component (exact, reported by ASTM E29 at the component's
    places); ``MethodResult.component(name)`` is the same result seen as that one value, which
    is how a specification line on ``fac:C18:2`` judges it. ``component_sensitivities`` gives
    df/dx for any component. A ``WorkedExample`` may name the ``component`` it checks.
    ``profile_warnings(result, oil_type)`` returns the review warnings of a profile (e.g. an
    identity screen against the declared oil); the default is none. Component names use the
    trade's shorthand (C16:0, C18:1, C18:1t); a parameter is written ``<code>:<component>``
    (:func:`split_parameter`). Single-value plugins declare no components and nothing about
    them changes.

Every public entry point (:meth:`MethodPlugin.calculate`) validates first, so a plugin
never sees a value it cannot use. All input errors are one type,
:class:`MethodInputError`, which names the offending input and says why.

Discovery: plugins are found through the ``oleotrace.methods`` entry-point group (see
``plugins.registry``). A package registers a plugin in its pyproject.toml::

    [project.entry-points."oleotrace.methods"]
    anv = "my_package.anisidine:AnisidineValue"
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from decimal import ROUND_HALF_EVEN, Context, Decimal, localcontext
from typing import Any, ClassVar

from plugins.units import UnitProblem, to_decimal, to_magnitude

ENTRY_POINT_GROUP = "oleotrace.methods"
# the instrument kinds a plugin may require (the lab's instrument register uses the same words)
INSTRUMENT_KINDS = ("balance", "burette", "automatic_titrator", "spectrophotometer", "oven", "thermometer", "gc",
                    "oxidative_stability")
TITRANT_INPUT = "titrant_concentration"
# what a titration needs: a balance for the test portion, a burette or titrator for the titre
TITRATION_INSTRUMENTS: tuple[tuple[str, ...], ...] = (("balance",), ("burette", "automatic_titrator"))
_ROUNDING_DIGITS = 320  # enough for any finite float written out in full
# compute() runs in this context: 60 digits hold every product and quotient of inputs written
# to a few places exactly where the true result is a finite decimal (a limit on paper is one).
EXACT_DIGITS = 60


class MethodInputError(ValueError):
    """An input that cannot be right. ``field`` names it; ``reason`` says why."""

    def __init__(self, field: str, reason: str):
        self.field = field
        self.reason = reason
        super().__init__(f"{field}: {reason}")


@dataclass(frozen=True)
class QuantityInput:
    """A measured quantity. Bounds are in ``unit``; a bare number is taken in ``unit``.

    Two ranges, both optional:

    - the hard bounds ``minimum`` / ``maximum``: a value beyond them is refused
      (:class:`MethodInputError` naming the input), as no determination the method allows
      at all can have it; ``bounds_source`` says why they are where they are, in the refusal;
    - the plausible range ``plausible_minimum`` / ``plausible_maximum``, with
      ``plausible_source`` (where it comes from, e.g. the standard's table of test-portion
      masses, with its evidence tags in words) and ``plausible_evidence`` (the weakest of
      them: "found", "from memory", "common practice, no source"): a value outside it is accepted and computed, and carries a review warning
      naming the input (:meth:`implausible`, ``plugins.review_warnings``). It must lie
      within the hard bounds; a plugin that declares none gets no such warning.
    """

    name: str
    unit: str
    help: str
    minimum: float | None = None
    minimum_inclusive: bool = True
    maximum: float | None = None
    required: bool = True
    default: float | None = None
    plausible_minimum: float | None = None
    plausible_maximum: float | None = None
    plausible_source: str = ""
    plausible_evidence: str = "found"
    bounds_source: str = ""  # why the hard bounds are where they are; said when a value is refused

    def parse(self, raw: Any) -> float:
        try:
            value = to_magnitude(raw, self.unit)
        except UnitProblem as problem:
            raise MethodInputError(self.name, str(problem)) from None
        if not math.isfinite(value):
            raise MethodInputError(self.name, "must be a finite number")
        why = f" ({self.bounds_source})" if self.bounds_source else ""
        if self.minimum is not None:
            if self.minimum_inclusive and value < self.minimum:
                raise MethodInputError(self.name, f"must be at least {self.minimum:g} {self.unit}, got {value:g}{why}")
            if not self.minimum_inclusive and value <= self.minimum:
                raise MethodInputError(self.name, f"must be greater than {self.minimum:g} {self.unit}, got {value:g}{why}")
        if self.maximum is not None and value > self.maximum:
            raise MethodInputError(self.name, f"must be at most {self.maximum:g} {self.unit}, got {value:g}{why}")
        return value

    def parse_exact(self, raw: Any) -> Decimal:
        """``raw`` checked as :meth:`parse` does, then as an exact Decimal in ``unit``."""
        self.parse(raw)
        try:
            return to_decimal(raw, self.unit)
        except UnitProblem as problem:
            raise MethodInputError(self.name, str(problem)) from None

    def has_plausible_range(self) -> bool:
        return self.plausible_minimum is not None or self.plausible_maximum is not None

    def plausible_range_problem(self) -> str | None:
        """Why the declared plausible range cannot be right (no source, empty, or reaching
        beyond the hard bounds), or None."""
        if not self.has_plausible_range():
            return None
        low, high = self.plausible_minimum, self.plausible_maximum
        if not str(self.plausible_source).strip():
            return "declares a plausible range without its source (plausible_source)"
        if low is not None and high is not None and low > high:
            return f"has a plausible minimum {low:g} above its plausible maximum {high:g}"
        if self.minimum is not None and low is not None and low < self.minimum:
            return f"has a plausible range reaching below its hard minimum {self.minimum:g} {self.unit}"
        if self.maximum is not None and high is not None and high > self.maximum:
            return f"has a plausible range reaching above its hard maximum {self.maximum:g} {self.unit}"
        return None

    def implausible(self, value: Decimal | float) -> str | None:
        """The review warning for a value (already within the hard bounds, in ``unit``)
        outside the plausible range, naming the input; None inside it or with no range.
        Decided in decimal arithmetic, so a value at a bound is inside."""
        if not self.has_plausible_range():
            return None
        exact = value if isinstance(value, Decimal) else float_as_decimal(float(value))
        low = None if self.plausible_minimum is None else float_as_decimal(self.plausible_minimum)
        high = None if self.plausible_maximum is None else float_as_decimal(self.plausible_maximum)
        if (low is None or exact >= low) and (high is None or exact <= high):
            return None
        if low is not None and exact < low:
            where = f"below its plausible minimum {low.normalize():f} {self.unit}"
        else:
            where = f"above its plausible maximum {high.normalize():f} {self.unit}"
        return f"{self.name} {exact.normalize():f} {self.unit} is {where} ({self.plausible_source}); check the entry"

    def describe(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "kind": "quantity",
            "unit": self.unit,
            "minimum": self.minimum,
            "minimum_inclusive": self.minimum_inclusive,
            "maximum": self.maximum,
            "plausible_minimum": self.plausible_minimum,
            "plausible_maximum": self.plausible_maximum,
            "plausible_source": self.plausible_source or None,
            "plausible_evidence": self.plausible_evidence if self.has_plausible_range() else None,
            "bounds_source": self.bounds_source or None,
            "required": self.required,
            "default": self.default,
            "help": self.help,
        }


@dataclass(frozen=True)
class ChoiceInput:
    """One of a fixed set of words, e.g. the fatty-acid basis of an FFA result."""

    name: str
    choices: tuple[str, ...]
    help: str
    required: bool = True
    default: str | None = None

    def parse(self, raw: Any) -> str:
        word = str(raw).strip().lower()
        if word not in self.choices:
            raise MethodInputError(self.name, f"must be one of {', '.join(self.choices)}, got {raw!r}")
        return word

    def describe(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "kind": "choice",
            "choices": list(self.choices),
            "required": self.required,
            "default": self.default,
            "help": self.help,
        }


MethodInput = QuantityInput | ChoiceInput


@dataclass(frozen=True)
class Repeatability:
    """Largest acceptable difference between duplicates: ``absolute`` in the result unit,
    or ``relative`` as a fraction of their mean, whichever the source gives."""

    source: str
    absolute: float | None = None
    relative: float | None = None

    def limit_for(self, mean: float) -> float:
        if self.absolute is not None:
            return self.absolute
        if self.relative is not None:
            return abs(mean) * self.relative
        raise ValueError("a repeatability needs an absolute or a relative limit")

    def exact_limit_for(self, mean: Decimal) -> Decimal:
        if self.absolute is not None:
            return float_as_decimal(self.absolute)
        if self.relative is not None:
            return abs(mean) * float_as_decimal(self.relative)
        raise ValueError("a repeatability needs an absolute or a relative limit")


@dataclass(frozen=True)
class SpecLimit:
    """A default specification limit for one oil type, with the source it comes from."""

    oil_type: str
    source: str
    minimum: float | None = None
    maximum: float | None = None
    evidence: str = "found"  # "found" in the source, or "from memory" where not confirmed


@dataclass(frozen=True)
class WorkedExample:
    """Inputs and the result the source gives (or that follows from it), within ``tolerance``."""

    inputs: Mapping[str, Any]
    expected: float
    source: str
    tolerance: float = 1e-9
    component: str | None = None  # a profile plugin's component; None: the headline value


@dataclass(frozen=True)
class Component:
    """One named value of a profile (see "Profiles" in the module docstring).

    ``kind`` is "measured" (entered through the inputs: a fatty acid's share) or "derived"
    (computed from the measured ones: a calculated iodine value, a sum)."""

    name: str
    title: str
    unit: str
    decimals: int
    kind: str = "measured"
    spec_limits: tuple[SpecLimit, ...] = ()
    help: str = ""

    def limits_for(self, oil_type: str) -> SpecLimit | None:
        for limit in self.spec_limits:
            if limit.oil_type == oil_type:
                return limit
        return None

    def describe(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "title": self.title,
            "unit": self.unit,
            "decimals": self.decimals,
            "kind": self.kind,
            "help": self.help,
            "spec_limits": [
                {"oil_type": s.oil_type, "minimum": s.minimum, "maximum": s.maximum, "source": s.source, "evidence": s.evidence}
                for s in self.spec_limits
            ],
        }


@dataclass(frozen=True)
class ComponentValue:
    """One component of a computed profile: ``exact`` unrounded, ``reported`` by ASTM E29 at
    the component's places. ``detected`` is False for a measured component the analyst gave
    no peak for (its value is 0, "not detected")."""

    name: str
    exact: Decimal
    reported: Decimal
    unit: str
    decimals: int
    kind: str = "measured"
    detected: bool = True

    @property
    def value(self) -> float:
        return float(self.exact)

    def as_dict(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "exact": str(self.exact),
            "reported": str(self.reported),
            "unit": self.unit,
            "decimals": self.decimals,
            "kind": self.kind,
            "detected": self.detected,
        }


def split_parameter(parameter: str) -> tuple[str, str]:
    """``"fac:C18:2"`` -> ``("fac", "C18:2")``; ``"iv"`` -> ``("iv", "")``. Method codes are
    identifiers, so the first colon ends the code and the rest is the component."""
    code, _, component = str(parameter).partition(":")
    return code.strip(), component.strip()


def join_parameter(code: str, component: str) -> str:
    return f"{code}:{component}" if component else code


@dataclass(frozen=True)
class DuplicateCheck:
    values: tuple[float, ...]
    difference: float
    limit: float | None
    agrees: bool | None
    source: str | None


@dataclass(frozen=True)
class MethodResult:
    """A computed result. ``exact`` is the unrounded value the verdict is decided on: the
    exact decimal result, or for a plugin without exact arithmetic its float written to 15
    significant digits. ``value`` is the same as a float, for statistics and charts."""

    code: str
    version: str
    value: float
    reported: Decimal
    unit: str
    decimals: int
    inputs: dict[str, Any] = field(default_factory=dict)
    exact: Decimal | None = None
    # a profile's components by name (empty for a single-value method); see "Profiles"
    components: Mapping[str, ComponentValue] = field(default_factory=dict)

    @property
    def judged(self) -> Decimal:
        return self.exact if self.exact is not None else float_as_decimal(self.value)

    def component(self, name: str) -> MethodResult:
        """This result seen as one component's value (itself for "" on a single value)."""
        if not name:
            return self
        try:
            part = self.components[name]
        except KeyError:
            raise MethodInputError("component", f"{name!r} is not a component of method {self.code}") from None
        return MethodResult(
            code=self.code, version=self.version, value=part.value, reported=part.reported, unit=part.unit,
            decimals=part.decimals, inputs=self.inputs, exact=part.exact, components=self.components,
        )

    def components_as_dict(self) -> dict[str, dict[str, Any]]:
        return {name: part.as_dict() for name, part in self.components.items()}

    def as_dict(self) -> dict[str, Any]:
        return {
            "method": self.code,
            "method_version": self.version,
            "value": self.value,
            "exact": str(self.judged),
            "reported": str(self.reported),
            "unit": self.unit,
            "decimals": self.decimals,
            # exact inputs as decimal strings, so that JSON keeps the digits as written
            "inputs": {k: str(v) if isinstance(v, Decimal) else v for k, v in self.inputs.items()},
            **({"components": self.components_as_dict()} if self.components else {}),
        }


FLOAT_DIGITS = 15  # a double always holds 15 significant digits (DBL_DIG); arithmetic noise lies beyond


def float_as_decimal(value: float) -> Decimal:
    """The documented guard for a float that must be judged or rounded: written to 15
    significant digits. Noise from a few float operations sits in the 16th and 17th digits
    (186.99999999999997 -> 187.000000000000), while a real near-tie written within 15
    digits stays one (0.6149999999999 stays below 0.615)."""
    return Decimal(f"{float(value):.{FLOAT_DIGITS}g}")


def stored_exact(exact: str, value: float) -> Decimal:
    """A stored result as it is judged: its exact decimal text, or for a row stored before
    exact values were kept (``exact`` empty), its float through :func:`float_as_decimal`."""
    return Decimal(exact) if exact else float_as_decimal(value)


def round_half_even(value: Decimal | float, decimals: int) -> Decimal:
    """ASTM E29 rounding: half to even (so 21.45 -> 21.4 at 1 place).

    A Decimal is rounded exactly as it stands: plugins compute in exact decimal arithmetic,
    so a result that is a tie on paper (5.02 g, 2.51 mL, 0.1 mol/L -> AV 2.805) is exactly
    the tie. A float goes through :func:`float_as_decimal` first.
    """
    quantum = Decimal(1).scaleb(-decimals)
    number = value if isinstance(value, Decimal) else float_as_decimal(value)
    # The default 28 digits cannot hold a large value to ``decimals`` places (1e30 at 0.1).
    with localcontext(Context(prec=_ROUNDING_DIGITS + decimals)):
        return number.quantize(quantum, rounding=ROUND_HALF_EVEN)


def exact_context() -> Context:
    return Context(prec=EXACT_DIGITS)


class MethodPlugin:
    """Base class of every method plugin. See the module docstring for the contract."""

    code: ClassVar[str]
    title: ClassVar[str]
    version: ClassVar[str]
    standards: ClassVar[tuple[str, ...]]
    inputs: ClassVar[tuple[MethodInput, ...]]
    result_unit: ClassVar[str]
    decimals: ClassVar[int]
    replicates: ClassVar[int] = 2
    repeatability: ClassVar[Repeatability | None] = None
    spec_limits: ClassVar[tuple[SpecLimit, ...]] = ()
    examples: ClassVar[tuple[WorkedExample, ...]] = ()
    cautions: ClassVar[str] = ""
    # Exact decimal arithmetic is the default; see "Computation" in the module docstring.
    exact_arithmetic: ClassVar[bool] = True
    inexact_reason: ClassVar[str] = ""
    # declared facts that review warnings and specification lines read (block at the end of this module)
    scope: ClassVar[tuple[MethodScope, ...]] = ()
    blank: ClassVar[BlankRule | None] = None
    basis: ClassVar[ResultBasis | None] = None
    # per-input overrides of the default uncertainty budget (see "Uncertainty" above)
    default_uncertainties: ClassVar[Mapping[str, Any]] = {}

    # --- traceability (issue 9): see "Traceability" in the module docstring ---------
    titrants: ClassVar[tuple[str, ...]] = ()
    instruments: ClassVar[tuple[tuple[str, ...], ...]] = ()

    # --- profiles (issue 11): see "Profiles" in the module docstring -----------------
    components: ClassVar[tuple[Component, ...]] = ()
    headline: ClassVar[str] = ""

    # --- derived parameters (issue 11) ------------------------------------------------
    # A method computed from other methods' results on the same sample (TOTOX from PV and AnV):
    # input name -> the method code whose test mean feeds it. Its tests are never entered by
    # hand: analyses.services.derived_tests works them out whenever a source test's mean is
    # set or cleared, and they are reviewed like any other. It measures nothing, so it names
    # no titrant and no instruments.
    derived_from: ClassVar[Mapping[str, str]] = {}

    REQUIRED_ATTRIBUTES: ClassVar[tuple[str, ...]] = (
        "code", "title", "version", "standards", "inputs", "result_unit", "decimals",
    )

    # --- to override -------------------------------------------------------------
    def compute(self, values: Mapping[str, Any]) -> Decimal:
        """The result; for a profile plugin, its headline component."""
        if self.components:
            return self.compute_profile(values)[self.headline]
        raise NotImplementedError

    def compute_profile(self, values: Mapping[str, Any]) -> Mapping[str, Decimal]:
        """A profile plugin's components, unrounded, by name (see "Profiles")."""
        raise NotImplementedError

    def measured_components(self, values: Mapping[str, Any]) -> set[str]:
        """The measured components these inputs report (the rest were not detected); all by default."""
        return {c.name for c in self.components if c.kind == "measured"}

    def profile_warnings(self, result: MethodResult, oil_type: str) -> list[str]:
        """What a reviewer should weigh about a profile for a product of ``oil_type``; none by default."""
        return []

    def check(self, values: Mapping[str, Any]) -> None:
        """Cross-field rules; raise MethodInputError naming the field."""

    def unit_for(self, values: Mapping[str, Any]) -> str:
        """The result's unit for these inputs; ``result_unit`` unless an input changes it."""
        return self.result_unit

    def sensitivities(self, values: Mapping[str, Any]) -> dict[str, float]:
        """df/dx for each quantity input in ``values``, by central differences on compute()."""
        coefficients: dict[str, float] = {}
        for spec in self.inputs:
            x = values.get(spec.name)
            if not isinstance(spec, QuantityInput) or x is None or isinstance(x, str):
                continue
            coefficients[spec.name] = self._difference(values, spec.name, x)
        return coefficients

    def component_sensitivities(self, values: Mapping[str, Any], component: str) -> dict[str, float]:
        """df/dx of one component of a profile, as :meth:`sensitivities` does for the headline."""
        if not component or component == self.headline:
            return self.sensitivities(values)
        self.component_spec(component)  # refuses an unknown name
        view = _ComponentView(self, component)
        return {
            spec.name: view._difference(values, spec.name, values[spec.name])
            for spec in self.inputs
            if isinstance(spec, QuantityInput) and values.get(spec.name) is not None and not isinstance(values[spec.name], str)
        }

    def component_spec(self, name: str) -> Component:
        for component in self.components:
            if component.name == name:
                return component
        known = ", ".join(c.name for c in self.components) or "none (it reports one value)"
        raise MethodInputError("component", f"{name!r} is not a component of method {self.code}; its components: {known}")

    def _difference(self, values: Mapping[str, Any], name: str, x: Decimal | float) -> float:
        exact = isinstance(x, Decimal)
        step = (abs(x) if x else (Decimal(1) if exact else 1.0)) * (Decimal("1e-6") if exact else 1e-6)

        def at(point: Decimal | float) -> Decimal | float | None:
            # inside the exact context below, which gives the same digits: a context of its own
            # for each point cost 2 % of a batch of 100 results (issue 12)
            try:
                return self.compute({**values, name: point})
            except (MethodInputError, ArithmeticError, ValueError):
                return None

        with localcontext(exact_context()):
            up, down = at(x + step), at(x - step)
            if up is not None and down is not None:
                return float((up - down) / (2 * step))
            here = at(x)  # a one-sided difference, only where one side is out of the formula's range
            if up is not None and here is not None:
                return float((up - here) / step)
            if down is not None and here is not None:
                return float((here - down) / step)
        raise MethodInputError(name, "the formula has no derivative here")

    # --- shared behaviour ---------------------------------------------------------
    def validate(self, raw: Mapping[str, Any]) -> dict[str, Any]:
        """Parse and bound-check every input; refuse unknown names; run ``check``."""
        if not isinstance(raw, Mapping):
            raise MethodInputError("inputs", "must be an object of name=value pairs")
        known = {spec.name for spec in self.inputs}
        for name in raw:
            if name not in known:
                expected = f"expected: {', '.join(sorted(known))}"
                if not str(name).strip():
                    raise MethodInputError("inputs", f"has an input with a blank name ({expected})")
                raise MethodInputError(str(name), f"is not an input of method {self.code} ({expected})")
        values: dict[str, Any] = {}
        for spec in self.inputs:
            given = raw.get(spec.name)
            if given is None or (isinstance(given, str) and not given.strip()):
                if spec.default is not None:
                    given = spec.default
                elif spec.required:
                    raise MethodInputError(spec.name, "is required")
                else:
                    continue
            if isinstance(spec, QuantityInput) and self.exact_arithmetic:
                values[spec.name] = spec.parse_exact(given)
            else:
                values[spec.name] = spec.parse(given)
        with localcontext(exact_context()):
            self.check(values)
        return values

    def calculate(self, raw: Mapping[str, Any]) -> MethodResult:
        values = self.validate(raw)
        with localcontext(exact_context()):
            outcome = self.compute(values)
        if self.exact_arithmetic:
            if not isinstance(outcome, Decimal):
                raise TypeError(
                    f"compute() of {self.code} returned {type(outcome).__name__}, not Decimal: write its constants "
                    "as Decimal, or set exact_arithmetic = False and say why in inexact_reason"
                )
            if not outcome.is_finite():
                raise MethodInputError("inputs", "give no finite result")
            exact: Decimal | None = outcome
            value = float(outcome)
        else:
            exact = None
            value = float(outcome)
        if not math.isfinite(value):
            raise MethodInputError("inputs", "give no finite result")
        return MethodResult(
            code=self.code,
            version=self.version,
            value=value,
            reported=round_half_even(exact if exact is not None else value, self.decimals),
            unit=self.unit_for(values),
            decimals=self.decimals,
            inputs=values,
            exact=exact,
            components=self._profile(values) if self.components else {},
        )

    def _profile(self, values: Mapping[str, Any]) -> dict[str, ComponentValue]:
        """Every declared component, exact and reported at its own places."""
        with localcontext(exact_context()):
            profile = self.compute_profile(values)
        detected = self.measured_components(values)
        parts: dict[str, ComponentValue] = {}
        for component in self.components:
            exact = profile[component.name]
            if not isinstance(exact, Decimal) or not exact.is_finite():
                raise MethodInputError("inputs", f"give no finite {component.name}")
            parts[component.name] = ComponentValue(
                name=component.name, exact=exact, reported=round_half_even(exact, component.decimals),
                unit=component.unit, decimals=component.decimals, kind=component.kind,
                detected=component.kind != "measured" or component.name in detected,
            )
        return parts

    def report(self, value: Decimal | float) -> Decimal:
        return round_half_even(value, self.decimals)

    def duplicate_check(self, values: Sequence[Decimal | float]) -> DuplicateCheck:
        """Compare replicate results with the repeatability limit (max - min <= r), decided
        in decimal arithmetic on the values as given (floats through float_as_decimal)."""
        exact = [v if isinstance(v, Decimal) else float_as_decimal(v) for v in values]
        floats = tuple(float(v) for v in exact)
        with localcontext(exact_context()):
            spread = max(exact) - min(exact) if exact else Decimal(0)
            if self.repeatability is None or len(exact) < 2:
                return DuplicateCheck(floats, float(spread), None, None, None)
            mean = sum(exact) / len(exact)
            limit = self.repeatability.exact_limit_for(mean)
            return DuplicateCheck(floats, float(spread), float(limit), spread <= limit, self.repeatability.source)

    def limits_for(self, oil_type: str) -> SpecLimit | None:
        for limit in self.spec_limits:
            if limit.oil_type == oil_type:
                return limit
        return None

    @classmethod
    def describe(cls) -> dict[str, Any]:
        return {
            "code": cls.code,
            "title": cls.title,
            "version": cls.version,
            "standards": list(cls.standards),
            "inputs": [spec.describe() for spec in cls.inputs],
            "result_unit": cls.result_unit,
            "decimals": cls.decimals,
            "replicates": cls.replicates,
            "repeatability": None
            if cls.repeatability is None
            else {
                "absolute": cls.repeatability.absolute,
                "relative": cls.repeatability.relative,
                "source": cls.repeatability.source,
            },
            "spec_limits": [
                {
                    "oil_type": s.oil_type,
                    "minimum": s.minimum,
                    "maximum": s.maximum,
                    "source": s.source,
                    "evidence": s.evidence,
                }
                for s in cls.spec_limits
            ],
            "cautions": cls.cautions,
            "exact_arithmetic": cls.exact_arithmetic,
            "inexact_reason": cls.inexact_reason,
            **describe_declarations(cls),
            "titrants": list(cls.titrants),
            "instruments": [{"any_of": list(need)} for need in cls.instruments],
            "headline": cls.headline or None,
            "components": [component.describe() for component in cls.components],
        }


class _ComponentView:
    """A profile plugin seen as one component, for central differences on that component."""

    def __init__(self, plugin: MethodPlugin, component: str):
        self.plugin, self.component = plugin, component

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        return self.plugin.compute_profile(values)[self.component]

    _difference = MethodPlugin._difference


# --- Method scope, blank and result basis ------------------------------------------
# Three optional class attributes of MethodPlugin, each declared with its source:
#   scope   tuple of MethodScope: the ranges over which the method's source says it works;
#           a result outside one is kept and judged, and carries a review warning
#   blank   BlankRule: whether the method prescribes a blank determination; when it does,
#           the plugin takes the blank titre or an explicit "blank_not_run" (a review warning)
#   basis   ResultBasis: the input that says what the result is expressed as, and so its
#           unit (FFA "% as palmitic"); a specification line carries it
# plugins.review_warnings turns them into the words a reviewer reads.


@dataclass(frozen=True)
class MethodScope:
    """A range of results the method is validated for, in ``result_unit``, with its source.

    ``note`` says what the source says of results outside it (e.g. "erratic")."""

    source: str
    minimum: float | None = None
    maximum: float | None = None
    maximum_inclusive: bool = True
    evidence: str = "found"
    note: str = ""

    def contains(self, value: Any) -> bool:
        """Decided in decimal arithmetic, like verdicts: a result at a bound is at it."""
        value = value if isinstance(value, Decimal) else float_as_decimal(float(value))
        if self.minimum is not None and value < float_as_decimal(self.minimum):
            return False
        if self.maximum is None:
            return True
        maximum = float_as_decimal(self.maximum)
        return value <= maximum if self.maximum_inclusive else value < maximum

    def describe(self) -> dict[str, Any]:
        return {
            "minimum": self.minimum,
            "maximum": self.maximum,
            "maximum_inclusive": self.maximum_inclusive,
            "source": self.source,
            "evidence": self.evidence,
            "note": self.note,
        }


@dataclass(frozen=True)
class BlankRule:
    """Whether the method prescribes a blank determination, and the most a blank may take.

    ``limit_mmol`` is the blank's largest amount of titrant (mL x mol/L), so the limit holds
    whatever titrant strength is used; None where the source sets none."""

    prescribed: bool
    source: str
    evidence: str = "found"
    limit_mmol: float | None = None
    limit_source: str = ""

    def describe(self) -> dict[str, Any]:
        return {
            "prescribed": self.prescribed,
            "source": self.source,
            "evidence": self.evidence,
            "limit_mmol": self.limit_mmol,
            "limit_source": self.limit_source,
        }


@dataclass(frozen=True)
class ResultBasis:
    """The choice input that says what a result is expressed as; ``unit_for`` must depend
    on it alone. ``by_oil_type`` gives the conventional choice per oil type; other oil
    types take the input's default."""

    input_name: str
    source: str
    evidence: str = "found"
    by_oil_type: Mapping[str, str] = field(default_factory=dict)

    def describe(self) -> dict[str, Any]:
        return {
            "input": self.input_name,
            "source": self.source,
            "evidence": self.evidence,
            "by_oil_type": dict(self.by_oil_type),
        }


_FLAG_WORDS = {"true": "true", "yes": "true", "1": "true", "false": "false", "no": "false", "0": "false"}


@dataclass(frozen=True)
class FlagInput(ChoiceInput):
    """A yes/no input, kept as the word "true" or "false" (JSON true, "yes" and 1 read as
    "true"). Make one with :func:`flag_input`."""

    def parse(self, raw: Any) -> str:
        word = _FLAG_WORDS.get(str(raw).strip().lower())
        if word is None:
            raise MethodInputError(self.name, f"must be true or false, got {raw!r}")
        return word


def flag_input(name: str, help: str) -> FlagInput:
    """An optional yes/no input that is "false" unless given."""
    return FlagInput(name, ("false", "true"), help, required=False, default="false")


def describe_declarations(plugin: type[MethodPlugin] | MethodPlugin) -> dict[str, Any]:
    """The scope, blank and basis of a plugin, for ``describe`` and the API."""
    return {
        "scope": [scope.describe() for scope in plugin.scope],
        "blank": None if plugin.blank is None else plugin.blank.describe(),
        "basis": None if plugin.basis is None else plugin.basis.describe(),
    }
