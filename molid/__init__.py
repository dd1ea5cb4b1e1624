"""molid: molar mass of a weighed gas, with a GUM uncertainty budget and a ranked list of candidates.

The few names a notebook needs::

    import molid
    runs = molid.read("sample_runs/qa_cylinders.csv")
    result = molid.pipeline.identify(runs)
    molid.gas_density("propane", 288.15, 101325.0)   # kg/m³ of a named gas at a state

Heavy modules load on first use, so ``import molid`` stays quick.
"""

__version__ = "0.1.0"

__all__ = ["__version__", "read", "identify", "grade", "report", "load_library", "gas_compressibility",
           "gas_molar_volume", "gas_density", "gas_relative_density", "convert_gas_volume",
           "convert_gas_density"]

_LAZY = {
    "read": ("molid.io.reading", "read_runs"),
    "identify": ("molid.pipeline.identify", "identify"),
    "grade": ("molid.teaching.grading", "grade"),
    "report": ("molid.reports", "write_report"),
    "load_library": ("molid.candidates.library", "load_library"),
    # a named gas at a state, and from one state to another (with its Z at both)
    "gas_compressibility": ("molid.candidates.gas_states", "gas_compressibility"),
    "gas_molar_volume": ("molid.candidates.gas_states", "gas_molar_volume"),
    "gas_density": ("molid.candidates.gas_states", "gas_density"),
    "gas_relative_density": ("molid.candidates.gas_states", "gas_relative_density"),
    "convert_gas_volume": ("molid.candidates.gas_states", "convert_gas_volume"),
    "convert_gas_density": ("molid.candidates.gas_states", "convert_gas_density"),
}


def __getattr__(name):
    if name in _LAZY:
        import importlib

        module, attribute = _LAZY[name]
        return getattr(importlib.import_module(module), attribute)
    raise AttributeError(f"module 'molid' has no attribute {name!r}")
