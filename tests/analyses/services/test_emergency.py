"""Emergency accounts (issue 8): the service behind manage.py emergency_admin. The command
itself, sign-ins and ending are tested in tests/analyses/management/test_emergency_admin.py."""
from __future__ import annotations

import pytest
from django.contrib.auth import get_user_model

from analyses.audit import audit_chain_verify
from analyses.errors import InvalidInput
from analyses.models import AuditEntry
from analyses.services.emergency import EmergencyAccount, emergency_admin_create
from tests.analyses.concurrency import THREADS, race


@pytest.mark.django_db(transaction=True)
def test_one_name_requested_at_once_makes_one_account_on_postgresql(postgres):
    outcomes = race(lambda i: emergency_admin_create(username="rescue", reason="invented drill", requested_by=f"op{i}"))
    made = [o for o in outcomes if isinstance(o, EmergencyAccount)]
    refused = [o for o in outcomes if isinstance(o, InvalidInput)]
    assert (len(made), len(refused)) == (1, THREADS - 1), outcomes
    with pytest.raises(InvalidInput) as sequential:
        emergency_admin_create(username="rescue", reason="invented drill", requested_by="op")
    assert all(o.fields == sequential.value.fields == {"username": ["user 'rescue' already exists"]} for o in refused)
    user = get_user_model().objects.get(username="rescue")
    assert AuditEntry.objects.filter(object_type="auth.user", object_id=str(user.pk), action="create").count() == 1
    assert audit_chain_verify().ok
