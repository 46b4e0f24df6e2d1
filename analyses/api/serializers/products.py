"""Products (oil grades)."""
from __future__ import annotations

from rest_framework import serializers

from analyses.api.serializers.common import StrictSerializer, TextField, username_field
from analyses.models import Product


class ProductSerializer(serializers.ModelSerializer):
    created_by = username_field("created_by")

    class Meta:
        model = Product
        fields = ["id", "code", "name", "oil_type", "description", "created_by", "created_at"]
        read_only_fields = fields


class ProductCreateSerializer(StrictSerializer):
    code = TextField(max_length=40)
    name = TextField(max_length=200)
    oil_type = TextField(max_length=60, required=False, allow_blank=True, default="")
    description = TextField(required=False, allow_blank=True, default="")
