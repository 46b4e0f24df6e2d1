"""Query-string filters of the list endpoints. A bad value (unknown state, product id that
does not exist, a date that is not one) is a 400 naming the parameter."""
from __future__ import annotations

import django_filters as filters
from django.contrib.auth import get_user_model

from analyses.roles import ROLES
from analyses.selectors.users import users_holding
from analyses.models import (
    Investigation,
    InvestigationKind,
    InvestigationState,
    Lot,
    LotOrigin,
    LotState,
    Product,
    Sample,
    SampleKind,
    SampleState,
    Specification,
    SpecificationStatus,
    Test,
    TestState,
)


def _products(request):
    return Product.objects.all()


def _lots(request):
    return Lot.objects.all()


def _samples(request):
    return Sample.objects.all()


def _users(request):
    return get_user_model().objects.all()


class SpecificationFilter(filters.FilterSet):
    product = filters.ModelChoiceFilter(queryset=_products)
    status = filters.ChoiceFilter(choices=SpecificationStatus.choices)

    class Meta:
        model = Specification
        fields = ["product", "status"]


class LotFilter(filters.FilterSet):
    state = filters.ChoiceFilter(choices=LotState.choices)
    product = filters.ModelChoiceFilter(queryset=_products)
    origin = filters.ChoiceFilter(choices=LotOrigin.choices)
    code = filters.CharFilter(lookup_expr="icontains", help_text="Part of the lot code")
    created = filters.DateFromToRangeFilter(
        field_name="created_at", help_text="created_after / created_before: dates, inclusive"
    )
    produced_on = filters.DateFromToRangeFilter(help_text="produced_on_after / produced_on_before: dates, inclusive")

    class Meta:
        model = Lot
        fields = ["state", "product", "origin", "code"]


class SampleFilter(filters.FilterSet):
    state = filters.ChoiceFilter(choices=SampleState.choices)
    kind = filters.ChoiceFilter(choices=SampleKind.choices)
    lot = filters.ModelChoiceFilter(queryset=_lots)
    product = filters.ModelChoiceFilter(field_name="lot__product", queryset=_products)
    label = filters.CharFilter(lookup_expr="icontains", help_text="Part of the sample label")
    registered = filters.DateFromToRangeFilter(
        field_name="registered_at", help_text="registered_after / registered_before: dates, inclusive"
    )
    received = filters.DateFromToRangeFilter(
        field_name="received_at", help_text="received_after / received_before: dates, inclusive"
    )

    class Meta:
        model = Sample
        fields = ["state", "kind", "lot", "product", "label"]


class TestFilter(filters.FilterSet):
    __test__ = False  # not a pytest test class

    state = filters.ChoiceFilter(choices=TestState.choices)
    method = filters.CharFilter(field_name="method_code", help_text="Method code, e.g. av")
    sample = filters.ModelChoiceFilter(queryset=_samples, help_text="Sample id")
    lot = filters.ModelChoiceFilter(field_name="sample__lot", queryset=_lots)
    product = filters.ModelChoiceFilter(field_name="sample__lot__product", queryset=_products)
    assignee = filters.ModelChoiceFilter(queryset=_users, help_text="User id")
    # a ChoiceFilter, not a BooleanFilter: that one ignores values it cannot read ("perhaps")
    overdue = filters.TypedChoiceFilter(
        field_name="is_overdue", choices=(("true", "true"), ("false", "false")), coerce=lambda value: value == "true",
        help_text="Open and due before today",
    )
    due_on = filters.DateFromToRangeFilter(help_text="due_on_after / due_on_before: dates, inclusive")
    created = filters.DateFromToRangeFilter(
        field_name="created_at", help_text="created_after / created_before: dates, inclusive"
    )

    class Meta:
        model = Test
        fields = ["state", "method", "sample", "lot", "product", "assignee", "overdue"]


class InvestigationFilter(filters.FilterSet):
    state = filters.ChoiceFilter(choices=InvestigationState.choices)
    kind = filters.ChoiceFilter(choices=InvestigationKind.choices, help_text="release or post_release")
    lot = filters.ModelChoiceFilter(queryset=_lots)
    product = filters.ModelChoiceFilter(field_name="lot__product", queryset=_products)
    method = filters.CharFilter(field_name="test__method_code", help_text="Method code, e.g. av")
    opened = filters.DateFromToRangeFilter(
        field_name="opened_at", help_text="opened_after / opened_before: dates, inclusive"
    )

    class Meta:
        model = Investigation
        fields = ["state", "kind", "lot", "product", "method"]


class UserFilter(filters.FilterSet):
    role = filters.ChoiceFilter(
        choices=[(role, role) for role in ROLES], method="filter_role",
        help_text="Only users holding this role, e.g. analyst (whom tests can be assigned to)",
    )

    class Meta:
        model = get_user_model()
        fields = ["role"]

    def filter_role(self, queryset, name, value):
        return users_holding(queryset, value) if value else queryset
