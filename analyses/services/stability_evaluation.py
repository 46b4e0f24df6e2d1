"""The numbers of a stability evaluation: kinetics, ICH Q1E shelf life and Arrhenius.

Reads the accepted pull results of a study and returns the evaluation as a JSON-ready
dict, plus alert drafts; ``stability.stability_study_evaluate`` stores both. The study's
ICH Q1E Appendix A branch (``analyses/stability/extrapolation.py``: storage category and
significant change at the accelerated and intermediate conditions) caps every shelf life
the evaluation reports as supported, and is named in the output with its reason.
"""
from __future__ import annotations

import math
from dataclasses import asdict
from typing import TYPE_CHECKING, Any

from analyses.errors import InvalidInput
from analyses.models import AlertSource, StabilityStudy
from analyses.selectors.stability import study_extrapolation, study_results
from analyses.services.alert_texts import stability_alert_message
from analyses.services.alerts import AlertDraft
from plugins.contract import float_as_decimal, stored_exact

if TYPE_CHECKING:
    import pandas as pd

    from analyses.stability.extrapolation import ExtrapolationBranch

# The fits (numpy, scipy, statsmodels behind analyses.stability) are imported inside the
# functions: the URLconf imports this module through the stability services.


def _beyond(value_exact: str, value: float, attribute) -> bool:
    """Whether a pull result is beyond the attribute's limits, decided in decimal arithmetic on
    the value its test is judged on (``pull_judging.test_verdict``): its exact decimal, or for a
    test stored before exact values were kept, its float through the documented 15-digit guard."""
    exact = stored_exact(value_exact, value)
    return (attribute.maximum is not None and exact > float_as_decimal(attribute.maximum)) or (
        attribute.minimum is not None and exact < float_as_decimal(attribute.minimum)
    )


def condition_evaluation(rows: pd.DataFrame, limit: float, side: str, branch: ExtrapolationBranch) -> dict[str, Any]:
    """Kinetics and ICH Q1E shelf life of one attribute under one condition, the shelf life
    capped at what the study's Appendix A branch allows beyond this condition's data."""
    from analyses.stability.kinetics import kinetics_fit
    from analyses.stability.shelf_life import shelf_life_estimate

    out: dict[str, Any] = {"n": len(rows), "last_months": float(rows["months"].max())}
    try:
        kinetics = kinetics_fit(rows["months"], rows["value"])
        out["kinetics"] = {
            "zero_order": asdict(kinetics.zero_order),
            "first_order": asdict(kinetics.first_order) if kinetics.first_order else None,
            "better": kinetics.better,
            "criterion": kinetics.criterion,
        }
    except InvalidInput as exc:
        out["kinetics"] = None
        out["kinetics_note"] = exc.detail
    try:
        result = shelf_life_estimate(
            rows["months"], rows["value"], limit, limit_side=side, lots=rows["lot"].tolist(),
            extrapolation_factor=branch.factor or 1.0, extrapolation_months=branch.months_beyond,
        )
        out["shelf_life"] = {
            "months": result.shelf_life,
            "estimate_months": result.estimate,
            "governing_lot": result.governing_lot,
            "pooling": result.pooling.model,
            "slopes_p": result.pooling.slopes_p,
            "intercepts_p": result.pooling.intercepts_p,
            "last_time_months": result.last_time,
            "extrapolation_cap_months": result.extrapolation_cap,
            "extrapolated": result.extrapolated,
            "capped": result.capped,
        }
    except InvalidInput as exc:
        out["shelf_life"] = None
        out["shelf_life_note"] = exc.detail
    return out


def arrhenius_evaluation(
    per_condition: list[dict[str, Any]], storage_c: float, limit: float, side: str, branch: ExtrapolationBranch
) -> dict[str, Any] | None:
    """Arrhenius from the zero-order rates of the dark conditions (light adds another
    pathway); None with fewer than two temperatures whose rate moves toward the limit.
    Its shelf life is checked against what ``branch`` allows beyond X, the period covered
    by the long-term condition's data (not the last pull at any condition: accelerated
    pulls say nothing about how long the oil has been watched at its storage temperature)."""
    from analyses.stability.arrhenius import arrhenius_fit, arrhenius_shelf_life

    sign = 1.0 if side == "upper" else -1.0
    points = [
        (c["temperature_c"], sign * c["kinetics"]["zero_order"]["slope"], c["kinetics"]["zero_order"]["initial_value"])
        for c in per_condition
        if c["light"] == "dark" and c.get("kinetics") and sign * c["kinetics"]["zero_order"]["slope"] > 0
    ]
    if len({t for t, _, _ in points}) < 2:
        return None
    fit = arrhenius_fit([t for t, _, _ in points], [k for _, k, _ in points], storage_c)
    out: dict[str, Any] = {
        "activation_energy_kj_per_mol": fit.activation_energy / 1000,
        "activation_energy_se_kj_per_mol": None if fit.activation_energy_se is None else fit.activation_energy_se / 1000,
        "q10": fit.q10,
        "rate_per_month": sign * fit.rate,
        "rate_interval": None if fit.rate_lower is None else [sign * fit.rate_lower, sign * fit.rate_upper],
        "temperatures_c": [t for t, _, _ in points],
        "extrapolated": fit.extrapolated,
    }
    # Same oil at time 0 under every condition: start from the mean fitted initial value.
    initial = sum(c0 for _, _, c0 in points) / len(points)
    if side == "upper" and initial < limit:
        predicted = arrhenius_shelf_life(fit, initial, limit)
        out["shelf_life_months"] = predicted.time
        out["shelf_life_interval_months"] = None if predicted.lower is None else [predicted.lower, predicted.upper]
        # ICH Q1E's limit on extrapolating in time applies to this prediction too
        long_term = [c["last_months"] for c in per_condition if c.get("role") == "long_term" and c.get("n")]
        x = max(long_term, default=0.0)
        out["long_term_months"] = x
        out["allowed_months"] = branch.limit(x)
        out["time_extrapolated"] = predicted.time > branch.limit(x)
    return out


def json_ready(value: Any) -> Any:
    """NaN and infinities become None: JSON (and PostgreSQL's jsonb) has no such numbers."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: json_ready(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_ready(v) for v in value]
    return value


def study_evaluation(study: StabilityStudy) -> tuple[dict[str, Any], list[AlertDraft]]:
    results = study_results(study)
    conditions = list(study.conditions.all())
    extrapolation = study_extrapolation(study, results)
    branch = extrapolation.branch
    drafts: list[AlertDraft] = []
    attributes_out = []
    predictions, supports = [], []
    for attribute in study.attributes.all():
        limit, side = attribute.shelf_life_limit
        rows = results[results["method_code"] == attribute.method_code]
        changes = extrapolation.changes.get(attribute.method_code, {})
        per_condition = []
        for condition in conditions:
            subset = rows[rows["condition_id"] == condition.pk]
            entry = {
                "condition_id": condition.pk, "temperature_c": condition.temperature_c, "light": condition.light,
                "role": extrapolation.roles[condition.pk],
            }
            entry |= condition_evaluation(subset, limit, side, branch) if len(subset) else {"n": 0}
            if condition.pk in changes:
                entry["significant_change"] = asdict(changes[condition.pk])
            per_condition.append(entry)
        arrhenius = arrhenius_evaluation(per_condition, study.storage_temperature_c, limit, side, branch)
        predicted, supported, basis = _predicted_shelf_life(per_condition, arrhenius, study.storage_temperature_c)
        long_term = max((c["last_months"] for c in per_condition if c["role"] == "long_term" and c["n"]), default=None)
        if supported is not None:  # already capped by the regression; stated here as the rule it is
            supported = min(supported, branch.limit(long_term))
        attributes_out.append({
            "method_code": attribute.method_code, "limit": limit, "limit_side": side,
            "significant_change_amount": attribute.significant_change,
            # X, and the longest shelf life the branch allows on it
            "long_term_months": long_term,
            "extrapolation_limit_months": None if long_term is None else branch.limit(long_term),
            "conditions": per_condition,
            "arrhenius": arrhenius, "predicted_shelf_life_months": predicted,
            "supported_shelf_life_months": supported, "basis": basis,
        })
        if predicted is not None:
            predictions.append(predicted)
        if supported is not None:
            supports.append(supported)
        if predicted is not None and predicted < study.claimed_shelf_life_months:
            drafts.append(AlertDraft(
                source=AlertSource.STABILITY, rule="shelf_life_short", series_key=f"stability:{study.code}",
                episode_key=f"stability:{study.code}|shelf_life_short|{attribute.method_code}",
                message=stability_alert_message(
                    "shelf_life_short", study, attribute.method_code,
                    f"predicted shelf life {predicted:.1f} months ({basis}), short of the claimed {study.claimed_shelf_life_months:g} months",
                ),
                points=[{"predicted_months": predicted, "claimed_months": study.claimed_shelf_life_months}],
                method_code=attribute.method_code, product_id=study.product_id, study_id=study.pk,
            ))
        for row in rows.itertuples(index=False):
            if _beyond(row.value_exact, row.value, attribute):
                drafts.append(AlertDraft(
                    source=AlertSource.STABILITY, rule="pull_out_of_limit", series_key=f"stability:{study.code}",
                    episode_key=f"stability:{study.code}|pull_out_of_limit|test{row.test_id}",
                    message=stability_alert_message(
                        "pull_out_of_limit", study, attribute.method_code,
                        f"{row.value:.4g} after {row.months:.2f} months is beyond the limit {limit:g}",
                        lot=row.lot, condition=next(c for c in conditions if c.pk == row.condition_id),
                    ),
                    points=[{"test_id": int(row.test_id), "value": float(row.value), "months": float(row.months)}],
                    method_code=attribute.method_code, product_id=study.product_id, study_id=study.pk,
                ))
    evaluation = {
        "study": study.code,
        "claimed_shelf_life_months": study.claimed_shelf_life_months,
        "storage_temperature_c": study.storage_temperature_c,
        "storage_category": study.storage_category,
        # the ICH Q1E Appendix A branch the data put the study on, and why
        "extrapolation": extrapolation.as_dict({c.pk: c for c in conditions}),
        "predicted_shelf_life_months": min(predictions) if predictions else None,
        # what the data support so far: the ICH Q1E estimate capped at what the branch allows
        "supported_shelf_life_months": min(supports) if supports else None,
        "attributes": attributes_out,
    }
    return json_ready(evaluation), drafts


def _predicted_shelf_life(
    per_condition: list[dict[str, Any]], arrhenius: dict[str, Any] | None, storage_c: float
) -> tuple[float | None, float | None, str]:
    """(predicted, supported, basis). At the storage condition the prediction is the ICH Q1E
    crossing itself and "supported" is what the data support so far (the crossing capped at
    what the ICH Q1E branch allows); without data there, the Arrhenius prediction."""
    at_storage = [c["shelf_life"] for c in per_condition if c.get("role") == "long_term" and c.get("shelf_life")]
    if at_storage:
        governing = min(at_storage, key=lambda sl: sl["months"])
        supported = governing["months"]
        if governing["estimate_months"] is None:
            return None, supported, "ICH Q1E regression at the storage condition: limit not reached within the horizon"
        note = ", beyond the last result" if governing["extrapolated"] else ""
        return governing["estimate_months"], supported, f"ICH Q1E regression at the storage condition{note}"
    if arrhenius and arrhenius.get("shelf_life_months") is not None:
        note = ", extrapolated beyond the studied temperatures" if arrhenius["extrapolated"] else ""
        note += ", extrapolated in time beyond what ICH Q1E allows" if arrhenius.get("time_extrapolated") else ""
        return arrhenius["shelf_life_months"], None, f"Arrhenius prediction at {storage_c:g} °C{note}"
    return None, None, "not enough data"
