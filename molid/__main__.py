"""``python -m molid``: the same command line as ``molid`` (see :mod:`molid.cli`)."""

from molid.cli import main

if __name__ == "__main__":
    raise SystemExit(main())
