"""Loading the invented demo refinery (fixtures/demo_refinery.json) through the services.

Everything is built the way the lab would do it, by the role that may do it, so the rules
hold and the audit trail has every step. Running it again skips what exists (users,
products, lots by their codes). INVENTED DEMO DATA: no real company or measurement.
"""
from __future__ import annotations

import datetime as dt
import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from django.conf import settings
from django.contrib.auth import get_user_model
from django.db import transaction
from django.utils import timezone

from analyses.models import ApiToken, Investigation, Lot, Product, Sample, Test
from analyses.roles import roles_ensure
from analyses.services.assignments import test_assign_bulk
from analyses.services.demo_composition import demo_composition_load
from analyses.services.demo_bench import demo_bench_load, demo_bench_show, demo_trace
from analyses.services.demo_monitoring import demo_monitoring_load
from analyses.services.emergency import superuser_flags_clear
from analyses.services.investigations import investigation_close
from analyses.services.lots import lot_create, lot_reject, lot_release
from analyses.services.post_release import retain_tests_add
from analyses.services.products import product_create
from analyses.services.results import result_correct, result_record
from analyses.services.review import test_accept, test_send_back
from analyses.services.samples import sample_cancel, sample_hold, sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from analyses.services.tokens import token_issue, token_revoke

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_refinery.json"
DEMO_TOKEN_NAME = "demo"
Log = Callable[[str], None]


@dataclass(frozen=True)
class DemoLogin:
    username: str
    role: str
    token: str  # empty when the demo token was issued on an earlier run (a token is shown once)


@dataclass
class DemoSummary:
    company: str
    password: str
    logins: list[DemoLogin] = field(default_factory=list)
    created: dict[str, int] = field(default_factory=lambda: {"users": 0, "products": 0, "lots": 0, "samples": 0})


def demo_data(path: Path | str | None = None) -> dict[str, Any]:
    return json.loads(Path(path or DEMO_FILE).read_text(encoding="utf-8"))


class _Lab:
    """The demo's people and products, and the steps each scenario is made of."""

    def __init__(
        self, users: Mapping[str, Any], products: Mapping[str, Mapping[str, Any]], bench: Mapping[str, Any], *, password: str
    ):
        self.password = password  # the demo users' password, re-entered where QA signs
        self.bench = bench
        self.users = users
        self.products = products

    @property
    def manager(self):
        return self.users["manager"]

    def receive(self, sample: Sample, days_ago: int) -> Sample:
        received_at = timezone.now() - dt.timedelta(days=days_ago)
        return sample_receive(
            self.manager, sample, condition="sealed, clean, ambient", storage_place="Sample store, shelf B2",
            received_at=received_at,
        )

    def tests(self, sample: Sample) -> list[Test]:
        return list(sample.tests.exclude(state__in=["invalidated", "cancelled"]).order_by("id"))

    def assign(self, tests: list[Test], who: str) -> None:
        test_assign_bulk(self.manager, tests, assignee=self.users[who])

    def enter(self, test: Test, who: str, product: str, *, failing: bool = False) -> None:
        data = self.products[product]
        pair = (data["failing_inputs"] if failing else data["passing_inputs"])[test.method_code]
        for inputs in pair:
            result_record(self.users[who], test, **demo_trace(self.bench, test.method_code, inputs))

    def failing_method(self, product: str) -> str:
        return next(iter(self.products[product]["failing_inputs"]))

    def complete(self, sample: Sample, product: str, *, enterer: str = "analyst", reviewer: str = "analyst2",
                 failing: str | None = None) -> None:
        tests = self.tests(sample)
        self.assign(tests, enterer)
        for test in tests:
            self.enter(test, enterer, product, failing=test.method_code == failing)
            test_accept(self.users[reviewer], test)

    def oos(self, sample: Sample, product: str, days_ago: int) -> Investigation:
        self.receive(sample, days_ago)
        self.complete(sample, product, failing=self.failing_method(product))
        return Investigation.objects.get(test__sample=sample, state="open")

    def after_release(self, lot: Lot, product: str, spec: Mapping[str, Any]) -> Investigation | None:
        """A retained sample of the released ``lot`` tested after release (issue 13); with
        ``failing``, its result is out of specification and a post-release investigation opens."""
        sample = Sample.objects.get(label=spec["sample"], lot=lot)
        tests = retain_tests_add(self.manager, sample, methods=spec["methods"], reason=spec["reason"])
        self.complete(sample, product, failing=spec.get("failing"))
        return Investigation.objects.filter(test__in=tests, state="open").first()

    def run(self, scenario: str, sample: Sample, product: str, spec: Mapping[str, Any]) -> None:
        days = int(spec.get("received_days_ago", 0))
        reason = spec.get("reason", "")
        qa = self.users["qa"]
        if scenario == "registered":
            return
        if scenario == "cancelled":
            sample_cancel(self.manager, sample, reason=reason)
            return
        if scenario in ("oos_open", "oos_confirmed", "oos_lab_error"):
            investigation = self.oos(sample, product, days)
            if scenario == "oos_confirmed":
                investigation_close(qa, investigation, conclusion="confirmed", findings=reason, password=self.password)
            elif scenario == "oos_lab_error":
                closed = investigation_close(qa, investigation, conclusion="lab_error", findings=reason)
                self.assign([closed.retest], "analyst2")
                self.enter(closed.retest, "analyst2", product)
                test_accept(self.users["analyst"], closed.retest)
            return
        self.receive(sample, days)
        tests = self.tests(sample)
        if scenario == "received":
            return
        if scenario == "on_hold":
            sample_hold(qa, sample, reason=reason)
        elif scenario == "testing_complete":
            self.complete(sample, product)
        elif scenario == "in_testing":
            self.assign(tests, "analyst")
            inputs = self.products[product]["passing_inputs"][tests[0].method_code][0]
            result_record(self.users["analyst"], tests[0], **demo_trace(self.bench, tests[0].method_code, inputs))
        elif scenario == "overdue":
            self.assign(tests, "analyst2")
        elif scenario == "sent_back":
            self.assign(tests, "analyst")
            self.enter(tests[0], "analyst", product)
            test_send_back(self.users["analyst2"], tests[0], reason=reason)
        elif scenario == "corrected":
            self.assign(tests, "analyst")
            for test in tests:
                self.enter(test, "analyst", product)
            first = tests[0].results.get(replicate=1, status="current")
            second_inputs = self.products[product]["passing_inputs"][tests[0].method_code][1]
            result_correct(self.users["analyst"], first, inputs=demo_trace(self.bench, first.method_code, second_inputs)["inputs"], reason=reason)
        else:
            raise ValueError(f"unknown demo scenario {scenario!r}")


def _demo_token(user, new_token: bool) -> str:
    """A new "demo" token for ``user`` unless one exists (``new_token``: replace it)."""
    # an expired one is removed by token_issue
    existing = ApiToken.objects.filter(user=user, name=DEMO_TOKEN_NAME, expiry__gt=timezone.now()).first()
    if existing is not None and new_token:
        token_revoke(user, existing.pk, reason="demo token replaced by demo_load --new-tokens")
    elif existing is not None:
        return ""
    return token_issue(user, name=DEMO_TOKEN_NAME).secret


def _users(data: Mapping[str, Any], summary: DemoSummary, log: Log, new_tokens: bool = False) -> dict[str, Any]:
    groups = roles_ensure()
    user_model = get_user_model()
    users: dict[str, Any] = {}
    for entry in data["users"]:
        user, created = user_model.objects.get_or_create(
            username=entry["username"],
            defaults={
                "first_name": entry.get("first_name", ""),
                "last_name": entry.get("last_name", ""),
                "email": f"{entry['username']}@marrowvale.invalid",
            },
        )
        if created:
            user.set_password(data["demo_password"])  # no demo user is staff or superuser (issue 8)
            user.save()
            summary.created["users"] += 1
        elif user.is_superuser or user.is_staff:  # made by an older demo, which made its admin a superuser
            user = superuser_flags_clear(user, reason="demo users are never superusers (issue 8)")
            log(f"  user {user.username}: superuser and staff flags removed")
        user.groups.add(groups[entry["role"]])
        summary.logins.append(DemoLogin(user.username, entry["role"], _demo_token(user, new_tokens)))
        users[user.username] = user
        log(f"  user {user.username:<9} ({entry['role']}): {'created' if created else 'exists, kept'}")
    return users


def _products(data: Mapping[str, Any], users: Mapping[str, Any], summary: DemoSummary, log: Log) -> None:
    for entry in data["products"]:
        if Product.objects.filter(code=entry["code"]).exists():
            log(f"  product {entry['code']}: exists, skipped")
            continue
        with transaction.atomic():
            product = product_create(users["manager"], code=entry["code"], name=entry["name"], oil_type=entry["oil_type"])
            draft = specification_create(
                users["manager"], product, effective_from=entry["effective_from"], lines=entry["lines"],
                note="Built from the method plugins' Codex default limits (INVENTED DEMO DATA)",
            )
            specification_approve(users["qa"], draft)
        summary.created["products"] += 1
        log(f"  product {product.code} ({product.name}): created, specification v1 approved with {len(entry['lines'])} lines")


def _lots(data: Mapping[str, Any], lab: _Lab, summary: DemoSummary, log: Log) -> None:
    for entry in data["lots"]:
        if Lot.objects.filter(code=entry["code"]).exists():
            log(f"  lot {entry['code']}: exists, skipped")
            continue
        with transaction.atomic():  # a lot and its story appear whole, or not at all
            product = Product.objects.get(code=entry["product"])
            lot = lot_create(
                lab.manager, code=entry["code"], product=product, origin=entry["origin"],
                supplier=entry.get("supplier", ""), customer=entry.get("customer", ""),
                container_ref=entry.get("container_ref", ""),
                quantity_kg=entry.get("quantity_kg"),
                produced_on=timezone.localdate() - dt.timedelta(days=10),
            )
            for spec in entry["samples"]:
                # registered when it arrived, so that its receipt is not before its registration
                arrived = timezone.now() - dt.timedelta(days=int(spec.get("received_days_ago", 0)))
                sample = sample_register(
                    lab.manager, lot, label=spec["label"], kind=spec.get("kind", "routine"), registered_at=arrived
                )
                lab.run(spec["scenario"], sample, entry["product"], spec)
                summary.created["samples"] += 1
            if entry.get("decision") == "release":
                # signed as QA signs: with the demo user's password re-entered
                lot_release(lab.users["qa"], lot, password=data["demo_password"])
            finding = None
            if entry.get("after_release"):
                finding = lab.after_release(lot, entry["product"], entry["after_release"])
            elif entry.get("decision") == "reject":
                lot_reject(
                    lab.users["qa"], lot, reason=entry.get("decision_reason", "rejected"), password=data["demo_password"]
                )
        lot.refresh_from_db()
        summary.created["lots"] += 1
        scenarios = ", ".join(s["scenario"] for s in entry["samples"])
        log(f"  lot {lot.code} ({product.code}, {lot.origin}): created with samples [{scenarios}]; lot {lot.state}")
        if finding is not None:
            log(f"  lot {lot.code}: retained sample tested after release, out of specification: "
                f"post-release investigation {finding.pk} open, lot still {lot.standing}")


def demo_load(*, path: Path | str | None = None, log: Log | None = None, new_tokens: bool = False) -> DemoSummary:
    """Load the invented demo refinery; idempotent. ``log`` receives one line per step. Each demo
    user gets an API token named "demo" once; ``new_tokens`` replaces it (to show a new one)."""
    log = log or (lambda line: None)
    data = demo_data(path)
    summary = DemoSummary(company=data["company"], password=data["demo_password"])
    log(f"Users and roles for {summary.company}:")
    users = _users(data, summary, log, new_tokens)
    log("Products and specifications:")
    _products(data, users, summary, log)
    log("Instruments and titrant lots:")
    demo_bench_load(data["bench"], users, log=log)
    log("Lots and samples:")
    products = {p["code"]: p for p in data["products"]}
    _lots(data, _Lab(users, products, data["bench"], password=data["demo_password"]), summary, log)
    log("QC series and stability study:")
    demo_monitoring_load(users, log=log, trace=lambda code, inputs: demo_trace(data["bench"], code, inputs))
    log("Reagents and instruments at work:")
    demo_bench_show(data["bench"], users, log=log)
    log("Fatty-acid composition and instrument files:")
    demo_composition_load(products, users, log=log)
    return summary
