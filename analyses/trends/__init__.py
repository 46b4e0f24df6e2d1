"""Trend alerts on control series: Westgard multirules, Nelson rules, EWMA, out-of-trend.

Pure functions (numpy/pandas/statsmodels), no Django models; the model and Celery
layers call them. Episodes (one per contiguous violation) come from ``episodes``.
"""
