"""Running one call from several threads at the same moment, for the race tests on
PostgreSQL (``@pytest.mark.django_db(transaction=True)`` and the ``postgres`` fixture)."""
from __future__ import annotations

import threading
from collections.abc import Callable
from typing import Any

from django.db import connection

THREADS = 6


def race(call: Callable[[int], Any], threads: int = THREADS) -> list[Any]:
    """``call(i)`` in ``threads`` threads released together; each thread's return value, or
    the exception it raised (returned, never swallowed). Each thread closes its own
    database connection."""
    start = threading.Barrier(threads)
    outcomes: list[Any] = [None] * threads

    def run(index: int) -> None:
        try:
            start.wait()
            outcomes[index] = call(index)
        except Exception as exc:  # the test inspects it
            outcomes[index] = exc
        finally:
            connection.close()

    workers = [threading.Thread(target=run, args=(index,)) for index in range(threads)]
    for worker in workers:
        worker.start()
    for worker in workers:
        worker.join()
    return outcomes
