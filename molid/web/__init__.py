"""A local web page over the same API as the command line (``molid serve``).

The page uploads a run sheet (and optionally a profile, answer key, rubric, vessel
register, specification or extra library), shows how its headers were understood,
runs the analysis in a worker process with progress and a cancel button, and shows
the results: per sample the molar mass with its interval, the ranked candidates with
their verdicts, the budget and the molar-mass axis, warnings and safety cautions; for
a lab section the grades, the class summary and plots. Every download is written by
the same functions, with the same arguments, as ``molid identify``, ``grade`` and
``report`` (:mod:`molid.web.work`).

Modules: :mod:`.server` (``molid serve``: address, token), :mod:`.app` (pages and the
rules every request passes), :mod:`.uploads` (private folders), :mod:`.jobs` (the
queue of worker processes), :mod:`.worker` (a worker's loop), :mod:`.work` (what a
worker computes), :mod:`.view` (the page's data).
"""

__all__ = ["create_app", "serve"]


def create_app(**settings):
    """Make the Flask application (see :func:`molid.web.app.create_app`)."""
    from molid.web.app import create_app as make

    return make(**settings)


def serve(*arguments, **settings) -> int:
    """Run the web page until interrupted (see :func:`molid.web.server.serve`)."""
    from molid.web.server import serve as run

    return run(*arguments, **settings)
