"""Django admin: a window onto the records, never a way round the services. Every model is
view-only here, for superusers too, users and groups included; changes go through the services,
which check roles and write the audit trail (users and roles: ``manage.py user_roles``)."""
from __future__ import annotations

from django.contrib import admin
from django.contrib.auth import get_user_model
from django.contrib.auth.admin import GroupAdmin, UserAdmin
from django.contrib.auth.models import Group

from analyses.models import (
    ApiToken,
    ImportMapping,
    PostReleaseCorrection,
    ResultImport,
    AuditEntry,
    Calibration,
    Certificate,
    Instrument,
    InstrumentCheck,
    ReagentKind,
    ReagentLot,
    Standardisation,
    Investigation,
    LoginLockout,
    Lot,
    Product,
    Result,
    Sample,
    Specification,
    SpecificationLine,
    Test,
)


class ViewOnly:
    """No add, change or delete for anyone; Django's superuser shortcut does not reach here."""

    def has_add_permission(self, request, obj=None):
        return False

    def has_change_permission(self, request, obj=None):
        return False

    def has_delete_permission(self, request, obj=None):
        return False


class ViewOnlyAdmin(ViewOnly, admin.ModelAdmin):
    pass


class UserViewOnlyAdmin(ViewOnly, UserAdmin):
    pass


class GroupViewOnlyAdmin(ViewOnly, GroupAdmin):
    pass


for model, model_admin in ((get_user_model(), UserViewOnlyAdmin), (Group, GroupViewOnlyAdmin)):
    if admin.site.is_registered(model):
        admin.site.unregister(model)
    admin.site.register(model, model_admin)


@admin.register(ApiToken)
class ApiTokenAdmin(ViewOnlyAdmin):
    """Which tokens exist; the hash is not shown (it is no use to a reader)."""

    list_display = ("name", "user", "token_key", "created", "expiry", "last_used_at")
    fields = list_display
    search_fields = ("name", "token_key", "user__username")


@admin.register(LoginLockout)
class LoginLockoutAdmin(ViewOnlyAdmin):
    list_display = ("locked_at", "scope", "subject", "address", "failures", "locked_until")
    list_filter = ("scope",)


@admin.register(AuditEntry)
class AuditEntryAdmin(ViewOnlyAdmin):
    list_display = ("sequence", "at", "actor_username", "action", "object_type", "object_id", "reason")
    list_filter = ("action", "object_type")
    search_fields = ("object_id", "actor_username", "reason")
    ordering = ("-sequence",)


@admin.register(Sample)
class SampleAdmin(ViewOnlyAdmin):
    list_display = ("label", "lot", "kind", "state", "received_at", "storage_place")
    list_filter = ("state", "kind")
    search_fields = ("label", "lot__code")


@admin.register(Test)
class TestAdmin(ViewOnlyAdmin):
    list_display = ("id", "sample", "method_code", "state", "priority", "due_on", "assignee", "reported", "verdict")
    list_filter = ("state", "method_code")


@admin.register(Result)
class ResultAdmin(ViewOnlyAdmin):
    list_display = ("id", "test", "replicate", "version", "status", "reported", "unit", "verdict", "entered_by")
    list_filter = ("status", "method_code")


@admin.register(Lot)
class LotAdmin(ViewOnlyAdmin):
    list_display = ("code", "product", "origin", "state", "supplier", "container_ref")
    list_filter = ("state", "origin")
    search_fields = ("code", "supplier")


@admin.register(Standardisation)
class StandardisationAdmin(ViewOnlyAdmin):
    list_display = ("id", "lot", "primary_standard", "concentration", "uncertainty", "performed_at", "valid_until", "status")
    list_filter = ("status", "primary_standard")


@admin.register(Instrument)
class InstrumentAdmin(ViewOnlyAdmin):
    list_display = ("asset_id", "kind", "location", "check_every_days")
    list_filter = ("kind",)
    search_fields = ("asset_id", "location")


for model in (
    Product, Specification, SpecificationLine, Investigation, Certificate, ReagentKind, ReagentLot, Calibration,
    InstrumentCheck, PostReleaseCorrection, ImportMapping, ResultImport,
):
    admin.site.register(model, ViewOnlyAdmin)
