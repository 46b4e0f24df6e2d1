"""The names people know a trend series and its points by: product, control material (lot),
method with its unit, sample and lot codes, specification limits. A fixed number of queries
whatever the number of series or points."""
from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from analyses.models import Lot, Product, SeriesKind, Test
from plugins.contract import split_parameter
from plugins.registry import get_registry


@dataclass(frozen=True)
class SeriesNames:
    key: str
    kind: str  # "qc" or "production"
    method_code: str
    method_title: str
    unit: str  # the method's result unit; a point's specification line may name another (a basis)
    product_code: str
    product_name: str
    material: str | None  # the control material's lot code (QC series)

    @property
    def method(self) -> str:
        return f"{self.method_title} ({self.unit})" if self.unit else self.method_title

    @property
    def product(self) -> str:
        return f"{self.product_code} {self.product_name}".strip()

    @property
    def owner(self) -> str:
        """Whose results these are: "control material X (product P)" or "product P"."""
        if self.kind == SeriesKind.QC_CHECK:
            return f"control material {self.material} (product {self.product})"
        return f"product {self.product}"


@dataclass(frozen=True)
class PointNames:
    sample_label: str
    lot_code: str
    unit: str
    spec_minimum: float | None
    spec_maximum: float | None


def method_names(method_code: str) -> tuple[str, str]:
    """The method's title and result unit from its plugin (the code itself if none is loaded)."""
    registry = get_registry()
    if method_code in registry:
        plugin = registry.get(method_code)
        component = split_parameter(method_code)[1]
        if component:  # one component of a profile ("fac:C18:2"): its own title and unit
            return f"{plugin.title}: {component} ({plugin.component_spec(component).title})", registry.unit_of(method_code)
        return plugin.title, plugin.result_unit
    return method_code, ""


def series_names(keys: Iterable[str]) -> dict[str, SeriesNames]:
    """Names of each well-formed QC or production series key (two queries at most); keys of
    series whose lot or product does not exist are left out."""
    parsed = []
    for key in set(keys):
        parts = str(key).split(":", 2)  # a profile's component keeps its own colons ("fac:C18:2")
        if len(parts) == 3 and parts[0] in SeriesKind.values and parts[1].isdigit() and 0 < int(parts[1]) < 2**63 and parts[2]:
            parsed.append((key, parts[0], int(parts[1]), parts[2]))
    lot_ids = {owner for _, kind, owner, _ in parsed if kind == SeriesKind.QC_CHECK}
    product_ids = {owner for _, kind, owner, _ in parsed if kind == SeriesKind.PRODUCTION}
    lots = {lot.pk: lot for lot in Lot.objects.filter(pk__in=lot_ids).select_related("product")} if lot_ids else {}
    products = {p.pk: p for p in Product.objects.filter(pk__in=product_ids)} if product_ids else {}
    names = {}
    for key, kind, owner, method_code in parsed:
        title, unit = method_names(method_code)
        if kind == SeriesKind.QC_CHECK and owner in lots:
            lot = lots[owner]
            names[key] = SeriesNames(key, kind, method_code, title, unit, lot.product.code, lot.product.name, lot.code)
        elif kind == SeriesKind.PRODUCTION and owner in products:
            product = products[owner]
            names[key] = SeriesNames(key, kind, method_code, title, unit, product.code, product.name, None)
    return names


def point_names(test_ids: Iterable[int]) -> dict[int, PointNames]:
    """Sample label, lot code, unit and specification limits of each test (one query)."""
    rows = Test.objects.filter(pk__in=set(test_ids)).values_list(
        "id", "sample__label", "sample__lot__code", "unit", "specification_line__minimum", "specification_line__maximum",
    )
    return {
        test_id: PointNames(label, lot_code, unit or "", _limit(minimum), _limit(maximum))
        for test_id, label, lot_code, unit, minimum, maximum in rows
    }


def _limit(text: str | None) -> float | None:
    return float(text) if text else None  # drawn on a chart only; verdicts use the Decimal as written


def code_range(codes: Iterable[str]) -> str:
    """"A" or "A to B (n)" over codes in the order given, each counted once."""
    distinct = list(dict.fromkeys(codes))
    if not distinct:
        return ""
    if len(distinct) == 1:
        return distinct[0]
    return f"{distinct[0]} to {distinct[-1]} ({len(distinct)})"
