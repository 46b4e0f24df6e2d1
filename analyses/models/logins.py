"""Lock-outs after repeated failed logins: one row per lock, so the audit trail can name it."""
from __future__ import annotations

from django.db import models


class LockoutScope(models.TextChoices):
    ACCOUNT = "account", "Account"
    ADDRESS = "address", "Client address"


class LoginLockout(models.Model):
    scope = models.CharField(max_length=16, choices=LockoutScope.choices)
    # the username as typed (whether or not such a user exists), or the client address
    subject = models.CharField(max_length=150)
    address = models.CharField(max_length=64, help_text="the client address of the failure that tripped the lock")
    failures = models.PositiveIntegerField()
    locked_at = models.DateTimeField()
    locked_until = models.DateTimeField()

    class Meta:
        ordering = ["-locked_at", "-id"]

    def __str__(self) -> str:
        return f"{self.scope} {self.subject} locked until {self.locked_until:%Y-%m-%d %H:%M:%S}"
