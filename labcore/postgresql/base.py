"""The backend's entry point (``ENGINE = "labcore.postgresql"``): see the package docstring."""
from django.db.backends.postgresql import base, operations


class DatabaseOperations(operations.DatabaseOperations):
    compiler_module = "labcore.postgresql.compiler"


class DatabaseWrapper(base.DatabaseWrapper):
    ops_class = DatabaseOperations
