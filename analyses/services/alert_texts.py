"""What an alert says, in words a QA reader knows: the rule as a sentence (``rule_in_words``),
the product, the control material or lot, the method with its unit, the samples, and an
absolute link to the chart (``OLEOTRACE_BASE_URL``). Alert messages, e-mails and webhook
bodies are all written here, so they say the same thing."""
from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from analyses.models import Alert, AlertSource
from analyses.selectors.chart_links import alert_url, series_chart_url, study_plot_url, study_url
from analyses.selectors.series_names import PointNames, SeriesNames, code_range, method_names
from analyses.trends.rules import rule_in_words, rule_short_name


def _received_range(received: Sequence[str]) -> str:
    days = sorted(str(r)[:10] for r in received if r)
    if not days:
        return ""
    return f", received {days[0]}" if days[0] == days[-1] else f", received {days[0]} to {days[-1]}"


def trend_alert_message(rule: str, side: str, names: SeriesNames, points: Sequence[PointNames], received: Sequence[str]) -> str:
    """"<rule in words>. <method> on <material or product, lots>: n results, samples A to B,
    received d1 to d2. Chart: <link>" for one series."""
    owner = names.owner
    if names.kind != "qc":
        owner += f", lot{'s' if len({p.lot_code for p in points}) > 1 else ''} {code_range(p.lot_code for p in points)}"
    samples = code_range(p.sample_label for p in points)
    chart = series_chart_url(names.key, "ewma" if rule == "ewma" else "shewhart")
    return (
        f"{rule_in_words(rule, side)}. {names.method} on {owner}: {len(points)} result{'s' if len(points) != 1 else ''}, "
        f"sample{'s' if len(points) != 1 else ''} {samples}{_received_range(received)}. Chart: {chart}"
    )


def across_materials_message(rule: str, side: str, method_code: str, materials: Sequence[SeriesNames],
                             points: Sequence[PointNames], received: Sequence[str]) -> str:
    """The across-material rules: every control material involved, each with its chart."""
    title, unit = method_names(method_code)
    method = f"{title} ({unit})" if unit else title
    owners = "; ".join(names.owner for names in materials)
    charts = " ".join(series_chart_url(names.key) for names in materials)
    return (
        f"{rule_in_words(rule, side)}. {method} on {owners}: {len(points)} controls, samples "
        f"{', '.join(p.sample_label for p in points)}{_received_range(received)}. Charts: {charts}"
    )


def stability_alert_message(rule: str, study: Any, method_code: str, detail: str, *, lot: str | None = None,
                            condition: Any = None) -> str:
    """A stability study's alert: "<rule in words>. <method> of product P, lot L, study S at
    <condition>: <detail>. Chart: <plot link>" (the study's link where no one condition is meant)."""
    title, unit = method_names(method_code) if method_code else ("", "")
    method = f"{title} ({unit})" if unit else title
    where = f"product {study.product.code} {study.product.name}" + (f", lot {lot}" if lot else "") + f", study {study.code}"
    if condition is not None:
        where += f" at {condition}"
    if condition is not None and method_code:
        link = f"Chart: {study_plot_url(study.pk, method_code, condition.pk)}"
    else:
        link = f"Study: {study_url(study.pk)}"
    subject = f"{method} of {where}" if method else where
    return f"{rule_in_words(rule)}. {subject}: {detail}. {link}"


def alert_chart_url(alert: Alert) -> str | None:
    """The chart an alert is about, where there is one."""
    if alert.source == AlertSource.TREND and alert.series_key.split(":")[0] in ("qc", "production"):
        return series_chart_url(alert.series_key, "ewma" if alert.rule == "ewma" else "shewhart")
    if alert.source == AlertSource.STABILITY and alert.study_id is not None:
        condition = next((p.get("condition_id") for p in alert.points if isinstance(p, dict) and p.get("condition_id")), None)
        if condition is not None and alert.method_code:
            return study_plot_url(alert.study_id, alert.method_code, condition)
        return study_url(alert.study_id)
    return None


def alert_email(alert: Alert) -> tuple[str, str]:
    """Subject and body of an alert's e-mail. The subject names the rule (its published name
    and code), the method, and the material or product; the body is the message, the links
    to the chart and to the alert, and how to acknowledge it."""
    about = []
    if alert.method_code:
        about.append(method_names(alert.method_code)[0])
    if alert.lot_id is not None and alert.source == AlertSource.TREND:
        about.append(f"control material {alert.lot.code}")
    elif alert.lot_id is not None:
        about.append(f"lot {alert.lot.code}")
    if alert.study_id is not None:
        about.append(f"study {alert.study.code}")
    if alert.product_id is not None:
        about.append(f"{alert.product.code} {alert.product.name}")
    if not about:
        about.append(alert.series_key)
    subject = f"[oleotrace] {alert.severity}: {rule_short_name(alert.rule)} ({alert.rule}) on {', '.join(about)}"
    lines = [alert.message, "", f"Rule: {alert_rule_in_words(alert)}"]
    chart = alert_chart_url(alert)
    if chart and chart not in alert.message:
        lines.append(f"Chart: {chart}")
    lines += [f"Alert: {alert_url(alert.pk)}", f"Acknowledge: POST {alert_url(alert.pk)}acknowledge/ with a comment (QA)"]
    return subject, "\n".join(lines)


def alert_rule_in_words(alert: Alert) -> str:
    return rule_in_words(alert.rule, _side(alert))


def _side(alert: Alert) -> str:
    """The side stored in a trend alert's episode key ("series|rule|side|first")."""
    parts = alert.episode_key.split("|")
    return parts[2] if alert.source == AlertSource.TREND and len(parts) >= 4 else ""
