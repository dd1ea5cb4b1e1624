"""The errors a user can cause, gathered so the command line reports each without a traceback."""

from molid.io.problems import InputError
from molid.io.profiles import ProfileError
from molid.io.safe_files import OutputRefused
from molid.io.units import UnitProblem

__all__ = ["USER_ERRORS"]


def _library_error():
    try:
        from molid.candidates.library import LibraryError
    except ImportError:  # pragma: no cover - the library module ships with the package
        return ()
    return (LibraryError,)


#: Exception types that describe a problem with the user's input, not a bug.
USER_ERRORS = (InputError, ProfileError, OutputRefused, UnitProblem, *_library_error())
