"""The scheduler's own account: the actor of work that beat starts on its own."""
from __future__ import annotations

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group

from analyses.roles import LAB_MANAGER

SCHEDULER_USERNAME = "scheduler"


def scheduler_actor():
    """A user who cannot log in and holds the lab manager's permissions, so scheduled
    pulls are registered and received like any other sample, with audit entries."""
    user_model = get_user_model()
    user, made = user_model.objects.get_or_create(
        username=SCHEDULER_USERNAME, defaults={"first_name": "Scheduled", "last_name": "work"}
    )
    if made:
        user.set_unusable_password()
        user.save(update_fields=["password"])
        group, _ = Group.objects.get_or_create(name=LAB_MANAGER)
        user.groups.add(group)
    return user
