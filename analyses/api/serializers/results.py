"""Results: entry one at a time or in bulk, corrections, history."""
from __future__ import annotations

from functools import lru_cache
from typing import Any

from django.conf import settings
from django.utils import timezone
from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers
from rest_framework.settings import api_settings

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.models import Result, Test
from analyses.services.review_warnings import result_input_warnings

INPUTS_HELP = (
    'Input name to value, as the method plugin defines them (see /api/methods/{code}/): a number in the '
    'default unit or a quantity string such as "2015 mg". Kept exactly as received. Send strings to keep the '
    'digits as written, e.g. "1.30": a JSON number 1.30 is read as 1.3 before it reaches the service. '
    'A fatty-acid composition (method fac) takes one peak area or area % per fatty acid by its shorthand, '
    '{"C16:0": "44.1", "C18:1": "39.0", "C18:2": "10.6", "unidentified": "0.4"}, optionally '
    '"response_factors": "theoretical" or a laboratory factor per acid ("rf:C16:0": "1.02"); the same run is '
    'entered on each test of the sample that limits one of its components (several at once through the bulk entry).'
)


@extend_schema_field(
    {
        "type": "object",
        "additionalProperties": {
            "type": "object",
            "properties": {
                "name": {"type": "string"}, "exact": {"type": "string"}, "reported": {"type": "string"},
                "unit": {"type": "string"}, "decimals": {"type": "integer"},
                "kind": {"type": "string", "enum": ["measured", "derived"]}, "detected": {"type": "boolean"},
            },
            "required": ["name", "exact", "reported", "unit", "decimals", "kind", "detected"],
        },
    }
)
class ComponentsField(serializers.JSONField):
    """Every component of a profile (empty for a single-value method)."""


@extend_schema_field({"oneOf": [{"type": "integer"}, {"type": "string"}]})
class ReferenceField(serializers.Field):
    """An item named by its id (an integer) or its code (a string): a titrant lot's code, an
    instrument's asset id."""

    default_error_messages = {"invalid": "must be an id or a code"}

    def to_internal_value(self, data):
        if isinstance(data, bool) or not isinstance(data, (int, str)) or (isinstance(data, str) and not data.strip()):
            self.fail("invalid")
        return data

    def to_representation(self, value):
        return value


TRACE_HELP = "Titrant lot (id or lot code) whose current standardisation gives the titrant concentration"
INSTRUMENTS_HELP = "Instruments used (ids or asset ids); see the method's `instruments` at /api/methods/{code}/"


class ResultInstrumentSerializer(serializers.Serializer):
    asset_id = serializers.CharField(source="instrument.asset_id")
    kind = serializers.CharField(source="instrument.kind")
    calibration = serializers.IntegerField(source="calibration_id")
    check = serializers.IntegerField(source="routine_check_id", allow_null=True)


class ResultSerializer(serializers.ModelSerializer):
    entered_by = username_field("entered_by")
    titrant_lot = serializers.CharField(source="reagent_lot.code", read_only=True, allow_null=True)
    instruments = ResultInstrumentSerializer(source="instrument_uses", many=True, read_only=True)
    components = ComponentsField(
        read_only=True,
        help_text="For a method that reports a profile (fatty-acid composition): every component by name, each with "
        "its exact and reported value, unit and places, whether it is measured or derived (calculated iodine and "
        "saponification values, sums), and whether its peak was given; empty for a single-value method. The "
        "result's own value is the component its test limits (the test's method_code, e.g. fac:C18:2).",
    )
    input_warnings = serializers.SerializerMethodField(
        help_text="Inputs outside the plausible range the method declares (see /api/methods/{code}/), each "
        "naming the input: accepted and computed, and shown to the reviewer on the test; empty when all are plausible",
    )

    class Meta:
        model = Result
        fields = [
            "id", "test", "replicate", "version", "status", "inputs", "value", "value_exact", "reported", "unit",
            "method_code", "method_version", "verdict", "duplicate_check", "supersedes", "correction_reason",
            "status_reason", "entered_by", "entered_at", "titrant_lot", "standardisation", "titrant_concentration",
            "titrant_uncertainty", "instruments", "components", "input_warnings",
        ]
        read_only_fields = fields
        extra_kwargs = {
            "duplicate_check": {
                "help_text": "The replicates' duplicate check as it stood when this result completed its test, kept "
                "with the result; null for a result that did not complete it. A later correction of another "
                "replicate leaves it as it was: the test's own duplicate_check is the current one."
            },
        }

    def _time_showing(self) -> tuple[Any, Any, bool]:
        # looked up once per serializer: a list shows every result through one child, within
        # one request, whose time zone does not change meanwhile
        showing = self.__dict__.get("_showing")
        if showing is None:
            showing = self._showing = _time_showing()
        return showing

    @extend_schema_field(serializers.ListField(child=serializers.CharField()))
    def get_input_warnings(self, result: Result) -> list[str]:
        return result_input_warnings(result)

    def to_representation(self, result: Result) -> dict[str, Any]:
        # What DRF's walk over the fields above gives, written out: the walk (each field's
        # attribute lookup, its checks, the nested list's queryset) was a tenth of a bulk entry
        # of 100 results (issue 12). tests/analyses/api/serializers/test_results.py holds the
        # two equal, field for field, on results of every kind.
        # a relation that is missing reads as None, as DRF's walk reads it
        lot, user = getattr(result, "reagent_lot", None), getattr(result, "entered_by", None)
        return {
            "id": result.pk,
            "test": result.test_id,
            "replicate": result.replicate,
            "version": result.version,
            "status": _STATUS.to_representation(result.status),
            "inputs": result.inputs,
            "value": None if result.value is None else float(result.value),
            "value_exact": _text(result.value_exact),
            "reported": _text(result.reported),
            "unit": _text(result.unit),
            "method_code": _text(result.method_code),
            "method_version": _text(result.method_version),
            "verdict": _text(result.verdict),
            "duplicate_check": result.duplicate_check,
            "supersedes": result.supersedes_id,
            "correction_reason": _text(result.correction_reason),
            "status_reason": _text(result.status_reason),
            "entered_by": None if user is None else _text(user.username),
            "entered_at": _shown_time(result.entered_at, self._time_showing()),
            "titrant_lot": None if lot is None else _text(lot.code),
            "standardisation": result.standardisation_id,
            "titrant_concentration": _text(result.titrant_concentration),
            "titrant_uncertainty": _text(result.titrant_uncertainty),
            "instruments": [_instrument_use(use) for use in result.instrument_uses.all()],
            "components": result.components,
            "input_warnings": self.get_input_warnings(result),
        }


# the two fields whose own showing is used, built once: an instance builds all its fields on
# first use, a cost paid by every request that shows results
_STATUS = serializers.ChoiceField(choices=Result._meta.get_field("status").choices)
_ENTERED_AT = serializers.DateTimeField()


def _shown_time(value: Any, showing: tuple[Any, Any, bool] | None = None) -> Any:
    """A result's entry time as ``DateTimeField`` shows it, in the current time zone and the
    configured format (``showing``: ``_time_showing()``, looked up once for many results). The
    results of a batch share theirs, and showing it was a fiftieth of a bulk entry of 100
    (issue 12): each distinct time is shown once."""
    if value is None:
        return None
    # a time's zone and fold in the key too: two times equal as instants (or an hour apart in a
    # repeated wall time) compare equal, and the field's own showing depends on these settings
    key = (value, getattr(value, "tzinfo", None), getattr(value, "fold", 0))
    return _shown_time_in(key, *(showing or _time_showing()))


def _time_showing() -> tuple[Any, Any, bool]:
    """What showing a time depends on: the current time zone (a lookup in a context-local that
    cost as much as the rest of showing a result's time), the format and USE_TZ."""
    return timezone.get_current_timezone(), api_settings.DATETIME_FORMAT, settings.USE_TZ


@lru_cache(maxsize=256)
def _shown_time_in(key: tuple[Any, Any, int], zone: Any, output_format: Any, use_tz: bool) -> Any:
    # shown in the zone it is cached under, whatever zone is current now: a serializer keeps the
    # zone it looked up first (found by a review: a zone changed meanwhile filled the cache wrongly)
    with timezone.override(zone):
        return _ENTERED_AT.to_representation(key[0])


def _text(value: Any) -> str | None:
    """A text field as DRF's CharField shows it: None stays None, anything else is its str."""
    return None if value is None else str(value)


def _instrument_use(use: Any) -> dict[str, Any]:
    """One instrument use as ``ResultInstrumentSerializer`` shows it (its instrument is never
    missing: the key is not null, and DRF's walk would refuse one too)."""
    return {
        "asset_id": _text(use.instrument.asset_id),
        "kind": _text(use.instrument.kind),
        "calibration": use.calibration_id,
        "check": use.routine_check_id,
    }


class ResultRecordSerializer(StrictSerializer):
    test = serializers.PrimaryKeyRelatedField(queryset=Test.objects.all())
    inputs = serializers.DictField(help_text=INPUTS_HELP)
    titrant_lot = ReferenceField(required=False, help_text=TRACE_HELP)
    instruments = serializers.ListField(child=ReferenceField(), required=False, max_length=20, help_text=INSTRUMENTS_HELP)
    replicate = serializers.IntegerField(required=False, min_value=1, help_text="Default: the next free replicate")


class BulkResultItemSerializer(StrictSerializer):
    test = serializers.IntegerField(help_text="Test id")
    inputs = serializers.DictField(help_text=INPUTS_HELP)
    titrant_lot = ReferenceField(required=False, help_text=TRACE_HELP)
    instruments = serializers.ListField(child=ReferenceField(), required=False, max_length=20, help_text=INSTRUMENTS_HELP)
    replicate = serializers.IntegerField(required=False, min_value=1, help_text="Default: the next free replicate")
    idempotency_key = TextField(
        required=False, max_length=100,
        help_text="Per item; without it, the request's Idempotency-Key header plus the item's position is used",
    )


class ResultRecordBulkSerializer(StrictSerializer):
    results = BulkResultItemSerializer(many=True, allow_empty=False, max_length=500)


class ResultCorrectSerializer(StrictSerializer):
    inputs = serializers.DictField(help_text=INPUTS_HELP)
    titrant_lot = ReferenceField(required=False, help_text=TRACE_HELP + "; default: the corrected result's")
    instruments = serializers.ListField(
        child=ReferenceField(), required=False, max_length=20, help_text=INSTRUMENTS_HELP + "; default: the corrected result's"
    )
    reason = TextField(help_text="Why the result is corrected; kept with the new version")


class BudgetTermSerializer(serializers.Serializer):
    name = serializers.CharField(help_text='an input of the method, or "repeatability"')
    unit = serializers.CharField()
    value = serializers.FloatField(help_text="the input's value (0 for the repeatability, an additive deviation)")
    u = serializers.FloatField(help_text="standard uncertainty, in the input's unit")
    sensitivity = serializers.FloatField(help_text="sensitivity coefficient c = df/dx, result unit per input unit")
    contribution = serializers.FloatField(help_text="|c| u, in the result's unit")
    share = serializers.FloatField(help_text="contribution^2 / u_c^2: the term's fraction of the combined variance")
    basis = serializers.CharField(help_text="where u comes from, with its evidence")


class BudgetSerializer(serializers.Serializer):
    value = serializers.FloatField(help_text="the result (or mean), unrounded, as a float")
    unit = serializers.CharField()
    combined_standard_uncertainty = serializers.FloatField(help_text="u_c by first-order propagation (GUM)")
    coverage_factor = serializers.IntegerField(help_text="k = 2")
    expanded_uncertainty = serializers.CharField(help_text="U = k u_c, Decimal string, two significant digits rounded up")
    replicates = serializers.IntegerField(help_text="1 for a result; n for the mean of n replicates")
    source = serializers.CharField(help_text="the budget source of the inputs' uncertainties")
    terms = BudgetTermSerializer(many=True)
    computed_at = serializers.DateTimeField(allow_null=True, help_text="null when worked out on reading (an older result)")


class ResultUncertaintySerializer(serializers.Serializer):
    result = serializers.IntegerField()
    test = serializers.IntegerField()
    method_code = serializers.CharField()
    unit = serializers.CharField()
    decision_rule = serializers.CharField(help_text="the specification line's decision rule")
    guard_band_multiple = serializers.CharField()
    budget = BudgetSerializer(allow_null=True, help_text="null when the method or its inputs no longer allow one")
    test_mean = BudgetSerializer(allow_null=True, help_text="the mean of the test's current replicates; null until all are in")
    test_mean_note = serializers.CharField(allow_blank=True)
