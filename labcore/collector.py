"""Python's cyclic garbage collector, settled for a long-running process (a web worker, a
Celery child, a benchmark that stands in for one).

A loaded oleotrace process holds some 140,000 objects (Django, DRF, pint's unit registry, the
plugins) that live as long as it does, and every full collection walks all of them. A batch of
100 results allocates enough to set off several: in ``manage.py ingest_benchmark`` they took
about a quarter of the batch's time (issue 12). ``collector_settle``, called once the process
has loaded what it serves:

- moves everything alive into the permanent generation (``gc.freeze()``, which the Python
  documentation suggests before a server forks its workers), so later collections skip it;
- raises the youngest generation's threshold from Python's 700 to ``GC_YOUNG_THRESHOLD``
  allocations (default 10,000), so a request sets off fewer collections (common practice, no
  source).

What is created afterwards is collected as before; only the start-up set is exempt.
"""
from __future__ import annotations

import gc

from django.conf import settings


def collector_settle() -> None:
    """Freeze what the process has loaded, and set the young generation's threshold."""
    gc.collect()
    gc.freeze()
    _, middle, oldest = gc.get_threshold()
    gc.set_threshold(settings.GC_YOUNG_THRESHOLD, middle, oldest)
