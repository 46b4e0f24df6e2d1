"""A result corrected after its lot was released: the analyst's proposal and QA's decision."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, enum_field_class, username_field
from analyses.api.serializers.lots import password_field
from analyses.api.serializers.states import VerdictField
from analyses.models import CorrectionState, PostReleaseCorrection, Verdict

CorrectionStateField = enum_field_class("PostReleaseCorrectionStateEnum", CorrectionState.choices)


class DerivedPreviewSerializer(serializers.Serializer):
    """An accepted test worked out from the corrected one (TOTOX), as the correction would leave it."""

    test = serializers.IntegerField()
    method_code = serializers.CharField()
    reported = serializers.CharField()
    unit = serializers.CharField()
    verdict = VerdictField(choices=Verdict.choices)


class PostReleaseCorrectionSerializer(serializers.ModelSerializer):
    """A correction of a released lot's result: the corrected raw inputs, what they give, and
    QA's decision; once applied, the new version of the result and the certificate reissued."""

    lot_code = serializers.CharField(source="lot.code", read_only=True)
    test = serializers.IntegerField(source="result.test_id", read_only=True)
    method_code = serializers.CharField(source="result.method_code", read_only=True)
    replicate = serializers.IntegerField(source="result.replicate", read_only=True)
    reported_before = serializers.CharField(
        source="result.reported", read_only=True, help_text="The replicate as it was released"
    )
    reported = serializers.CharField(read_only=True, help_text="The replicate with the correction, as it would be reported")
    mean_reported = serializers.CharField(
        read_only=True, help_text="The test's result (mean of its replicates) with the correction, as reported"
    )
    verdict = VerdictField(
        choices=Verdict.choices, read_only=True, allow_null=True,
        help_text="The test's verdict with the correction, by its line's decision rule",
    )
    derived = DerivedPreviewSerializer(
        many=True, read_only=True,
        help_text="The accepted tests worked out from this one (TOTOX from PV and AnV) as the correction leaves them; "
        "held to the same refusals at approval",
    )
    state = CorrectionStateField(choices=CorrectionState.choices, read_only=True)
    proposed_by = username_field("proposed_by")
    decided_by = username_field("decided_by")
    certificate = serializers.CharField(
        source="certificate.number", read_only=True, allow_null=True, default=None,
        help_text="Number of the certificate reissued for it; null until applied",
    )

    class Meta:
        model = PostReleaseCorrection
        fields = [
            "id", "lot", "lot_code", "result", "test", "method_code", "replicate", "inputs", "reason", "reported_before",
            "reported", "unit", "mean_reported", "verdict", "derived", "state", "proposed_by", "proposed_at", "decided_by",
            "decided_at", "decision_note", "correction", "certificate",
        ]
        read_only_fields = fields


class PostReleaseCorrectionProposeSerializer(StrictSerializer):
    inputs = serializers.DictField(
        help_text="The corrected raw inputs of the replicate, all of them, as for an entry (values as strings keep their digits)"
    )
    reason = TextField(help_text="Why the released result was wrong; kept with the new version and in the audit trail")


class PostReleaseCorrectionApproveSerializer(StrictSerializer):
    note = TextField(required=False, allow_blank=True, default="", help_text="Optional remark, kept in the audit trail")
    password = password_field()
