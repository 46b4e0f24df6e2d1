"""Django's PostgreSQL backend, with one change: bulk inserts are written as VALUES lists.

Django 5.2 writes a multi-row insert on PostgreSQL as ``INSERT … SELECT * FROM UNNEST(%s::type[], …)``,
one array parameter per column. psycopg turns each array into its text form in Python, escaping
every quote of every element with a regular expression, and our rows are mostly JSON (result
inputs, audit changes): entering 500 results spent a fifth of its time there (issue 12,
``manage.py ingest_benchmark``). A VALUES list sends each value as its own parameter, which
psycopg adapts in C. Settings select this backend for every PostgreSQL ``DATABASE_URL``.
"""
