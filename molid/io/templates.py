"""Blank run sheets: the columns a method's runs need, with their units, and one example row.

``molid template METHOD`` writes what an instructor hands to a class or a QA lab keeps
at the bench: the header row in the reader's ``name [unit]`` form (the run id, the
sample, the method, the method's required then optional inputs from its registry
entry, standard-uncertainty columns for the required readings, the label, a note),
and one example row. A workbook also has a drop-down list on the method column and,
on each header, a comment giving the column's meaning and unit.

The example row is not a run. Its run id is ``EXAMPLE-delete-me`` and every number
and label in it starts with ``e.g.``, so the reader cannot take it for data: left
in the sheet, each of its ``e.g.`` number cells is reported as an error of that row
("'e.g. 98.0027' is not a number"), the row is not analysed and the command exits 1,
while every other row is analysed as usual. Its values are the first runs of the
fictional examples in docs/methods.md.
"""

from __future__ import annotations

import csv
import io
import re
import sys
from dataclasses import dataclass
from pathlib import Path

from molid.io.headers import header_vocabulary
from molid.io.problems import InputError
from molid.io.safe_files import check_output_path, write_atomic
from molid.methods.inputs import COLUMN_KINDS, INPUT_LABELS
from molid.methods.registry import METHODS

__all__ = [
    "EXAMPLE_RUN",
    "TemplateColumn",
    "method_name",
    "template",
    "template_columns",
    "template_csv",
    "template_workbook",
    "write_template",
]

#: Run id of the example row.
EXAMPLE_RUN = "EXAMPLE-delete-me"
#: What starts every example value, so that the reader refuses the example's numbers.
EXAMPLE_MARK = "e.g. "
#: How many rows below the header carry the method column's drop-down list in a workbook.
VALIDATED_ROWS = 1000

#: The unit each kind of column is written in; CO2 in ppm, as CO2 meters read it.
_UNITS = {"mass": "g", "volume": "mL", "temperature": "°C", "pressure": "kPa", "fraction": "%",
          "length": "mm"}
_OWN_UNITS = {"co2": "ppm"}
#: A temperature's standard uncertainty is a difference: written in kelvin.
_UNCERTAINTY_UNITS = {"temperature": "K"}

#: Where a column means something particular for a method, the words for it.
_MEANINGS = {
    ("syringe", "volume"): "gas volume drawn into the syringe",
    ("syringe", "mass_tare"): "balance reading of the empty syringe, plunger home",
    ("syringe", "mass_filled"): "balance reading of the syringe drawn full of gas",
    ("air-tare-bulb", "mass_tare"): "balance reading of the bulb full of ambient air",
    ("evacuated-bulb", "mass_tare"): "balance reading of the evacuated bulb",
    ("vapour-flask", "mass_tare"): "balance reading of the capped flask full of room air",
    ("vapour-flask", "mass_filled"): "balance reading after vaporising and cooling",
    ("vapour-flask", "volume"): "volume of the flask at 20 °C (e.g. from a water fill)",
    ("vapour-flask", "temperature"): "temperature of the bath the flask was heated in",
    ("vapour-flask", "air_temperature"): "temperature of the room at the balance",
    ("vapour-flask", "pressure"): "barometric pressure",
    ("over-water", "volume"): "volume of the collected gas as read on the tube",
    ("over-water", "temperature"): "temperature of the water, which the gas takes",
    ("over-water", "pressure"): "barometric pressure",
    ("over-water", "humidity"): "relative humidity of the collected gas (blank: saturated, 100 %)",
    ("over-water", "water_column"): "height of the water inside the tube above the outside level "
                                    "(blank or 0: levelled)",
}

#: The example row of each method: the first run of its fictional example in docs/methods.md.
_EXAMPLES = {
    "evacuated-bulb": {"sample": "CYL-FW-07", "mass_tare": "98.0027", "mass_filled": "98.4611",
                       "volume": "248.62", "temperature": "19.8", "pressure": "101.42",
                       "humidity": "38", "expected": "carbon dioxide"},
    "air-tare-bulb": {"sample": "U-3", "mass_tare": "121.8925", "mass_filled": "122.0344",
                      "volume": "312.40", "temperature": "22.6", "pressure": "99.87", "humidity": "55"},
    "syringe": {"sample": "LOT-114", "mass_tare": "87.4351", "mass_filled": "87.3814", "volume": "100.0",
                "temperature": "20.9", "pressure": "102.10", "humidity": "41", "expected": "methane"},
    "vapour-flask": {"sample": "L-2", "mass_tare": "81.3370", "mass_filled": "81.6786", "volume": "126.4",
                     "temperature": "99.2", "air_temperature": "20.5", "pressure": "100.6",
                     "humidity": "47", "u_volume": "0.1"},
    "over-water": {"sample": "R-3", "source_before": "16.4127", "source_after": "16.2430",
                   "volume": "71.6", "temperature": "21.4", "pressure": "99.84", "water_column": "0",
                   "u_volume": "0.1"},
}

_NOTE = ("example row, not a run: replace it with your runs (left in, molid reports its 'e.g.' "
         "cells as errors and analyses the other rows)")


@dataclass(frozen=True)
class TemplateColumn:
    """One column of a blank run sheet.

    Attributes
    ----------
    name : str
        The column's name as the reader knows it (``mass_tare``, ``u_mass``, ``note``).
    unit : str or None
        The unit written in the header; None for a text column.
    meaning : str
        What the column holds, in words (a workbook's header comment).
    example : str
        The example row's cell ("" where it is blank).
    """

    name: str
    unit: str | None
    meaning: str
    example: str

    @property
    def header(self) -> str:
        """The header as written in the sheet: ``name [unit]``, or the name of a text column."""
        return f"{self.name} [{self.unit}]" if self.unit else self.name


def method_name(text: str) -> str:
    """Return the registered method a name means, spelt as the reader spells method cells.

    Parameters
    ----------
    text : str
        A method name in any case, words joined by spaces, hyphens or underscores.

    Returns
    -------
    str
        The name in :data:`molid.methods.registry.METHODS`.

    Raises
    ------
    InputError
        For a name no method has, listing the accepted ones.

    Examples
    --------
    >>> method_name("Evacuated bulb")
    'evacuated-bulb'
    """
    name = re.sub(r"[\s_]+", "-", str(text).strip().lower())
    if name not in METHODS:
        raise InputError(f"unknown method '{text}'; accepted: {', '.join(METHODS)}")
    return name


def _unit(name: str) -> str | None:
    kind = COLUMN_KINDS.get(name)
    return _OWN_UNITS.get(name, _UNITS.get(kind)) if kind else None


def _uncertainty_columns(method) -> list[TemplateColumn]:
    """Standard-uncertainty columns of the required inputs: one for both balance readings."""
    columns = [TemplateColumn("u_mass", "g", "standard uncertainty of each balance reading (both "
                              f"{INPUT_LABELS[method.readings[0]]} and {INPUT_LABELS[method.readings[1]]})"
                              "; blank: the instrument profile's", "")]
    for name in method.required_inputs:
        if name in method.readings:
            continue
        kind = COLUMN_KINDS[name]
        columns.append(TemplateColumn(
            f"u_{name}", _UNCERTAINTY_UNITS.get(kind, _unit(name)),
            f"standard uncertainty of the {INPUT_LABELS[name]}; blank: the instrument profile's", ""))
    return columns


def template_columns(method: str) -> list[TemplateColumn]:
    """List the columns of a method's blank run sheet, in order, with the example row's cells.

    Parameters
    ----------
    method : str
        A registered method (see :func:`method_name`).

    Returns
    -------
    list of TemplateColumn
        run, sample, method; the method's required then optional inputs; ``u_`` columns of
        the required inputs (``u_mass`` for both readings); expected; note.

    Raises
    ------
    InputError
        For an unknown method.
    """
    name = method_name(method)
    entry, meanings, example = METHODS[name], header_vocabulary().meanings, _EXAMPLES[name]

    def marked(column):
        return EXAMPLE_MARK + example[column] if example.get(column) else ""

    columns = [
        TemplateColumn("run", None, meanings["run"] + "; every row needs its own", EXAMPLE_RUN),
        TemplateColumn("sample", None, meanings["sample"], marked("sample")),
        TemplateColumn("method", None, f"{meanings['method']}: one of the list ({', '.join(METHODS)}); "
                       f"this sheet is laid out for {name} ({entry.summary})", name),
    ]
    for input_name in (*entry.required_inputs, *entry.optional_inputs):
        required = "required" if input_name in entry.required_inputs else "optional"
        meaning = _MEANINGS.get((name, input_name), meanings.get(input_name, INPUT_LABELS[input_name]))
        columns.append(TemplateColumn(input_name, _unit(input_name), f"{meaning} ({required})",
                                      marked(input_name)))
    for column in _uncertainty_columns(entry):
        columns.append(TemplateColumn(column.name, column.unit, column.meaning, marked(column.name)))
    columns.append(TemplateColumn("expected", None, meanings["expected"] + "; checked, never used to rank",
                                  marked("expected")))
    columns.append(TemplateColumn("note", None, "free text, kept as typed", _NOTE))
    return columns


def template(method: str) -> tuple[list[str], list[str]]:
    """Return the header row and the example row of a method's blank run sheet.

    Parameters
    ----------
    method : str
        A registered method (see :func:`method_name`).

    Returns
    -------
    headers : list of str
        In the reader's ``name [unit]`` form, e.g. ``"temperature [°C]"``.
    example : list of str
        The example row: run ``EXAMPLE-delete-me``, every other value starting ``e.g.``
        except the method and the note.

    Examples
    --------
    >>> headers, example = template("syringe")
    >>> headers[:5]
    ['run', 'sample', 'method', 'mass_tare [g]', 'mass_filled [g]']
    >>> example[:4]
    ['EXAMPLE-delete-me', 'e.g. LOT-114', 'syringe', 'e.g. 87.4351']
    """
    columns = template_columns(method)
    return [column.header for column in columns], [column.example for column in columns]


def template_csv(method: str) -> str:
    """Write a method's blank run sheet as CSV text (comma-separated, one line per row).

    Parameters
    ----------
    method : str
        A registered method.

    Returns
    -------
    str
        The header line and the example line.
    """
    headers, example = template(method)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(headers)
    writer.writerow(example)
    return buffer.getvalue()


def _comment_text(column: TemplateColumn) -> str:
    """Return the words of a header's comment: what the column holds and its unit."""
    if column.unit is None:
        return f"{column.header}: {column.meaning}."
    return (f"{column.header}: {column.meaning}.\nUnit: {column.unit}. molid converts it to SI; another "
            f"unit of the same kind may be written in the brackets instead.")


def _about_rows(name: str, columns: list[TemplateColumn]) -> list[tuple]:
    """Return the rows of the workbook's second sheet: the method, how to fill it, the columns, cautions."""
    method = METHODS[name]
    rows = [(f"molid run sheet: {name}",), (f"{name}: {method.summary}.",), (),
            ("One row per run on the sheet 'Runs', below its header; keep the headers as they are.",),
            (f"Row 2 ({EXAMPLE_RUN}) is an example, not a run: replace it. Left in, molid reports its "
             "'e.g.' cells as errors of that row and analyses the other rows.",),
            ("Blank uncertainty cells take the instrument profile's values (molid identify --profile).",),
            (), ("column", "meaning")]
    rows += [(column.header, column.meaning) for column in columns]
    rows += [(), ("Safety",)] + [(caution,) for caution in method.cautions]
    rows.append(("These cautions never replace your local codes, your site's safety rules and the "
                 "substance's safety data sheet (SDS).",))
    return rows


def template_workbook(method: str) -> bytes:
    """Write a method's blank run sheet as an .xlsx workbook.

    Parameters
    ----------
    method : str
        A registered method.

    Returns
    -------
    bytes
        The workbook: sheet 'Runs' (the header row, each header with a comment giving its
        meaning and unit, the example row in grey italics, a drop-down list of the
        registered methods on the method column for :data:`VALIDATED_ROWS` rows) and
        sheet 'About' (how to fill it in, the columns, the method's safety cautions).
    """
    from openpyxl import Workbook
    from openpyxl.comments import Comment
    from openpyxl.styles import Font
    from openpyxl.utils import get_column_letter
    from openpyxl.worksheet.datavalidation import DataValidation

    name = method_name(method)
    columns = template_columns(name)
    workbook = Workbook()
    sheet = workbook.active
    sheet.title = "Runs"
    for position, column in enumerate(columns, start=1):
        header = sheet.cell(row=1, column=position, value=column.header)
        header.font = Font(bold=True)
        header.comment = Comment(_comment_text(column), "molid", width=320, height=110)
        example = sheet.cell(row=2, column=position, value=column.example or None)
        example.font = Font(italic=True, color="808080")
        sheet.column_dimensions[get_column_letter(position)].width = max(12, len(column.header) + 3)
    letter = get_column_letter([column.name for column in columns].index("method") + 1)
    choices = DataValidation(type="list", formula1='"' + ",".join(METHODS) + '"', allow_blank=True,
                             showErrorMessage=True, errorTitle="method",
                             error="Choose a method from the list: " + ", ".join(METHODS),
                             showInputMessage=True, promptTitle="method", prompt="Choose from the list")
    choices.add(f"{letter}2:{letter}{VALIDATED_ROWS + 1}")
    sheet.add_data_validation(choices)
    sheet.freeze_panes = "A2"
    about = workbook.create_sheet("About")
    for row in _about_rows(name, columns):
        about.append(row)
    about["A1"].font = Font(bold=True)
    about.column_dimensions["A"].width = 28
    buffer = io.BytesIO()
    workbook.save(buffer)
    return buffer.getvalue()


def write_template(method: str, output=None, *, force: bool = False, stream=None) -> Path | None:
    """Write a method's blank run sheet: a workbook or CSV file, or CSV to a stream.

    Parameters
    ----------
    method : str
        A registered method.
    output : str or pathlib.Path, optional
        A file ending in ``.xlsx`` or ``.csv``; without it, CSV goes to ``stream``.
    force : bool
        Replace an existing file.
    stream : file-like, optional
        Where CSV goes without ``output`` (default: standard output).

    Returns
    -------
    pathlib.Path or None
        The file written, None when the sheet went to the stream.

    Raises
    ------
    InputError
        For an unknown method or a file name that ends in neither ``.xlsx`` nor ``.csv``.
    OutputRefused
        For a file that exists (without ``force``) or a folder that does not.

    Notes
    -----
    A CSV file starts with a UTF-8 byte-order mark, so that a spreadsheet program
    shows the ``°C`` of its headers as written; molid reads it with or without one.
    Files are written atomically (:func:`molid.io.safe_files.write_atomic`).
    """
    name = method_name(method)
    if output is None:
        (stream or sys.stdout).write(template_csv(name))
        return None
    suffix = Path(output).suffix.lower()
    if suffix not in (".xlsx", ".csv"):
        raise InputError(f"{output}: the file name says no format; accepted: a name ending in .xlsx "
                         "(a workbook with drop-down lists and header comments) or .csv")
    path = check_output_path(output, (), force)
    write_atomic(path, template_workbook(name) if suffix == ".xlsx" else "\ufeff" + template_csv(name))
    return path
