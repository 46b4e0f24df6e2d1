"""A task for tests/labcore/test_celery.py only, loaded into a real worker with ``--include``.

Each run appends a line to ``log_path``. The first run then holds on (as a long task would)
until its worker is killed; any later run finishes at once and says so.
"""
from __future__ import annotations

import os
import time
from pathlib import Path

from labcore.celery import app

TASK_NAME = "tests.labcore.hold_on_first_run"


def _log(path: Path, word: str) -> int:
    with path.open("a", encoding="utf-8") as log:
        log.write(f"{word} {os.getpid()} {os.getpgrp()} {time.time():.3f}\n")  # pid, worker's group, time
    return sum(1 for line in path.read_text(encoding="utf-8").splitlines() if line.startswith("start "))


@app.task(name=TASK_NAME, acks_late=True)
def hold_on_first_run(log_path: str, hold_seconds: float) -> int:
    path = Path(log_path)
    runs = _log(path, "start")
    if runs == 1:
        time.sleep(hold_seconds)  # the test kills the whole worker meanwhile
    _log(path, "done")
    return runs
