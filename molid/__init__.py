"""molid: molar mass of a weighed gas, with a GUM uncertainty budget and a ranked list of candidates.

The few names a notebook needs::

    import molid
    runs = molid.read("sample_runs/qa_cylinders.csv")
    result = molid.pipeline.identify(runs)

Heavy modules load on first use, so ``import molid`` stays quick.
"""

__version__ = "0.1.0"

__all__ = ["__version__", "read", "identify", "grade", "report", "load_library"]

_LAZY = {
    "read": ("molid.io.reading", "read_runs"),
    "identify": ("molid.pipeline.identify", "identify"),
    "grade": ("molid.teaching.grading", "grade"),
    "report": ("molid.reports", "write_report"),
    "load_library": ("molid.candidates.library", "load_library"),
}


def __getattr__(name):
    if name in _LAZY:
        import importlib

        module, attribute = _LAZY[name]
        return getattr(importlib.import_module(module), attribute)
    raise AttributeError(f"module 'molid' has no attribute {name!r}")
