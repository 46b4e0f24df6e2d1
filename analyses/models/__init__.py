"""The analyses domain models, one module per topic."""
from analyses.models.audit import AuditAction, AuditChainHead, AuditEntry
from analyses.models.certificates import Certificate
from analyses.models.immutable import AppendOnlyModel, ImmutableRowError
from analyses.models.imports import ImportLayout, ImportMapping, ResultImport
from analyses.models.instruments import (
    Calibration,
    CheckKind,
    Instrument,
    InstrumentCheck,
    InstrumentKind,
    ResultInstrument,
)
from analyses.models.investigations import Conclusion, Investigation, InvestigationKind, InvestigationState
from analyses.models.logins import LockoutScope, LoginLockout
from analyses.models.lots import Lot, LotOrigin, LotState
from analyses.models.post_release import CorrectionState, PostReleaseCorrection
from analyses.models.products import Product
from analyses.models.reagents import (
    ReagentKind,
    ReagentLot,
    Standardisation,
    StandardisationStatus,
    TitrantSubstance,
)
from analyses.models.results import Result, ResultStatus
from analyses.models.samples import Sample, SampleKind, SampleState
from analyses.models.stability import (
    Light,
    OffsetUnit,
    PullPoint,
    StabilityStudy,
    StorageCategory,
    StorageCondition,
    StudyAttribute,
    StudyState,
)
from analyses.models.specifications import Comparison, DecisionRule, Specification, SpecificationLine, SpecificationStatus
from analyses.models.trends import (
    Alert,
    AlertSeverity,
    AlertSource,
    AlertState,
    BaselineSource,
    ControlBaseline,
    SeriesKind,
)
from analyses.models.tokens import ApiToken
from analyses.models.uncertainty import ResultUncertainty, TestUncertainty
from analyses.models.testing import (
    OPEN_TEST_STATES,
    WORKABLE_TEST_STATES,
    Priority,
    Test,
    OOS_VERDICTS,
    RELEASABLE_VERDICTS,
    TestState,
    Verdict,
)

__all__ = [
    "ImportLayout",
    "ImportMapping",
    "ResultImport",
    "CorrectionState",
    "PostReleaseCorrection",
    "ApiToken",
    "LockoutScope",
    "LoginLockout",
    "Calibration",
    "CheckKind",
    "Instrument",
    "InstrumentCheck",
    "InstrumentKind",
    "ResultInstrument",
    "ReagentKind",
    "ReagentLot",
    "Standardisation",
    "StandardisationStatus",
    "TitrantSubstance",
    "Light",
    "OffsetUnit",
    "PullPoint",
    "StabilityStudy",
    "StorageCategory",
    "StorageCondition",
    "StudyAttribute",
    "StudyState",
    "Alert",
    "AlertSeverity",
    "AlertSource",
    "AlertState",
    "BaselineSource",
    "ControlBaseline",
    "SeriesKind",
    "OPEN_TEST_STATES",
    "WORKABLE_TEST_STATES",
    "AppendOnlyModel",
    "AuditAction",
    "AuditChainHead",
    "AuditEntry",
    "Certificate",
    "Comparison",
    "Conclusion",
    "ImmutableRowError",
    "Investigation",
    "InvestigationKind",
    "InvestigationState",
    "Lot",
    "LotOrigin",
    "LotState",
    "Priority",
    "Product",
    "Result",
    "ResultStatus",
    "Sample",
    "SampleKind",
    "SampleState",
    "Specification",
    "SpecificationLine",
    "SpecificationStatus",
    "Test",
    "TestState",
    "Verdict",
    "ResultUncertainty",
    "TestUncertainty",
    "DecisionRule",
    "OOS_VERDICTS",
    "RELEASABLE_VERDICTS",
]
