from tests.analyses.lab_setup import *  # noqa: F403  (shared fixtures)
