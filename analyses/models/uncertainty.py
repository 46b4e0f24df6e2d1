"""Measurement uncertainty stored with results (GUM, JCGM 100:2008).

``ResultUncertainty``: the budget of one determination, written when the result is entered
(``analyses.services.uncertainty``). ``TestUncertainty``: the budget of the mean of a test's
current replicates, written when the last replicate arrives (and again on a correction); its
``results`` say which replicates it is the mean of, so a stale one is recognised.
The expanded U (k = 2) is a Decimal string: decision rules compare it exactly.
"""
from __future__ import annotations

from django.db import models


class ResultUncertainty(models.Model):
    result = models.OneToOneField("analyses.Result", on_delete=models.PROTECT, related_name="uncertainty")
    budget = models.JSONField(help_text="plugins.uncertainty.Budget.as_dict(): each input's value, u, c, contribution, share")
    combined = models.FloatField(help_text="combined standard uncertainty u_c, in the result's unit")
    coverage_factor = models.PositiveSmallIntegerField(default=2)
    expanded = models.CharField(max_length=40, help_text="U = k u_c, Decimal string, two significant digits rounded up")
    source = models.CharField(max_length=200, help_text="where the inputs' standard uncertainties came from")
    computed_at = models.DateTimeField()

    def __str__(self) -> str:
        return f"U = {self.expanded} (k = {self.coverage_factor}) for result {self.result_id}"


class TestUncertainty(models.Model):
    __test__ = False  # not a pytest test class

    test = models.OneToOneField("analyses.Test", on_delete=models.PROTECT, related_name="uncertainty")
    results = models.JSONField(help_text="ids of the replicates this is the mean of")
    budget = models.JSONField()
    combined = models.FloatField()
    coverage_factor = models.PositiveSmallIntegerField(default=2)
    expanded = models.CharField(max_length=40)
    source = models.CharField(max_length=200)
    computed_at = models.DateTimeField()

    def __str__(self) -> str:
        return f"U = {self.expanded} (k = {self.coverage_factor}) for the mean of test {self.test_id}"
