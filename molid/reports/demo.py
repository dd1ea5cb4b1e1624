"""Regenerate the demo reports in ``sample_runs/``: ``python -m molid.reports.demo``.

Run it from the repository's top folder. It replaces
``sample_runs/qa_cylinders_report.pdf`` and ``.html`` (the QA scenario, with the
lab's instrument profile) and ``sample_runs/teaching_section_report.pdf`` (the
graded teaching section, with its answer key). Set ``SOURCE_DATE_EPOCH`` to fix
the date printed in the footers.
"""

from __future__ import annotations

import sys
from pathlib import Path

__all__ = ["DEMO_REPORTS", "main"]

#: (run file, options, outputs) of each demo report, relative to the folder.
DEMO_REPORTS = (
    ("qa_cylinders.csv", {"profile": "qa_lab_profile.toml"},
     ("qa_cylinders_report.pdf", "qa_cylinders_report.html")),
    ("teaching_section.csv", {"key": "teaching_key.csv"}, ("teaching_section_report.pdf",)),
)


def main(argv=None) -> int:
    """Write every demo report; return 0 (a demo row with an error is part of the demo)."""
    from molid.reports import write_report

    arguments = sys.argv[1:] if argv is None else list(argv)
    folder = Path(arguments[0]) if arguments else Path("sample_runs")
    for source, options, outputs in DEMO_REPORTS:
        paths = {name: str(folder / value) for name, value in options.items()}
        for output in outputs:
            path, _ = write_report(str(folder / source), folder / output, force=True, **paths)
            print(f"wrote {path}", file=sys.stderr)
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
