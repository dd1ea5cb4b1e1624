"""Physics: constants, moist air (CIPM-2007), water, real-gas virial coefficients, vapour pressures, formulas.

Pure functions of numpy arrays in SI units, each citing its published source; no pandas and no file reading.
"""
