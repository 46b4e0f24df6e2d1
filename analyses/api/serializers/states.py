"""The state fields of the domain objects, each one named choice set in the schema."""
from __future__ import annotations

from analyses.api.serializers.common import enum_field_class
from analyses.models import InvestigationState, LotState, SampleState, TestState

LotStateField = enum_field_class("LotStateEnum", LotState.choices)
SampleStateField = enum_field_class("SampleStateEnum", SampleState.choices)
SampleResumeStateField = enum_field_class("SampleResumeStateEnum", SampleState.choices, blank=True)
TestStateField = enum_field_class("TestStateEnum", TestState.choices)
InvestigationStateField = enum_field_class("InvestigationStateEnum", InvestigationState.choices)
