"""Lots, their readiness for release, and certificates of analysis."""
from __future__ import annotations

from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.api.serializers.states import LotStateField
from analyses.models import Certificate, Lot, LotOrigin, LotState, Product


class LotSerializer(serializers.ModelSerializer):
    product_code = serializers.CharField(source="product.code", read_only=True)
    state = LotStateField(choices=LotState.choices, read_only=True)
    created_by = username_field("created_by")
    decided_by = username_field("decided_by")
    sample_count = serializers.IntegerField(
        read_only=True, allow_null=True, default=None, help_text="In lists; null in write responses"
    )
    open_investigations = serializers.IntegerField(
        read_only=True, allow_null=True, default=None, help_text="In lists; null in write responses"
    )
    standing = serializers.CharField(
        read_only=True,
        help_text='The state in words, with a standing hold notice: "released, under investigation"',
    )
    under_investigation = serializers.BooleanField(
        read_only=True, help_text="Released with a hold notice from a post-release investigation standing",
    )
    hold_notice_reason = serializers.CharField(
        read_only=True, allow_null=True, help_text="Why the lot is held; null without a hold notice",
    )
    hold_notice_by = username_field("hold_notice_by", help_text="Who issued the hold notice")

    class Meta:
        model = Lot
        fields = [
            "id", "code", "product", "product_code", "origin", "supplier", "customer", "container_ref", "quantity_kg",
            "produced_on", "state", "standing", "decision_reason", "decided_by", "decided_at", "created_by", "created_at",
            "sample_count", "open_investigations", "under_investigation", "hold_notice_reason", "hold_notice_at",
            "hold_notice_by", "hold_notice_investigation",
        ]
        read_only_fields = fields

    def to_representation(self, instance):
        data = super().to_representation(instance)
        data["hold_notice_reason"] = data["hold_notice_reason"] or None  # no notice: null
        return data


class LotCreateSerializer(StrictSerializer):
    code = TextField(max_length=60)
    product = serializers.PrimaryKeyRelatedField(queryset=Product.objects.all())
    origin = serializers.ChoiceField(choices=LotOrigin.choices)
    supplier = TextField(max_length=200, required=False, allow_blank=True, default="", help_text="Required for deliveries")
    customer = TextField(
        max_length=200, required=False, allow_blank=True, default="", help_text="Who the lot is for; named on its certificate"
    )
    container_ref = TextField(
        max_length=100, required=False, allow_blank=True, default="", help_text="Tank or container; required for deliveries"
    )
    quantity_kg = serializers.DecimalField(max_digits=14, decimal_places=3, required=False, allow_null=True)
    produced_on = serializers.DateField(
        required=False, allow_null=True, help_text="Production or delivery date; today or earlier (the lab's date)"
    )


def password_field() -> TextField:
    # optional here so an unknown lot is a 404 first; the service refuses a missing one (400)
    return TextField(
        required=False, allow_blank=True, default="", write_only=True, trim_whitespace=False,
        help_text="The signing user's own password, re-entered: the electronic signature's second sign of intent",
    )


class ReleaseSerializer(StrictSerializer):
    note = TextField(required=False, allow_blank=True, default="", help_text="Optional remark")
    password = password_field()


class RejectSerializer(StrictSerializer):
    reason = TextField(help_text="Why; kept in the audit trail")
    password = password_field()


class ReissueSerializer(StrictSerializer):
    reason = TextField(help_text="Why the certificate is reissued (a corrected customer name, a result corrected after release)")
    customer = TextField(
        max_length=200, required=False, allow_null=True, default=None,
        help_text="The corrected customer name; left out, the lot's customer stays",
    )
    password = password_field()


class ReadinessSerializer(serializers.Serializer):
    lot = serializers.CharField(help_text="Lot code")
    state = serializers.CharField()
    releasable = serializers.BooleanField()
    missing = serializers.ListField(child=serializers.CharField(), help_text="What stands between the lot and its release")
    warnings = serializers.ListField(
        child=serializers.CharField(),
        help_text="Review warnings of the lot's tests (outside a method's scope, blank not run); they do not block release",
    )


# The certificate's content, described for clients; it is returned exactly as stored.
class CertificateLotSerializer(serializers.Serializer):
    code = serializers.CharField()
    origin = serializers.CharField()
    supplier = serializers.CharField(allow_null=True)
    container_ref = serializers.CharField(allow_null=True)
    quantity_kg = serializers.CharField(allow_null=True)
    produced_on = serializers.DateField(allow_null=True)


class CertificateProductSerializer(serializers.Serializer):
    code = serializers.CharField()
    name = serializers.CharField()
    oil_type = serializers.CharField()


class CertificateSpecificationSerializer(serializers.Serializer):
    version = serializers.IntegerField()
    effective_from = serializers.DateField()
    approved_by = serializers.CharField(allow_null=True)
    approved_at = serializers.DateTimeField(allow_null=True)


class CertificateInstrumentSerializer(serializers.Serializer):
    asset_id = serializers.CharField()
    kind = serializers.CharField()
    calibration = serializers.IntegerField(help_text="The calibration that made it usable")
    check = serializers.IntegerField(allow_null=True, help_text="The routine check that made it usable")


class CertificateMeasuredWithSerializer(serializers.Serializer):
    replicate = serializers.IntegerField()
    titrant_lot = serializers.CharField(allow_null=True)
    standardisation = serializers.IntegerField(allow_null=True)
    titrant_concentration = serializers.CharField(allow_null=True, help_text="mol/L, from the standardisation")
    titrant_uncertainty = serializers.CharField(allow_null=True, help_text="its standard uncertainty, mol/L")
    instruments = CertificateInstrumentSerializer(many=True)


class CertificateResultSerializer(serializers.Serializer):
    sample = serializers.CharField(help_text="Sample label")
    sample_kind = serializers.CharField()
    test = serializers.IntegerField()
    method = serializers.CharField()
    method_title = serializers.CharField()
    component = serializers.CharField(
        allow_null=True, required=False,
        help_text="For a method that reports a profile (fatty-acid composition), the component this row gives, "
        "in the trade's shorthand (C18:2) or a derived value (iv_calc); null for a single-value method",
    )
    standards = serializers.ListField(child=serializers.CharField())
    method_versions = serializers.ListField(child=serializers.CharField())
    replicates = serializers.ListField(child=serializers.CharField(), help_text="Each replicate as reported")
    measured_with = CertificateMeasuredWithSerializer(many=True, required=False, help_text="Per replicate (issue 9)")
    reported = serializers.CharField(help_text="Mean of the replicates, ASTM E29 rounded")
    unit = serializers.CharField()
    minimum = serializers.CharField(allow_null=True)
    maximum = serializers.CharField(allow_null=True)
    comparison = serializers.CharField()
    release_critical = serializers.BooleanField()
    verdict = serializers.CharField()
    duplicate_check = serializers.DictField(allow_null=True)
    accepted_by = serializers.CharField(allow_null=True)
    accepted_at = serializers.DateTimeField(allow_null=True)


class CertificateLaboratorySerializer(serializers.Serializer):
    name = serializers.CharField()
    address = serializers.CharField()


class CertificateSpanSerializer(serializers.Serializer):
    first = serializers.DateField()
    last = serializers.DateField()


class CertificateDatesSerializer(serializers.Serializer):
    sampling = CertificateSpanSerializer(allow_null=True)
    receipt = CertificateSpanSerializer(allow_null=True)
    testing = CertificateSpanSerializer(allow_null=True)


class CertificateContentSerializer(serializers.Serializer):
    """Certificates issued before versions and signatures (migration 0015) lack the fields
    marked "since 0015"."""

    certificate_number = serializers.CharField()
    version = serializers.IntegerField(required=False, help_text="since 0015")
    replaces = serializers.CharField(allow_null=True, required=False, help_text="Number of the version this one replaces")
    reissue_reason = serializers.CharField(allow_null=True, required=False)
    laboratory = CertificateLaboratorySerializer(required=False, help_text="since 0015")
    customer = serializers.CharField(allow_null=True, required=False)
    lot = CertificateLotSerializer()
    product = CertificateProductSerializer()
    specifications = CertificateSpecificationSerializer(many=True)
    dates = CertificateDatesSerializer(required=False, help_text="since 0015")
    results = CertificateResultSerializer(many=True)
    decision_rule = serializers.CharField()
    statement_of_conformity = serializers.CharField(required=False, help_text="since 0015")
    released_by = serializers.CharField()
    released_by_name = serializers.CharField(required=False, help_text="since 0015")
    released_at = serializers.DateTimeField()
    signature_meaning = serializers.CharField(required=False, help_text="What the release signature means; since 0015")
    issued_by = serializers.CharField(allow_null=True, required=False, help_text="Who issued this version; since 0015")
    issued_at = serializers.DateTimeField(required=False, help_text="since 0015")


@extend_schema_field(CertificateContentSerializer)
class CertificateContentField(serializers.JSONField):
    """The stored content, passed through untouched."""


class CertificateSerializer(serializers.ModelSerializer):
    lot = serializers.CharField(source="lot.code", read_only=True, help_text="Lot code")
    lot_id = serializers.IntegerField(read_only=True)
    issued_by = username_field("issued_by")
    replaces = serializers.CharField(
        source="replaces.number", read_only=True, allow_null=True, default=None,
        help_text="Number of the version this one replaces; null for the first",
    )
    replaced_by = serializers.SerializerMethodField(help_text="Number of the version that replaced this one; null while current")
    reissue_reason = serializers.SerializerMethodField(help_text="Why this version was issued; null for the first")
    content = CertificateContentField(read_only=True)

    class Meta:
        model = Certificate
        fields = [
            "number", "version", "replaces", "replaced_by", "reissue_reason", "lot", "lot_id", "issued_by", "issued_at",
            "content_sha256", "content",
        ]
        read_only_fields = fields

    @extend_schema_field(serializers.CharField(allow_null=True))
    def get_replaced_by(self, certificate: Certificate) -> str | None:
        newer = getattr(certificate, "replaced_by", None)  # the reverse one-to-one raises when absent
        return newer.number if newer is not None else None

    @extend_schema_field(serializers.CharField(allow_null=True))
    def get_reissue_reason(self, certificate: Certificate) -> str | None:
        return certificate.reissue_reason or None
