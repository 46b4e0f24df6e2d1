"""Alert texts and e-mails in QA's words: product, control material or lots, method with its
unit, the rule as a sentence, the samples, and an absolute link to the chart."""
from __future__ import annotations

import pytest
from django.core import mail

from analyses.models import Alert, SampleKind
from analyses.selectors.trend_charts import series_chart
from analyses.services.alert_delivery import alert_notify
from analyses.services.trend_scan import control_baseline_set, trend_scan
from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)
from tests.analyses.series_setup import accepted_series
from tests.factories import LotFactory

MEAN, SD = 0.35, 0.01
BASE = "https://lab.example.invalid"


@pytest.fixture(autouse=True)
def _base_url(settings):
    settings.OLEOTRACE_BASE_URL = BASE
    settings.ALERT_EMAIL_RECIPIENTS, settings.ALERT_WEBHOOK_URL = ["qa@example.invalid"], ""


@pytest.fixture
def qc_alert(users, product):
    material = LotFactory(code="REF-AV-7", product=product)
    key = f"qc:{material.pk}:av"
    control_baseline_set(users["qa"], series_key=key, mean=MEAN, sd=SD)
    # ten results 1.5 s above the mean after two at it: 10-x, and 4-1s (Westgard, references.md, found)
    accepted_series(material, [MEAN, MEAN] + [MEAN + 1.5 * SD] * 10)
    trend_scan()
    return Alert.objects.get(series_key=key, rule="westgard_10_x"), material, key


def test_a_trend_alert_names_material_product_method_rule_samples_and_chart(qc_alert):
    alert, material, key = qc_alert
    message = alert.message
    assert message.startswith("10-x: 10 consecutive results above the mean. Acid value (mg KOH/g) on control material REF-AV-7 "
                              "(product RSO Refined soybean oil): 10 results, samples REF-AV-7-qc_check-av-2 to REF-AV-7-qc_check-av-11 (10)")
    assert "received 2026-01-01" in message
    assert message.endswith(f"Chart: {BASE}/api/trends/series/{key}/chart.png")
    assert "test " not in message and "westgard_" not in message


def test_the_email_names_the_rule_in_its_subject_and_links_chart_and_alert(qc_alert):
    alert, _, key = qc_alert
    mail.outbox.clear()
    assert alert_notify(alert.pk).emailed
    sent = mail.outbox[0]
    assert sent.subject == "[oleotrace] alarm: 10-x (westgard_10_x) on Acid value, control material REF-AV-7, RSO Refined soybean oil"
    assert "Rule: 10-x: 10 consecutive results above the mean" in sent.body
    assert f"{BASE}/api/trends/series/{key}/chart.png" in sent.body
    assert f"Alert: {BASE}/api/alerts/{alert.pk}/" in sent.body


def test_the_alert_api_and_webhook_carry_the_rule_in_words_and_the_chart_link(qc_alert):
    from analyses.api.serializers.alerts import AlertSerializer
    from analyses.services.alerts import alert_payload

    alert, material, key = qc_alert
    hook = alert_payload(alert)
    assert (hook["rule_in_words"], hook["lot"], hook["product"], hook["method"]) == (
        "10-x: 10 consecutive results above the mean", "REF-AV-7", "RSO", "av")
    assert hook["chart_url"] == f"{BASE}/api/trends/series/{key}/chart.png"
    body = AlertSerializer(alert).data
    assert body["rule_in_words"] == "10-x: 10 consecutive results above the mean"
    assert body["chart_url"] == f"{BASE}/api/trends/series/{key}/chart.png"


def test_a_production_alert_names_the_lots_and_an_ewma_alert_links_the_ewma_chart(users, product, specification):
    key = f"production:{product.pk}:av"
    control_baseline_set(users["qa"], series_key=key, mean=MEAN, sd=SD)
    for index in range(12):  # one routine sample per lot, as a plant samples each lot
        lot = LotFactory(code=f"RSO-{index:03d}", product=product)
        accepted_series(lot, [MEAN + (2.5 * SD if index >= 3 else 0)], kind=SampleKind.ROUTINE, first_index=index)
    trend_scan([key])
    nelson = Alert.objects.get(series_key=key, rule="nelson_2")
    assert nelson.message.startswith("Nelson 2: nine results in a row above the mean. Acid value (mg KOH/g) on product RSO "
                                     "Refined soybean oil, lots RSO-003 to RSO-011 (9): 9 results")
    ewma = Alert.objects.filter(series_key=key, rule="ewma").first()
    assert ewma is not None and ewma.message.endswith(f"Chart: {BASE}/api/trends/series/{key}/chart.png?chart=ewma")


def test_chart_data_carry_the_names_in_a_fixed_number_of_queries(users, product, specification, django_assert_num_queries):
    key = f"production:{product.pk}:av"
    control_baseline_set(users["qa"], series_key=key, mean=MEAN, sd=SD)
    lots = [LotFactory(code=f"RSO-{index:03d}", product=product) for index in range(30)]
    for index, lot in enumerate(lots[:5]):
        accepted_series(lot, [MEAN], kind=SampleKind.ROUTINE, first_index=index)
    with django_assert_num_queries(4):  # the results, the baseline, the product, the points' names
        few = series_chart(key)
    for index, lot in enumerate(lots[5:], start=5):
        accepted_series(lot, [MEAN], kind=SampleKind.ROUTINE, first_index=index)
    with django_assert_num_queries(4):
        many = series_chart(key)
    assert len(few["points"]) == 5 and len(many["points"]) == 30
    assert many["title"] == "Production chart: Acid value, mg KOH/g"
    assert many["subtitle"] == "product RSO Refined soybean oil · lots RSO-000 to RSO-029 (30) · Nelson rules"
    assert many["points"][0]["label"] == "RSO-000-routine-av-0" and many["points"][0]["lot"] == "RSO-000"
    assert many["specification"] == {"lower": None, "upper": 1000.0}  # the series_setup line: maximum "1000"
    assert many["method"] == {"code": "av", "title": "Acid value", "unit": "mg KOH/g"}


def test_a_stability_alert_names_product_lot_study_condition_method_and_its_plot():
    from types import SimpleNamespace

    from analyses.services.alert_texts import stability_alert_message

    study = SimpleNamespace(pk=4, code="ST-1", product=SimpleNamespace(code="RSO", name="Refined soybean oil"))
    condition = type("Condition", (), {"pk": 9, "__str__": lambda self: "40 °C, dark"})()
    text = stability_alert_message("pull_out_of_limit", study, "pv", "10.4 after 3.00 months is beyond the limit 10",
                                   lot="L-100", condition=condition)
    assert text == (
        "pull beyond limit: a stability pull result beyond the study's acceptance limit. Peroxide value (meq O2/kg) of "
        "product RSO Refined soybean oil, lot L-100, study ST-1 at 40 °C, dark: 10.4 after 3.00 months is beyond the limit 10. "
        f"Chart: {BASE}/api/stability-studies/4/plot.png?method=pv&condition=9"
    )
    overdue = stability_alert_message("pull_overdue", study, "", "the 3 months pull was due on 2026-04-01 and is not finished",
                                      lot="L-100", condition=condition)
    assert overdue.endswith(f"Study: {BASE}/api/stability-studies/4/")
