"""Charts for trends and stability: JSON-ready data builders and matplotlib renderers.

Rendering uses matplotlib's object API on the Agg canvas (no pyplot, no display), so it
is safe in web workers and Celery tasks.
"""
