"""A plugin module that cannot be imported, as when a plugin's own dependency is missing.

Only the registry tests import it, through an entry point; pytest does not collect it.
"""
raise ImportError("this plugin needs a library that is not installed (raised on purpose by the test)")
