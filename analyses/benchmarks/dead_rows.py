"""Dead rows left by earlier benchmark runs, which every run rolls back.

A rolled-back row stays in its table and its indexes, dead, until a vacuum clears it, and
queries still read it: counts and plans (``list_benchmark``), index lookups and the checks of
new rows' keys (``ingest_benchmark``). On a database left with the rolled-back rows of a day's
runs (some 290,000 dead audit entries), a batch of 100 results spent 158 ms appending its audit
entries, and 47 ms once the database was vacuumed. The figures are then slower than the same
data, vacuumed, gives."""
from __future__ import annotations

from collections.abc import Sequence

from django.db import connection


def dead_rows_warning(tables: Sequence[str]) -> str | None:
    """``dead_rows_note`` of ``tables``, as PostgreSQL's statistics count their rows; None elsewhere."""
    if connection.vendor != "postgresql":
        return None
    with connection.cursor() as cursor:
        cursor.execute(
            "SELECT coalesce(sum(n_dead_tup), 0), coalesce(sum(n_live_tup), 0) FROM pg_stat_user_tables WHERE relname = ANY(%s)",
            [list(tables)],
        )
        dead, live = cursor.fetchone()
    return dead_rows_note(int(dead), int(live))


def dead_rows_note(dead: int, live: int) -> str | None:
    """A warning when the tables hold more dead rows than live ones, and more than a few (each
    rolled-back run leaves its rows dead until autovacuum comes)."""
    if dead <= max(live, 10_000):
        return None
    return (
        f"warning: the tables timed hold {dead:,} dead rows against {live:,} live ones (earlier runs, rolled back); "
        "queries read them too, so the figures will be slower than on this data vacuumed: "
        "run VACUUM ANALYZE first, or use a fresh database"
    )
