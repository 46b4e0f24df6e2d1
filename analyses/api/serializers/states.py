"""The state fields of the domain objects, each one named choice set in the schema."""
from __future__ import annotations

from analyses.api.serializers.common import enum_field_class
from analyses.models import Conclusion, InvestigationKind, InvestigationState, LotState, SampleState, TestState, Verdict

LotStateField = enum_field_class("LotStateEnum", LotState.choices)
SampleStateField = enum_field_class("SampleStateEnum", SampleState.choices)
SampleResumeStateField = enum_field_class("SampleResumeStateEnum", SampleState.choices, blank=True)
TestStateField = enum_field_class("TestStateEnum", TestState.choices)
InvestigationStateField = enum_field_class("InvestigationStateEnum", InvestigationState.choices)
InvestigationKindField = enum_field_class("InvestigationKindEnum", InvestigationKind.choices)
# Not set yet (a test without a result, an open investigation): null, not ""
VerdictField = enum_field_class("VerdictEnum", Verdict.choices, blank_as_null=True)
ConclusionField = enum_field_class("ConclusionEnum", Conclusion.choices, blank_as_null=True)
