"""Anchoring the audit chain outside the database.

The chain shows an entry changed in place, but not everything someone with database access
can do: remove the last entries and move the head row back, or rewrite an entry and
recompute every later hash. So a periodic task appends the chain's head (sequence, hash,
time) to an append-only file outside the database (``AUDIT_ANCHOR_DIR``), and optionally
posts it to a webhook. ``audit_verify`` checks the chain against every anchor in the file:
an anchored entry that is gone, or whose hash changed, is reported.

A new anchor is written only when the chain still holds the latest one and runs on from it
intact; otherwise nothing is written (the evidence stays as it was) and the refusal is
logged and posted to the webhook. Put the directory where the database's administrators
cannot write: another host's mount, write-once storage, or a file made append-only
(``chattr +a``).
"""
from __future__ import annotations

import fcntl
import json
import logging
import os
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from django.conf import settings
from django.utils import timezone

from analyses.audit import GENESIS_HASH, ChainReport, RecordedHead, audit_chain_extends, audit_chain_verify
from analyses.services.alert_delivery import _post_json

logger = logging.getLogger(__name__)

ANCHOR_FILE_NAME = "audit-head.jsonl"


class AnchorFileError(Exception):
    """The anchor file holds something that is not an anchor, or anchors out of order."""


@dataclass(frozen=True)
class Anchor:
    sequence: int
    hash: str
    at: datetime
    line: int  # 1-based line in the file

    def recorded(self, path: Path) -> RecordedHead:
        when = self.at.astimezone(UTC).strftime("%Y-%m-%d %H:%M:%S UTC")
        return RecordedHead(
            self.sequence, self.hash, f"the anchor of {when} (line {self.line} of {path})", "or that anchor line was edited"
        )


def anchor_path() -> Path:
    return Path(settings.AUDIT_ANCHOR_DIR) / ANCHOR_FILE_NAME


def _parse_line(text: str, number: int, path: Path) -> Anchor:
    try:
        record = json.loads(text)
        sequence, digest, at = record["sequence"], record["hash"], datetime.fromisoformat(record["at"])
        valid = (
            isinstance(sequence, int) and not isinstance(sequence, bool) and sequence >= 0
            and isinstance(digest, str) and len(digest) == 64 and all(c in "0123456789abcdef" for c in digest)
            and at.tzinfo is not None
        )
    except (ValueError, TypeError, KeyError):
        valid = False
    if not valid:
        raise AnchorFileError(
            f"line {number} of {path} is not an anchor (a JSON object with sequence, hash and at): the file was edited"
        )
    return Anchor(sequence, digest, at, number)


def _parse(text: str, path: Path) -> list[Anchor]:
    anchors: list[Anchor] = []
    for number, line in enumerate(text.splitlines(), start=1):
        if not line.strip():
            continue
        anchor = _parse_line(line, number, path)
        if anchors and (anchor.sequence < anchors[-1].sequence or anchor.at < anchors[-1].at):
            before = anchors[-1]
            raise AnchorFileError(
                f"line {number} of {path} records entry {anchor.sequence} at {anchor.at.isoformat()}, after line "
                f"{before.line} recorded entry {before.sequence} at {before.at.isoformat()}: anchors only move "
                "forward, so the file was edited"
            )
        anchors.append(anchor)
    if text and not text.endswith("\n"):
        raise AnchorFileError(f"the last line of {path} is cut short: the file was edited, or a write was interrupted")
    return anchors


def audit_anchors_read(path: Path | None = None) -> list[Anchor]:
    """Every anchor in the file, oldest first; none when there is no file."""
    path = path or anchor_path()
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        return []
    return _parse(text, path)


@dataclass(frozen=True)
class AnchorOutcome:
    written: bool
    sequence: int
    hash: str
    problem: str = ""  # why nothing was written although something should have been
    webhook_error: str | None = None


def _notify(payload: dict) -> str | None:
    url = settings.AUDIT_ANCHOR_WEBHOOK_URL
    if not url:
        return None
    error = _post_json(url, payload)
    if error:
        logger.warning("audit anchor webhook %s failed: %s", url, error)
    return error


def audit_anchor_write(now: datetime | None = None) -> AnchorOutcome:
    """Append the chain's head to the anchor file once the chain is shown to still hold the
    latest anchor and run on from it intact. Nothing is written when the head has not moved
    since, or when the chain is empty. Safe to run twice at once: the file is locked."""
    path = anchor_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    with path.open("a+", encoding="utf-8") as handle:
        fcntl.flock(handle, fcntl.LOCK_EX)  # released when the file closes
        handle.seek(0)
        try:
            anchors = _parse(handle.read(), path)
        except AnchorFileError as exc:
            return _refuse(str(exc), 0, GENESIS_HASH)
        latest = anchors[-1] if anchors else None
        report = audit_chain_extends(latest.recorded(path) if latest else None)
        if not report.ok:
            where = f"entry {report.broken_sequence}" if report.broken_sequence is not None else "the chain"
            return _refuse(f"{where}: {report.problem}", report.head_sequence, report.head_hash)
        head = (report.head_sequence, report.head_hash)
        if report.head_sequence == 0 or (latest and (latest.sequence, latest.hash) == head):
            return AnchorOutcome(False, *head)
        moment = now or timezone.now()
        if latest and moment < latest.at:  # the clock was set back: anchors still only move forward
            moment = latest.at
        at = moment.astimezone(UTC).isoformat(timespec="microseconds")
        line = json.dumps({"sequence": head[0], "hash": head[1], "at": at}, sort_keys=True)
        handle.write(line + "\n")
        handle.flush()
        os.fsync(handle.fileno())
    error = _notify({"kind": "audit_anchor", "sequence": head[0], "hash": head[1], "at": at})
    return AnchorOutcome(True, *head, webhook_error=error)


def _refuse(problem: str, sequence: int, digest: str) -> AnchorOutcome:
    logger.error("audit anchor not written: %s", problem)
    error = _notify({"kind": "audit_chain_broken", "problem": problem})
    return AnchorOutcome(False, sequence, digest, problem=problem, webhook_error=error)


@dataclass(frozen=True)
class AnchoredReport:
    chain: ChainReport
    path: Path
    latest: Anchor | None = None
    anchor_problem: str = ""  # the anchor file is missing or unreadable although the chain has entries

    @property
    def ok(self) -> bool:
        return self.chain.ok and not self.anchor_problem


def audit_chain_verify_anchored(expect_head: tuple[int, str] | None = None) -> AnchoredReport:
    """The whole chain, checked against every anchor in the file (and ``expect_head``)."""
    path = anchor_path()
    try:
        anchors = audit_anchors_read(path)
    except AnchorFileError as exc:
        return AnchoredReport(audit_chain_verify(expect_head), path, anchor_problem=str(exc))
    chain = audit_chain_verify(expect_head, recorded=[anchor.recorded(path) for anchor in anchors])
    problem = ""
    if chain.ok and not anchors and chain.checked:
        problem = (
            f"no anchor in {path}, but the chain holds {chain.checked} entries: the anchor file was deleted, moved "
            "or emptied, or no anchor was written yet (after installing or upgrading, run `manage.py audit_anchor` once; "
            "beat writes one every AUDIT_ANCHOR_SECONDS)"
        )
    return AnchoredReport(chain, path, anchors[-1] if anchors else None, problem)
