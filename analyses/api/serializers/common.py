"""Serializer pieces shared by the topics."""
from __future__ import annotations

from collections.abc import Mapping

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers
from rest_framework.exceptions import ValidationError

from analyses.api.schema import IDEMPOTENCY_KEY_HEADER, IDEMPOTENCY_KEY_MAX


class StrictSerializer(serializers.Serializer):
    # An input serializer that refuses fields it does not know, so a misspelt field
    # ("maximun") is named in a 400 instead of being silently ignored. (A comment, not a
    # docstring: a docstring would become the schema's text for every request body.)

    def to_internal_value(self, data):
        if isinstance(data, Mapping):
            unknown = sorted(set(data) - set(self.fields))
            if unknown:
                expected = ", ".join(sorted(self.fields))
                raise ValidationError({name: [f"is not a field here (expected: {expected})"] for name in unknown})
        return super().to_internal_value(data)


class TextField(serializers.CharField):
    """A CharField that takes only a JSON string: DRF's own turns 0 or 1.5 into "0" and "1.5",
    so ``{"reason": 0}`` would pass for a reason. The schema says string; so does this."""

    default_error_messages = {"not_text": "Must be text (a JSON string)."}

    def to_internal_value(self, data):
        if not isinstance(data, str):
            self.fail("not_text")
        return super().to_internal_value(data)


class ReasonSerializer(StrictSerializer):
    reason = TextField(help_text="Why; kept in the audit trail")


class NoteSerializer(StrictSerializer):
    note = TextField(required=False, allow_blank=True, default="", help_text="Optional remark")


class IdempotencyKeySerializer(serializers.Serializer):
    key = serializers.CharField(max_length=IDEMPOTENCY_KEY_MAX, required=False, allow_null=True)


def idempotency_key(request) -> str | None:
    """The request's Idempotency-Key header, checked; a bad one is a 400 naming the header."""
    raw = request.headers.get(IDEMPOTENCY_KEY_HEADER)
    if raw is None:
        return None
    serializer = IdempotencyKeySerializer(data={"key": raw})
    if not serializer.is_valid():
        raise ValidationError({IDEMPOTENCY_KEY_HEADER: serializer.errors["key"]})
    return serializer.validated_data["key"]


def username_field(source: str, **kwargs) -> serializers.CharField:
    """A user shown by username (null when there is none)."""
    return serializers.CharField(source=f"{source}.username", read_only=True, allow_null=True, **kwargs)


class _BlankAsNull:
    """A value not set yet is "" in the database and null in the API, as the schema says."""

    def to_representation(self, value):
        return None if value == "" else super().to_representation(value)


class _NamesTheChoices:
    """A value outside the choice set is refused with the valid choices listed."""

    def to_internal_value(self, data):
        try:
            return super().to_internal_value(data)
        except serializers.ValidationError:
            valid = ", ".join(str(choice) for choice in self.choices if choice != "")
            raise serializers.ValidationError(f"{str(data)[:80]!r} is not one of the valid choices: {valid}") from None


def enum_field_class(
    component_name: str, choices, *, blank: bool = False, blank_as_null: bool = False
) -> type[serializers.ChoiceField]:
    """A ChoiceField whose choice set is one named component of the OpenAPI schema, so
    fields named alike ("state" of lots, samples, tests) do not collide in generated
    clients. ``blank`` adds "" (a value not set); ``blank_as_null`` shows "" as null
    instead (declare the field with ``allow_null=True``)."""
    values = [value for value, _ in choices] + ([""] if blank else [])
    schema = {
        "type": "string",
        "enum": values,
        "description": "\n".join(f"* `{value}` - {label}" for value, label in choices),
    }
    bases = (_NamesTheChoices,) + ((_BlankAsNull, serializers.ChoiceField) if blank_as_null else (serializers.ChoiceField,))
    field_class = type(f"{component_name}Field", bases, {"__module__": __name__})
    return extend_schema_field(schema, component_name=component_name)(field_class)
