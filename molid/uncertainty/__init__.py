"""Uncertainty: GUM propagation by complex step, Monte Carlo, Type B conversions, replicate combination."""
