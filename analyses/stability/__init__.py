"""Stability studies: kinetics fits, ICH Q1E shelf life with lot pooling, Arrhenius.

Pure functions on numbers (statsmodels/scipy); times are in months unless a function says otherwise.
"""
