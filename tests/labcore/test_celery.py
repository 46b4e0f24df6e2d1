"""The Celery app on Redis: a task whose worker is killed outright (kill -9, no chance to
hand the message back) is redone by another worker once the visibility timeout has passed,
not an hour later (kombu's default)."""
from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
import uuid
from pathlib import Path

import pytest
import redis

from labcore.celery import app
from tests.labcore.redelivery_probe import TASK_NAME

pytestmark = pytest.mark.services

ROOT = Path(__file__).resolve().parents[2]
VISIBILITY_TIMEOUT = 20  # seconds, for the test only (the holder is killed well before); the default is 300 (labcore/settings.py)
RESTORE_SWEEP = 10  # seconds between a worker's looks for overdue messages (labcore/settings.py)


def test_the_default_redelivers_within_minutes_not_an_hour(settings):
    # kombu's own default visibility timeout is 3600 s; a killed worker's task waited that long (issue 8)
    assert settings.BROKER_VISIBILITY_TIMEOUT == float(os.environ.get("BROKER_VISIBILITY_TIMEOUT", 300))
    if settings.REDIS_URL:
        options = app.conf.broker_transport_options
        assert options["visibility_timeout"] == settings.BROKER_VISIBILITY_TIMEOUT
        assert options["unacked_restore_interval"] * options["unacked_restore_throttle"] == RESTORE_SWEEP
    from analyses.tasks import BACKOFF_MAX

    assert BACKOFF_MAX < settings.BROKER_VISIBILITY_TIMEOUT or settings.BROKER_VISIBILITY_TIMEOUT < 2


def _wait_for(condition, seconds: float) -> bool:
    """Poll until ``condition()`` holds; a guard against hanging, not a timing assertion."""
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        if condition():
            return True
        time.sleep(0.2)
    return False


def _lines(path: Path, word: str) -> list[list[str]]:
    if not path.exists():
        return []
    return [line.split() for line in path.read_text(encoding="utf-8").splitlines() if line.startswith(word + " ")]


class Worker:
    """``celery -A labcore worker`` in its own process group, so kill -9 takes the pool with it."""

    def __init__(self, name: str, queue: str, env: dict[str, str], log_dir: Path):
        self.log = log_dir / f"{name}.log"
        command = [
            sys.executable, "-m", "celery", "-A", "labcore", "worker", "--pool=prefork", "--concurrency=1",
            "-Q", queue, "-n", f"{name}-{queue}@%h", "--loglevel=INFO", "--include", "tests.labcore.redelivery_probe",
            "--without-mingle", "--without-gossip", "--without-heartbeat",
        ]
        with self.log.open("wb") as out:
            self.process = subprocess.Popen(
                command, cwd=ROOT, env=env, stdout=out, stderr=subprocess.STDOUT, start_new_session=True
            )

    def ready(self) -> bool:
        return " ready." in self.log.read_text(errors="replace")

    def kill(self) -> None:
        """kill -9 of the whole worker: main process and pool children at once."""
        if self.process.poll() is None:
            os.killpg(self.process.pid, signal.SIGKILL)
        self.process.wait(timeout=10)

    def stop(self) -> None:
        if self.process.poll() is not None:
            return
        os.killpg(self.process.pid, signal.SIGTERM)
        try:
            self.process.wait(timeout=15)
        except subprocess.TimeoutExpired:
            self.kill()


def _unacked(client: redis.Redis, queue: str) -> list[bytes]:
    """Delivery tags of the messages of ``queue`` that a worker holds unacknowledged."""
    tags = []
    for tag, payload in client.hgetall("unacked").items():
        try:
            _message, _exchange, routing_key = json.loads(payload)
        except (ValueError, TypeError):
            continue
        if routing_key == queue:
            tags.append(tag)
    return tags


def _forget_queue(client: redis.Redis, queue: str) -> None:
    """Remove the test's queue, its bindings and any message of it still held unacknowledged."""
    client.delete(queue, f"_kombu.binding.{queue}", f"_kombu.binding_permanent.{queue}")
    for tag in _unacked(client, queue):
        client.hdel("unacked", tag)
        client.zrem("unacked_index", tag)


def _runner(workers: list[Worker], line: list[str]) -> Worker:
    """The worker whose pool process wrote ``line`` (each worker leads its own process group)."""
    return next(worker for worker in workers if worker.process.pid == int(line[2]))


def test_a_task_whose_worker_was_killed_outright_is_redone_by_another_worker(redis_url, tmp_path):
    queue = f"redelivery-{uuid.uuid4().hex[:10]}"
    env = {**os.environ, "REDIS_URL": redis_url, "BROKER_VISIBILITY_TIMEOUT": str(VISIBILITY_TIMEOUT)}
    runs = tmp_path / "runs.log"
    client = redis.Redis.from_url(redis_url, socket_connect_timeout=2)
    workers: list[Worker] = []
    try:
        workers = [Worker(name, queue, env, tmp_path) for name in ("one", "two")]
        for worker in workers:
            assert _wait_for(worker.ready, 120), f"a worker never got ready:\n{worker.log.read_text()}"
        # the first run would hold on for two minutes, far longer than the test waits
        app.send_task(TASK_NAME, args=[str(runs), 120], queue=queue)
        assert _wait_for(lambda: _lines(runs, "start"), 60), "no worker started the task"
        holder = _runner(workers, _lines(runs, "start")[0])
        # late acknowledgement: Redis holds the message as unacknowledged while the task runs
        assert len(_unacked(client, queue)) == 1

        holder.kill()
        killed_at = time.monotonic()
        assert _wait_for(lambda: _lines(runs, "done"), 60), (
            "the task was not redone within 60 s of the kill:\n" + "\n".join(w.log.read_text() for w in workers)
        )
        waited = time.monotonic() - killed_at
        assert _wait_for(lambda: not _unacked(client, queue), 10)  # the second run was acknowledged
    finally:
        for worker in workers:
            worker.stop()
        _forget_queue(client, queue)

    starts, dones = _lines(runs, "start"), _lines(runs, "done")
    assert len(starts) == 2 and len(dones) == 1
    assert dones[0][1] == starts[1][1] and _runner(workers, starts[1]) is not holder  # redone by the other one
    # not before the visibility timeout (the message was delivered before its first start) ...
    assert float(starts[1][3]) - float(starts[0][3]) >= VISIBILITY_TIMEOUT
    # ... and within it plus one restore sweep, with a margin for a loaded machine
    assert waited < VISIBILITY_TIMEOUT + RESTORE_SWEEP + 15, f"redone {waited:.1f} s after the kill"
