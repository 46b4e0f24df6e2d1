"""Discovery of method plugins through the ``oleotrace.methods`` entry-point group.

Plugins load once, when the ``analyses`` app is ready. A plugin that fails to import,
repeats a code, lacks a unit, or fails one of its own worked examples is left out; the
reason is logged and reported by a Django system check, and the service still starts.
"""
from __future__ import annotations

import logging
import math
from collections.abc import Iterable
from dataclasses import dataclass
from importlib.metadata import EntryPoint, entry_points

from plugins.pint_import import pint

from plugins.contract import (
    ENTRY_POINT_GROUP,
    INSTRUMENT_KINDS,
    TITRANT_INPUT,
    ChoiceInput,
    Component,
    MethodInputError,  # noqa: F401  (kept importable from here)
    MethodPlugin,
    QuantityInput,
    join_parameter,
    split_parameter,
)
from plugins.units import registry as unit_registry

logger = logging.getLogger(__name__)


class UnknownMethod(LookupError):
    def __init__(self, code: str, known: Iterable[str]):
        self.code = code
        super().__init__(f"unknown method {code!r}; known methods: {', '.join(sorted(known)) or 'none'}")


@dataclass(frozen=True)
class RejectedPlugin:
    entry_point: str
    reason: str


class PluginRegistry:
    def __init__(self) -> None:
        self._plugins: dict[str, MethodPlugin] = {}
        self.rejected: list[RejectedPlugin] = []
        self.loaded = False

    def load(self, found: Iterable[EntryPoint] | None = None) -> PluginRegistry:
        """Load every plugin of the entry-point group (or of ``found``), replacing any earlier load."""
        self._plugins = {}
        self.rejected = []
        if found is None:
            found = entry_points(group=ENTRY_POINT_GROUP)
        for entry_point in sorted(found, key=lambda ep: ep.name):
            label = f"{entry_point.name} = {entry_point.value}"
            try:
                plugin_class = entry_point.load()
            except Exception as exc:  # any import failure leaves the plugin out, never the service
                self._reject(label, f"failed to import: {type(exc).__name__}: {exc}")
                continue
            try:
                problem = plugin_problem(plugin_class)
            except Exception as exc:  # a plugin that breaks the check itself is as broken as one that fails it
                problem = f"failed the contract check: {type(exc).__name__}: {exc}"
            if problem is None and plugin_class.code in self._plugins:
                problem = f"repeats method code {plugin_class.code!r}, already registered"
            if problem:
                self._reject(label, problem)
                continue
            self._plugins[plugin_class.code] = plugin_class()
        self.loaded = True
        return self

    def _reject(self, label: str, reason: str) -> None:
        logger.error("method plugin %s rejected: %s", label, reason)
        self.rejected.append(RejectedPlugin(label, reason))

    def get(self, code: str) -> MethodPlugin:
        """The plugin of a method code, or of a parameter "<code>:<component>" of a profile plugin
        ("fac:C18:2"); UnknownMethod for an unknown code or a component the plugin lacks."""
        method, component = split_parameter(code)
        try:
            plugin = self._plugins[method if component else code]
        except KeyError:
            raise UnknownMethod(code, self._plugins) from None
        if component and component not in {c.name for c in plugin.components}:
            raise UnknownMethod(code, [join_parameter(method, c.name) for c in plugin.components] or self._plugins)
        return plugin

    def all(self) -> list[MethodPlugin]:
        return [self._plugins[code] for code in sorted(self._plugins)]

    def codes(self) -> list[str]:
        return sorted(self._plugins)

    def __contains__(self, code: object) -> bool:
        if not isinstance(code, str):
            return False
        try:
            self.get(code)
        except UnknownMethod:
            return False
        return True

    def unit_of(self, code: str) -> str:
        """The unit of a method's result, or of one component of a profile ("fac:C18:2" -> "%")."""
        plugin = self.get(code)
        component = split_parameter(code)[1]
        return plugin.component_spec(component).unit if component else plugin.result_unit


def plugin_problem(plugin_class: object) -> str | None:
    """Why ``plugin_class`` cannot be registered, or None when it keeps the contract."""
    if not (isinstance(plugin_class, type) and issubclass(plugin_class, MethodPlugin)):
        return "is not a subclass of plugins.contract.MethodPlugin"
    missing = [name for name in MethodPlugin.REQUIRED_ATTRIBUTES if not hasattr(plugin_class, name)]
    if missing:
        return f"lacks {', '.join(missing)}"
    if not isinstance(plugin_class.code, str) or not plugin_class.code.isidentifier() or plugin_class.code != plugin_class.code.lower():
        return f"code {plugin_class.code!r} must be a short lower-case identifier"
    if not plugin_class.result_unit:
        return "lacks a result unit"
    decimals = plugin_class.decimals
    if not isinstance(decimals, int) or isinstance(decimals, bool) or decimals < 0:
        return f"decimals {decimals!r} must be a whole number of places, 0 or more"
    if isinstance(plugin_class.standards, str) or not plugin_class.standards:
        return "names no standards (a tuple such as ('AOCS Cd 3-25',))"
    if not isinstance(plugin_class.inputs, (tuple, list)) or not plugin_class.inputs:
        return "declares no inputs"
    for spec in plugin_class.inputs:
        if not isinstance(spec, (QuantityInput, ChoiceInput)):
            return f"input {spec!r} is neither a QuantityInput nor a ChoiceInput"
    names = [spec.name for spec in plugin_class.inputs]
    if len(set(names)) != len(names):
        return "declares an input name twice"
    for spec in plugin_class.inputs:
        if isinstance(spec, QuantityInput):
            if not spec.unit:
                return f"input {spec.name!r} lacks a unit"
            try:
                unit_registry().Unit(spec.unit)
            except (pint.errors.PintError, ValueError, AttributeError, TypeError):
                return f"input {spec.name!r} has unit {spec.unit!r}, which pint does not know"
            problem = spec.plausible_range_problem()
            if problem:
                return f"input {spec.name!r} {problem}"
    if plugin_class.components:
        problem = _profile_problem(plugin_class)
        if problem:
            return problem
    elif plugin_class.compute is MethodPlugin.compute:
        return "does not implement compute()"
    if isinstance(plugin_class.titrants, str) or not all(isinstance(t, str) and t for t in plugin_class.titrants):
        return "titrants must be a tuple of substance names such as ('KOH',)"
    if plugin_class.titrants and TITRANT_INPUT not in names:
        return f"names titrants but declares no {TITRANT_INPUT!r} input"
    for need in plugin_class.instruments:
        if isinstance(need, str) or not need or any(kind not in INSTRUMENT_KINDS for kind in need):
            return f"instrument need {need!r} must be a tuple of kinds from {', '.join(INSTRUMENT_KINDS)}"
    if not plugin_class.exact_arithmetic and not str(plugin_class.inexact_reason).strip():
        return "sets exact_arithmetic = False without saying why in inexact_reason"
    for limit in plugin_class.spec_limits:
        if not getattr(limit, "source", None):
            return f"spec limit {limit!r} names no source"
    if not plugin_class.examples:
        return "ships no worked examples"
    for number, example in enumerate(plugin_class.examples, start=1):
        if not getattr(example, "source", None):
            return f"worked example {number} names no source"
    plugin = plugin_class()
    for number, example in enumerate(plugin_class.examples, start=1):
        try:
            result = plugin.calculate(example.inputs)
        except Exception as exc:  # whatever compute() raises, the plugin is left out, not the service
            return f"worked example {number} ({example.source}) raised {type(exc).__name__}: {exc}"
        if example.component:
            if example.component not in result.components:
                return f"worked example {number} checks {example.component!r}, which is not one of its components"
            result = result.component(example.component)
        if not math.isclose(result.value, example.expected, rel_tol=0, abs_tol=example.tolerance):
            return (
                f"fails its worked example {number} ({example.source}): "
                f"got {result.value:.6g}, expected {example.expected:.6g} ± {example.tolerance:g}"
            )
    return None


def _profile_problem(plugin_class: type[MethodPlugin]) -> str | None:
    """Why a profile plugin's components break the contract ("Profiles" in plugins.contract)."""
    if plugin_class.compute_profile is MethodPlugin.compute_profile:
        return "declares components but does not implement compute_profile()"
    if not all(isinstance(c, Component) for c in plugin_class.components):
        return "components must be plugins.contract.Component"
    names = [c.name for c in plugin_class.components]
    if len(set(names)) != len(names):
        return "declares a component name twice"
    for component in plugin_class.components:
        if not component.name or component.name != component.name.strip() or not component.unit:
            return f"component {component.name!r} needs a name without surrounding blanks and a unit"
        if component.kind not in ("measured", "derived"):
            return f"component {component.name!r} has kind {component.kind!r}; it must be measured or derived"
        if not isinstance(component.decimals, int) or isinstance(component.decimals, bool) or component.decimals < 0:
            return f"component {component.name!r} has decimals {component.decimals!r}; a whole number, 0 or more"
        for limit in component.spec_limits:
            if not getattr(limit, "source", None):
                return f"component {component.name!r} has a spec limit that names no source"
    headline = next((c for c in plugin_class.components if c.name == plugin_class.headline), None)
    if headline is None:
        return f"headline {plugin_class.headline!r} is not one of its components"
    if headline.unit != plugin_class.result_unit or headline.decimals != plugin_class.decimals:
        return "the headline component's unit and decimals must be result_unit and decimals"
    return None


method_registry = PluginRegistry()


def get_registry() -> PluginRegistry:
    """The process-wide registry, loaded on first use (the app loads it at start-up)."""
    if not method_registry.loaded:
        method_registry.load()
    return method_registry
