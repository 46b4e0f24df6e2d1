"""List rows read with ``values()`` and rendered by the serializer's own fields.

A page of 100 tests read as model instances builds about 900 objects (each test with its
sample, lot, product, line, people, budget and replicates) that point at one another, and DRF
reads every field through its generic attribute walk: most of a list request's CPU time, and
garbage that only the cycle collector frees (its full passes took 40 to 180 ms in the list
benchmark). A ``RowSerializer`` also renders a plain ``values()`` row, keyed by the ORM
lookup of each field's source (``sample.lot.code`` -> ``sample__lot__code``): every value
goes through the same field's ``to_representation`` as on the model path, so a row renders
as the instance would. A method field reads the row through ``row_<field name>(row)``, a
nested list field takes the rows its list view put under its name, and a field named in
``row_columns`` reads the column (an annotation of the list's queryset) named there. Fields whose source the
row cannot give (a property, a nullable relation on the way to a field that is skipped,
not null, when it is missing) are refused when the plan is built, never rendered otherwise.

Single objects and writes keep the model path; ``PagedListView`` takes the row path for the
views that name a ``rows_loader``.
"""
from __future__ import annotations

from collections.abc import Callable
from typing import Any

from django.core.exceptions import FieldDoesNotExist, ImproperlyConfigured
from rest_framework import serializers
from rest_framework.relations import PKOnlyObject, PrimaryKeyRelatedField

Row = dict[str, Any]


def _lookup(serializer: serializers.ModelSerializer, field: serializers.Field) -> str:
    """The ``values()`` lookup of a plain field's source; refuses what a row cannot give
    exactly as the instance would."""
    model = serializer.Meta.model
    attrs = field.source_attrs
    for position, attr in enumerate(attrs):
        last = position == len(attrs) - 1
        try:
            model_field = model._meta.get_field(attr)  # a key's attname too ("sample_id" gives the key)
        except FieldDoesNotExist:
            model_field = None
        # nothing of that name, or a key's attname (a number) with more to cross after it
        if model_field is None or (attr != model_field.name and not last):
            raise ImproperlyConfigured(
                f"{type(serializer).__name__}.{field.field_name}: {field.source!r} is not a column a row can give"
            )
        if last:
            if not model_field.concrete or model_field.many_to_many or model_field.one_to_many:
                raise ImproperlyConfigured(f"{type(serializer).__name__}.{field.field_name}: {field.source!r} is not a column")
            break
        if not model_field.is_relation or model_field.many_to_many or model_field.one_to_many:
            raise ImproperlyConfigured(f"{type(serializer).__name__}.{field.field_name}: {field.source!r} crosses no single relation")
        if model_field.null and not field.allow_null:
            # DRF leaves such a field out of the output when the relation is missing; a row would say null
            raise ImproperlyConfigured(
                f"{type(serializer).__name__}.{field.field_name}: {field.source!r} crosses a nullable relation; "
                "declare the field allow_null=True"
            )
        model = model_field.related_model
    return "__".join(attrs)


class RowSerializer(serializers.ModelSerializer):
    # A read-only list serializer that also renders values() rows (see the module). Subclasses
    # name in ``row_extra_lookups`` the columns their ``row_<field>`` methods read.
    # (A comment, not a docstring: a docstring would become the schema's text.)

    row_extra_lookups: tuple[str, ...] = ()
    # field name -> the column (an annotation of the list's queryset) a row gives it under,
    # instead of the lookup of its source
    row_columns: dict[str, str] = {}

    @classmethod
    def row_lookups(cls) -> list[str]:
        """The ``values()`` lookups a row of this serializer needs, in field order."""
        return list(dict.fromkeys([*(lookup for _, kind, lookup, _ in cls()._row_plan() if lookup), *cls.row_extra_lookups]))

    def _row_plan(self) -> list[tuple[str, str, str | None, Callable]]:
        plan = self.__dict__.get("_row_plan_cache")
        if plan is not None:
            return plan
        plan = []
        for field in self._readable_fields:
            name = field.field_name
            if isinstance(field, serializers.SerializerMethodField):
                method = getattr(self, f"row_{name}", None)
                if method is None:
                    raise ImproperlyConfigured(f"{type(self).__name__} needs row_{name}(row) for its method field")
                plan.append((name, "method", None, method))
            elif isinstance(field, serializers.ListSerializer):
                plan.append((name, "nested", None, field.to_representation))
            elif name in self.row_columns:
                plan.append((name, "plain", self.row_columns[name], field.to_representation))
            elif isinstance(field, PrimaryKeyRelatedField):
                plan.append((name, "related", _lookup(self, field), field.to_representation))
            elif isinstance(field, (serializers.BaseSerializer, serializers.RelatedField, serializers.HiddenField)):
                raise ImproperlyConfigured(f"{type(self).__name__}.{name}: a row cannot render {type(field).__name__}")
            else:
                plan.append((name, "plain", _lookup(self, field), field.to_representation))
        self.__dict__["_row_plan_cache"] = plan
        return plan

    def to_representation(self, instance):
        if not isinstance(instance, dict):
            return super().to_representation(instance)
        out: Row = {}
        for name, kind, lookup, render in self._row_plan():
            if kind == "plain":
                value = instance[lookup]
                out[name] = None if value is None else render(value)
            elif kind == "related":
                value = instance[lookup]
                out[name] = None if value is None else render(PKOnlyObject(pk=value))
            elif kind == "method":
                out[name] = render(instance)
            else:
                out[name] = render(instance[name])
        return out
