"""Benchmarks run by management commands: synthetic data and the measurements taken on it."""
