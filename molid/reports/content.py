"""The report as a format-neutral page model, shared by the PDF and HTML writers.

A :class:`Report` is a list of :class:`Page` objects, each a list of blocks
(fields, a highlighted result, tables, figures, bullet lists, a signature line).
Everything here is plain text and numbers; the writers decide how to draw it,
and user-provided text is never interpreted as markup by either of them.

Numbers leave SI here: masses in the user's units, molar masses in g/mol,
each rounded to its uncertainty (two significant digits of U).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

import numpy as np

from molid.candidates.evaluation import candidate_constants
from molid.candidates.hazards import (
    LABEL_MARK,
    SAFETY_FOOTNOTE,
    grouped_substances,
    hazard_summary,
    pressure_unit_texts,
    unidentified_text,
)
from molid.candidates.vapour_pressures import saturation_pressure
from molid.candidates.verdicts import LABEL_MEANINGS, UNFIT_VERDICTS
from molid.methods.inputs import INPUT_LABELS
from molid.methods.registry import METHODS
from molid.reports.density_section import DENSITY_TITLE, density_lines
from molid.reports.purity_section import purity_finding, specification_parts
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = [
    "Fields",
    "Highlight",
    "Table",
    "Plot",
    "Bullets",
    "Signature",
    "Columns",
    "Page",
    "Report",
    "identify_report",
    "safety_block",
    "precautions_text",
    "format_number",
    "format_with_uncertainty",
    "RESIDUAL_VAPOUR_SENTENCE",
]

#: Said in the result box of a page with condensed-vapour-flask runs.
RESIDUAL_VAPOUR_SENTENCE = (
    "Vapour flask: this ideal-gas value has no residual-vapour correction; each candidate's "
    "value includes its own.")

_G = 1e3  # kg/mol → g/mol

_UNIT_WORDS = {"degC": "°C", "degF": "°F", "percent": "%", "m**3": "m³", "cm**3": "cm³",
               "cm^3": "cm³", "m^3": "m³", "kelvin": "K"}

#: Inputs shown in the inputs table, in order, where the page's methods use them.
_INPUT_COLUMNS = ("mass_tare", "mass_filled", "source_before", "source_after", "volume", "temperature",
                  "pressure", "water_column", "humidity")
_SHORT = {"mass_tare": "tare", "mass_filled": "filled", "source_before": "before",
          "source_after": "after", "volume": "V", "temperature": "T", "pressure": "p",
          "water_column": "h water", "humidity": "RH", "air_temperature": "air T",
          "air_pressure": "air p", "co2": "CO₂"}

_OPERATOR_HEADERS = ("operator", "analyst", "analysed_by", "student", "name")
_DATE_HEADERS = ("date", "run_date", "analysis_date")
_NOTE_HEADERS = ("notes", "note", "comment", "comments", "remark", "remarks")


# -- the page model --------------------------------------------------------------------
@dataclass
class Fields:
    """Labelled values (the header of a page), shown as a two-column grid."""

    items: list


@dataclass
class Highlight:
    """The result of the page, in a box: a list of lines, the first one emphasised."""

    lines: list


@dataclass
class Table:
    """A table of text cells.

    ``widths`` are relative column widths; ``align`` is one letter per column
    (``L`` or ``R``); ``styles`` optionally gives, per row, per cell, a style name the
    writers map to a colour (``consistent``, ``marginal``, ``excluded``, ``condenses``,
    ``error``, ``muted``) or None. ``bars`` names a column of percentages drawn
    as horizontal bars (a bar chart inside the table).
    """

    title: str
    columns: list
    rows: list
    widths: list
    align: str = ""
    styles: list | None = None
    note: str = ""
    bars: int | None = None


@dataclass
class Columns:
    """Two blocks side by side; ``split`` is the left block's width [mm] of 180."""

    left: object
    right: object
    split: float = 88.0


@dataclass
class Plot:
    """A figure: ``make()`` returns a matplotlib Figure; size in millimetres.

    ``raster_in_pdf`` asks the PDF writer for a high-resolution bitmap instead of
    SVG, for figures that use SVG features fpdf2 does not draw (clip paths on
    markers, mathtext tick labels). ``spec``, when given, is a picklable
    description :func:`molid.reports.figures.spec_figure` turns into the same
    figure, so a long report can draw its plots in worker processes.
    """

    make: object
    width: float
    height: float
    alt: str = ""
    title: str = ""
    raster_in_pdf: bool = False
    spec: tuple | None = None


@dataclass
class Bullets:
    """A titled list of sentences; ``kind`` picks the look (note, warning, safety, error).

    ``lead``, when given, is a sentence printed in bold before the list (what must be read
    first).
    """

    title: str
    items: list
    kind: str = "note"
    footnote: str = ""
    lead: str = ""


@dataclass
class Signature:
    """Signature and date lines for the filed record."""

    roles: tuple = ("Analysed by", "Checked by")


@dataclass
class Page:
    """One printed page (it may run over onto the next if its content is long)."""

    title: str
    subtitle: str = ""
    blocks: list = field(default_factory=list)
    key: str = ""


@dataclass
class Report:
    """A whole report: title, source, pages."""

    title: str
    source: str
    pages: list
    generated: str = ""
    version: str = ""
    generated_datetime: object = None


# -- number formatting -------------------------------------------------------------------
def _decimals(expanded) -> int:
    if expanded is None or not np.isfinite(expanded) or expanded <= 0:
        return 4
    return max(0, 1 - int(math.floor(math.log10(expanded))))


def format_with_uncertainty(value, expanded, unit="") -> str:
    """Format a value and its expanded uncertainty, rounded to two significant digits of U.

    Examples
    --------
    >>> format_with_uncertainty(39.96312, 0.02234, " g/mol")
    '39.963 ± 0.022 g/mol'
    """
    if value is None or not np.isfinite(value):
        return "–"
    if expanded is None or not np.isfinite(expanded):  # a value whose uncertainty could not be had
        return f"{format_number(value, 6)} ± –{unit}"
    decimals = _decimals(expanded)
    return f"{value:.{decimals}f} ± {expanded:.{decimals}f}{unit}"


def format_number(value, digits=10) -> str:
    """Format a number as a person would write it (no float noise), '–' when missing.

    Examples
    --------
    >>> format_number(21.720000000000027)
    '21.72'
    """
    if value is None or not np.isfinite(value):
        return "–"
    text = f"{value:.{digits}g}"
    return text.replace("-", "−") if text.startswith("-") else text


def _expanded(u):
    """Give the expanded uncertainty k·u, None when u is missing."""
    return None if u is None else COVERAGE_FACTOR * u


def _fixed(value, places) -> str:
    if value is None or not np.isfinite(value):
        return "–"
    return f"{value:.{places}f}"


def _signed(value, places=2) -> str:
    if value is None or not np.isfinite(value):
        return "–"
    return f"{value:+.{places}f}".replace("-", "−")


def _compact(value) -> str:
    """Format three significant digits, in exponent form when tiny, with a true minus sign.

    Examples
    --------
    >>> _compact(-0.000123), _compact(64.4)
    ('−0.00012', '64.4')
    """
    if not np.isfinite(value):
        return "–"
    text = f"{value:.2g}" if 0 < abs(value) < 1e-3 else f"{value:.3g}"
    if "e" in text:
        text = f"{value:.1e}"
    return text.replace("-", "−")


def _unit_text(unit) -> str:
    text = unit.text if unit is not None else ""
    return _UNIT_WORDS.get(text, text)


def _to_display(values, unit):
    """Convert SI values to the user's unit (a ColumnUnit has SI = value·scale + offset)."""
    return (np.asarray(values, dtype=float) - unit.offset) / unit.scale


# -- the user's free columns ---------------------------------------------------------------
def _normalise_header(text) -> str:
    name = re.sub(r"\[.*?\]", "", str(text)).strip().lower()
    return re.sub(r"[\s\-]+", "_", name)


def _file_name(source) -> str:
    """Strip the folders from a file name (the running header carries the full path)."""
    text = str(source or "data")
    return text.replace("\\", "/").rsplit("/", 1)[-1] or text


def _free_column(raw, names):
    """Find the first raw column whose header is one of ``names`` (text cells), or None."""
    for column in raw.columns:
        if _normalise_header(column) in names:
            return raw[column].astype(str).str.strip().to_numpy(dtype=object)
    return None


_ALIASES = {"rh": "humidity", "relative_humidity": "humidity"}


def _typed_columns(raw) -> dict:
    """Map each measured input to the cells as the user typed them (their digits kept)."""
    found = {}
    for column in raw.columns:
        name = _normalise_header(column)
        name = _ALIASES.get(name, name)
        if name in _SHORT and name not in found:
            found[name] = raw[column].astype(str).str.strip().to_numpy(dtype=object)
    return found


def _joined(cells, positions) -> str:
    if cells is None:
        return ""
    seen = []
    for position in positions:
        value = cells[position]
        if value and value not in seen:
            seen.append(value)
    return ", ".join(seen)


# -- safety ---------------------------------------------------------------------------------
def safety_block(summary, analysed=True) -> Bullets:
    """Draw a hazard summary as the safety box.

    The unidentified gas is said first, in bold; then the substances whose hazards apply
    (grouped when their classes are the same), then the precautions.

    Parameters
    ----------
    summary : dict
        From :func:`molid.candidates.hazards.hazard_summary`.
    analysed : bool
        False when no run of the page could be analysed.

    Returns
    -------
    Bullets
    """
    items = []
    for names, classes in grouped_substances(summary, "{name}, the " + LABEL_MARK):
        who = ", ".join(names)
        items.append(f"{who}: {'; '.join(classes) or 'no GHS hazard class in the library'}")
    lead = ""
    if summary["identified"]:
        title = "Safety: hazard classes (GHS) of the candidates not excluded"
    else:
        title = "Safety: UNIDENTIFIED GAS"
        lead = unidentified_text(analysed)
        if not items:
            items.append("No candidate is consistent or marginal and the file gives no label: "
                         "no substance's hazard classes can be named.")
    if summary["cautions"]:
        items.append(precautions_text(summary["cautions"]))
    return Bullets(title, items, "safety", SAFETY_FOOTNOTE, lead)


def precautions_text(cautions) -> str:
    """Join cautions into one paragraph, a sentence each.

    Examples
    --------
    >>> precautions_text(["toxic: work in a fume hood", "eye irritant: wear safety glasses"])
    'Precautions. Toxic: work in a fume hood. Eye irritant: wear safety glasses.'
    """
    return "Precautions. " + " ".join(caution[0].upper() + caution[1:] + "." for caution in cautions)


# -- label and separation texts -------------------------------------------------------------
def label_sentence(label) -> str:
    """Say in one sentence whether the ``expected`` label agrees with the result."""
    if not label:
        return ""
    if label["verdict"] == "not-in-library":
        return (f"Label '{label['expected']}': not in the candidate library, so it could not be "
                "checked (add it with --candidate FORMULA=NAME).")
    meaning = LABEL_MEANINGS[label["verdict"]].replace("the result", "the measurement")
    z = f", z = {_signed(label['z'])}" if label.get("z") is not None else ""
    return (f"Label '{label['expected']}' ({label['name']}): {label['verdict'].upper()} "
            f"(rank {label['rank']}{z}): {meaning}.")


# -- the identify report -----------------------------------------------------------------------
def _groups(result):
    """Group the table into pages: (key, positions in the table), in file order."""
    text = result.table.text
    samples = text["sample"].to_numpy(dtype=object)
    groups = {}
    order = []
    for position, sample in enumerate(samples):
        key = ("sample", sample) if sample is not None else ("run", position)
        if key not in groups:
            groups[key] = []
            order.append(key)
        groups[key].append(position)
    return [(key, groups[key]) for key in order]


def _input_names(table, positions) -> list:
    """Pick the inputs the table shows: those the page's methods use, air conditions when given, wet."""
    used = set()
    for method in set(table.text["method"].to_numpy(dtype=object)[positions]):
        entry = METHODS.get(method)
        used |= set(_INPUT_COLUMNS) if entry is None else set(entry.required_inputs + entry.optional_inputs)
    names = [name for name in _INPUT_COLUMNS if name in used]
    for extra in ("air_temperature", "air_pressure"):
        if table.given[extra][positions].any():
            names.append(extra)
    if table.wet[positions].any():
        names.append("wet")
    return names


def _input_display(table, names, positions):
    """Give each shown input's header, width, display values and u, and whether u is constant.

    Returns
    -------
    headers, widths : list
        One per input, in ``names`` order.
    display : dict
        Input name to (values, u) in the file's units (not for the wet flag).
    same_u : dict
        Input name to True when every run has the same finite u (shown once, below the runs).
    """
    headers, widths, display, same_u = [], [], {}, {}
    for name in names:
        if name == "wet":
            headers.append("wet")
            widths.append(9.0)
            continue
        unit = table.units[name]
        headers.append(f"{_SHORT[name]} [{_unit_text(unit)}]")
        widths.append(15.0 if name.startswith(("mass", "source")) else 13.0)
        values = _to_display(table.values[name][positions], unit)
        u = np.asarray(table.uncertainties[name][positions], dtype=float) / unit.scale
        display[name] = (values, u)
        finite = u[np.isfinite(u)]
        same_u[name] = bool(len(finite) == len(u) and np.allclose(finite, finite[0], rtol=1e-9))
    return headers, widths, display, same_u


def _input_cells(table, position, k, names, display, same_u, typed) -> list:
    """Give one run's input cells: as typed when the file has the digits, u beside when it varies."""
    cells = []
    entry = METHODS.get(table.text["method"].iloc[position])
    for name in names:
        if name == "wet":
            cells.append("yes" if table.wet[position] else "no")
            continue
        if entry is not None and name not in entry.required_inputs + entry.optional_inputs:
            cells.append("")  # not an input of this run's method
            continue
        values, u = display[name]
        written = typed[name][position] if name in typed else ""
        cell = written or format_number(values[k])
        if not same_u[name] and np.isfinite(u[k]):
            cell += f" ({u[k]:.2g})"
        cells.append(cell)
    return cells


def _uncertainty_row(names, display, same_u, show_method) -> list:
    """Give the row of standard uncertainties shared by all runs ('per run' where they differ)."""
    row = ["u (std.)"] + ([""] if show_method else [])
    for name in names:
        if name == "wet":
            row.append("")
            continue
        values, u = display[name]
        if not np.isfinite(u).any():
            row.append("–")
        else:
            row.append(f"{u[0]:.2g}" if same_u[name] else "per run")
    return row + ["", ""]


def _inputs_table(result, positions, run_labels, notes=()) -> Table:
    table = result.table
    names = _input_names(table, positions)
    methods = table.text["method"].to_numpy(dtype=object)[positions]
    show_method = len({m for m in methods}) > 1
    headers, input_widths, display, same_u = _input_display(table, names, positions)
    columns = ["run"] + (["method"] if show_method else []) + headers
    columns += ["gas mass [g]", "M (ideal gas) ± U [g/mol]"]
    widths = [16.0] + ([22.0] if show_method else []) + input_widths + [15.0, 27.0]
    typed = _typed_columns(table.raw)
    rows, styles = [], []
    for k, position in enumerate(positions):
        row = [run_labels[position]] + ([methods[k] or "?"] if show_method else [])
        row += _input_cells(table, position, k, names, display, same_u, typed)
        if result.errors[position]:
            row += ["–", "error (see below)"]
            styles.append([None] * (len(row) - 1) + ["error"])
        else:
            gas = result.propagation.extras["gas_mass"][position] * 1e3
            row.append(f"{gas:.4f}")
            row.append(format_with_uncertainty(result.molar_mass[position] * _G,
                                               result.U[position] * _G))
            styles.append(None)
        rows.append(row)
    if any(same_u[name] for name in display):
        row = _uncertainty_row(names, display, same_u, show_method)
        rows.append(row)
        styles.append(["muted"] * len(row))
    note = ("Readings as entered, in the file's units; u (std.) is the standard uncertainty "
            "of each reading; U is the expanded uncertainty, k = 2 (about 95 %).")
    note += _over_water_pressures(result, positions, run_labels)
    if notes:
        note += " " + " ".join(item[0].upper() + item[1:] + ("" if item.endswith(".") else ".")
                               for item in notes)
    return Table("Inputs and per-run results", columns, rows, widths,
                 "L" + ("L" if show_method else "") + "R" * (len(columns) - 1 - show_method),
                 styles if any(styles) else None, note)


def _over_water_pressures(result, positions, run_labels, shown=4) -> str:
    """Say, for runs collected over water, how the barometer became the gas's own pressure."""
    methods = result.table.text["method"].to_numpy(dtype=object)
    rows = [p for p in positions if methods[p] == "over-water" and not result.errors[p]]
    if not rows:
        return ""
    extras = result.propagation.extras
    parts = [f"{run_labels[p]}: {result.table.values['pressure'][p] / 1e3:.2f} − "
             f"{extras['column_pressure'][p] / 1e3:.2f} − {extras['water_pressure'][p] / 1e3:.2f} = "
             f"{extras['dry_pressure'][p] / 1e3:.2f} kPa" for p in rows[:shown]]
    more = f" (and {len(rows) - shown} more runs)" if len(rows) > shown else ""
    return (" Over water, the gas's own pressure is the barometer less the water column and the "
            "water's vapour pressure: " + "; ".join(parts) + more + ".")


def _budget_rows(result, positions):
    """Summarise the budget: mean share [%], RMS contribution [g/mol], u(x) and c."""
    table = result.table
    ok = [p for p in positions if not result.errors[p]]
    rows = []
    for name, shares in result.budget.items():
        u_si = result.propagation.uncertainties[name][ok]
        if not np.any(u_si > 0):
            continue
        share = float(np.nanmean(shares[ok]))
        contribution = float(np.sqrt(np.nanmean(result.propagation.contributions[name][ok] ** 2)))
        sensitivity = float(np.nanmean(result.propagation.sensitivities[name][ok]))
        unit = table.units.get(name)
        if unit is not None:
            u_display = float(np.nanmean(u_si)) / unit.scale
            c_display = sensitivity * unit.scale * _G
            unit_text = _unit_text(unit)
        else:  # relative terms of the model (formula, water vapour) have no unit
            u_display = float(np.nanmean(u_si))
            c_display = sensitivity * _G
            unit_text = ""
        rows.append((name, share, contribution * _G, u_display, c_display, unit_text))
    rows.sort(key=lambda row: -row[1])
    return rows


def _budget_table(rows, runs_count) -> Table:
    shown = [row for row in rows if row[1] >= 0.5]
    rest = [row for row in rows if row[1] < 0.5]
    cells = []
    for name, share, contribution, u, c, unit in shown:
        cells.append([INPUT_LABELS.get(name, name), f"{u:.2g} {unit}".strip(), _compact(c),
                      f"{contribution:.2g}", f"{share:.1f}"])
    if rest:
        total = sum(row[1] for row in rest)
        cells.append([f"{len(rest)} more input{'s' if len(rest) > 1 else ''}", "", "", "",
                      f"{total:.2f}"])
    title = "Uncertainty budget" + (f" (mean over the {runs_count} runs)" if runs_count > 1 else "")
    return Table(title, ["input x", "u(x)", "c", "u_i(M)", "share of variance [%]"], cells,
                 [25.0, 16.0, 13.0, 11.0, 21.0], "LRRRR", None,
                 "c = ∂M/∂x [g/mol per unit of x]; u_i(M) = |c|·u(x) [g/mol]; the shares of "
                 "the variance add to 100 %.", bars=4)


def _candidate_rows(items, residual_cells=None):
    """Give the candidate table's rows and styles; two more cells per row on a vapour-flask page."""
    rows, styles = [], []
    for position, item in enumerate(items):
        measured = item["measured"]
        row = [str(item["rank"]), item["name"], item["formula"] or "–", f"{item['molar_mass']:.3f}",
               format_with_uncertainty(measured["value"], _expanded(measured["u"])),
               _fixed(item["Z"], 4), _signed(item["z"])]
        rows.append(row + list(residual_cells[position] if residual_cells else ()) + [item["verdict"]])
        styles.append([None] * (len(rows[-1]) - 1) + [item["verdict"]])
    return rows, styles


def _candidate_table(candidates, top, residual=None) -> Table:
    """Tabulate the top candidates; ``residual`` (a vapour-flask page) adds p_sat and the correction.

    ``residual`` is None, or ``(rows, extra, note)``: the candidate dicts to list (the top ones
    and the label's substance), their (p_sat, correction) cells, and a sentence for the note.
    """
    if residual is None:
        rows, styles = _candidate_rows(candidates[:top])
        return Table(
            f"Candidates, ranked (top {min(top, len(candidates))})",
            ["#", "candidate", "formula", "M [g/mol]", "if it is this gas: M ± U", "Z", "z",
             "verdict"],
            rows, [7.0, 38.0, 20.0, 18.0, 36.0, 15.0, 14.0, 22.0], "RLLRRRRL", styles,
            "Re-evaluated with each candidate's compressibility factor Z (virial, Tsonopoulos B); "
            "z = (value − M)/u; |z| ≤ 2 consistent, ≤ 3 marginal, else excluded.",
        )
    items, extra, note = residual
    rows, styles = _candidate_rows(items, extra)
    return Table(
        f"Candidates, ranked (top {min(top, len(candidates))})",
        ["#", "candidate", "formula", "M [g/mol]", "if it is this gas: M ± U", "Z", "z",
         "p_sat [kPa]", "corr. [%]", "verdict"],
        rows, [6.0, 32.0, 17.0, 16.0, 33.0, 14.0, 13.0, 16.0, 14.0, 19.0], "RLLRRRRRRL", styles,
        note + " z = (value − M)/u; |z| ≤ 2 consistent, ≤ 3 marginal, else excluded.",
    )


def _residual_positions(result, positions) -> list:
    """Pick the page's analysed runs whose method has a residual-vapour correction (vapour flask)."""
    rows = result.residual.get("rows") if result.residual else None
    if rows is None:
        return []
    return [p for p in positions if rows[p] and not result.errors[p]]


def _residual_values(result, key, flask_positions, columns):
    """Give per candidate: mean p_sat at the room temperature [Pa] and the correction [%].

    The correction is not stored apart from Z, so it is taken back out of the candidate's
    value M_c = Z_c·M·(1 + r_c): r_c = M_c/(Z_c·M) − 1, with M the ideal-gas value of the
    sample (or of the run).
    """
    ranking = result.ranking
    kind, ident = key
    if kind == "sample" and ident in ranking.sample_names:
        block, k = ranking.samples, ranking.sample_names.index(ident)
        ideal = float(result.samples.set_index("sample").loc[ident, "value"])
    else:
        block = ranking.runs
        k = int(np.flatnonzero(ranking.run_index == flask_positions[0])[0])
        ideal = float(result.molar_mass[flask_positions[0]])
    percent = (block["measured"][k, columns] / (block["Z"][k, columns] * ideal) - 1.0) * 100.0
    constants = candidate_constants(ranking.library)
    room = result.table.values["air_temperature"][flask_positions]
    saturation, _ = saturation_pressure(room[:, None], constants, columns,
                                        constants["relative_saturation"][columns])
    saturation = np.where(constants["has"][columns], saturation.mean(axis=0), np.nan)
    return saturation, percent


def _residual_columns(result, key, flask_positions, candidates, label_name, top):
    """Give the vapour-flask part of the candidate table: rows, (p_sat, correction) cells, note.

    The rows are the top candidates and, when it is not among them, the label's substance;
    the two cells are filled for the consistent and marginal ones and the label's substance.
    """
    items = list(candidates[:top])
    items += [item for item in candidates[top:] if item["name"] == label_name]
    shown = [item for item in items if item["verdict"] in ("consistent", "marginal")
             or item["name"] == label_name]
    index_of = {name: j for j, name in enumerate(result.ranking.library["name"])}
    columns = np.array([index_of[item["name"]] for item in shown], dtype=int)
    saturation, percent = (_residual_values(result, key, flask_positions, columns) if shown
                           else ((), ()))
    pressure = float(np.min(result.table.values["pressure"][flask_positions]))
    cells = {}
    for item, p_sat, share in zip(shown, saturation, percent, strict=True):
        if np.isnan(p_sat):
            vapour = "–"  # no critical data: the candidate gets no correction
        elif p_sat >= pressure:  # the cooled flask holds no air; the model uses p (also above T_c)
            vapour = "≥ p"
        else:
            vapour = f"{p_sat / 1e3:.3g}"
        cells[item["name"]] = (vapour, _signed(share, 1))
    extra = [cells.get(item["name"], ("", "")) for item in items]
    runs = ", mean of the runs" if len(flask_positions) > 1 else ""
    note = ("Value = Z·M·(1 + corr.), Z at the bath (virial, Tsonopoulos B); corr.: the air the "
            f"candidate's vapour kept out of the cooled flask at p_sat, its vapour pressure at "
            f"room temperature{runs}; blank when excluded, unless the label's.")
    return items, extra, note


def _nearby(candidates, value, expanded, label_name, limit=6):
    """Pick the candidates for the molar-mass axis: the closest, the best and the label."""
    window = max(8.0 * expanded, 0.015 * value)

    def distance(item):
        # near the result, or near what the result means if it is this candidate (a vapour
        # flask's per-candidate correction moves that far from the ideal-gas value)
        measured = item.get("measured")
        own = measured.get("value") if isinstance(measured, dict) else None
        own = value if own is None else own
        return min(abs(item["molar_mass"] - value), abs(item["molar_mass"] - own))

    possible = [item for item in candidates if item["verdict"] not in UNFIT_VERDICTS]
    close = sorted((item for item in possible if distance(item) <= window), key=distance)[:limit]
    chosen = {item["name"]: item for item in close}
    for item in candidates[:1] + [c for c in candidates if c["name"] == label_name]:
        chosen.setdefault(item["name"], item)
    return sorted(chosen.values(), key=lambda item: item["molar_mass"])


def _figure(spec):
    """Draw a figure from its description (matplotlib imported only when a page is drawn)."""
    import molid.reports.figures as figures

    return figures.spec_figure(spec)


def _plot_block(value, expanded, nearby, label_name) -> Plot:
    import molid.reports.figures as figures

    # a candidate whose value as that gas could not be had has no point on the axis
    points = [(item["name"], item["molar_mass"], item["measured"]["value"],
               COVERAGE_FACTOR * item["measured"]["u"], item["verdict"],
               item["name"] == label_name) for item in nearby
              if item["measured"]["value"] is not None and item["measured"]["u"] is not None]

    spec = ("axis", float(value), float(expanded), points, 90.0, 43.0)

    def make():
        return figures.spec_figure(spec)

    return Plot(make, 90.0, 43.0,
                "The molar-mass axis: the grey band is the result's interval (ideal gas, ±U); "
                "for each nearby candidate, its molar mass (diamond) and the value the "
                "measurement gives if the gas is that candidate (dot, ±U).", spec=spec)


def _page_fields(table, key, positions, runs, columns, methods) -> Fields:
    """Give the page header: sample, runs, operator and date from the file, method, source rows."""
    kind, ident = key
    fields = []
    if kind == "sample":
        fields.append(("Sample", ident))
    fields.append(("Runs" if len(runs) > 1 else "Run", ", ".join(runs)))
    operator = _joined(columns["operator"], positions)
    if operator:
        fields.append((columns["operator_label"], operator))
    date = _joined(columns["date"], positions)
    if date:
        fields.append(("Date", date))
    fields.append(("Method", ", ".join(dict.fromkeys(methods)) or "–"))
    rows = ", ".join(str(table.row_numbers[p]) for p in positions)
    name = _file_name(table.source)
    fields.append(("Source", f"{name}, row {rows}" if len(positions) == 1
                   else f"{name}, rows {rows}"))
    return Fields(fields)


def _page_result(result, key, ok_positions):
    """Find the page's result: the sample's combined value, or its first good run's.

    Returns
    -------
    value, u : float or None
        Molar mass and its standard uncertainty [g/mol]; None when no run could be analysed.
    origin : str or None
        Where the value comes from, in words.
    candidates : list
        The ranked candidates of that value (empty without a ranking).
    extras : dict
        The label check and the separation notes of that value.
    """
    kind, ident = key
    ranking = result.ranking
    candidates, extras, value, u, origin = [], {}, None, None, None
    frame = result.samples.set_index("sample") if len(result.samples) else None
    if kind == "sample" and frame is not None and ident in frame.index and ok_positions:
        row = frame.loc[ident]
        value, u = float(row["value"]) * _G, float(row["u"]) * _G
        if ranking is not None:
            candidates = ranking.sample_candidates(ident)
            extras = ranking.sample_extras(ident)
        combined = f"combined from {int(row['n'])} runs (inverse-variance weighted" + (
            f"; Birge ratio {row['birge_ratio']:.2f}" if np.isfinite(row["birge_ratio"]) else "")
        combined += ", run-to-run part widened)" if row["widened"] else ")"
        origin = combined if int(row["n"]) > 1 else "from 1 run"
    elif ok_positions:
        position = ok_positions[0]
        value, u = result.molar_mass[position] * _G, result.u[position] * _G
        if ranking is not None:
            candidates = ranking.run_candidates(position)
            extras = ranking.run_extras(position)
        origin = "from 1 run"
    return value, u, origin, candidates, extras


def _result_lines(value, u, origin, candidates) -> list:
    """Write the highlighted result: M ± U, its interval and u, and the best candidate."""
    if value is None:
        return ["No result: no run of this page could be analysed (see the errors below)."]
    expanded = COVERAGE_FACTOR * u
    decimals = _decimals(expanded)
    lines = [f"Molar mass (ideal gas): {format_with_uncertainty(value, expanded)} g/mol"
             f"  (U, k = 2, about 95 %)"]
    shown, half = round(value, decimals), round(expanded, decimals)
    lines.append(f"Interval {shown - half:.{decimals}f} to {shown + half:.{decimals}f}"
                 f" g/mol; standard uncertainty u = {u:.2g} g/mol; {origin}.")
    if candidates and candidates[0]["verdict"] not in ("consistent", "marginal"):
        nearest = candidates[0]
        lines.append(
            "No candidate is consistent with this result: the gas is unidentified (see the safety "
            f"box). The nearest library entry, {nearest['name']}, is {nearest['verdict']} "
            f"(z = {_signed(nearest['z'])}).")
    elif candidates:
        best = candidates[0]
        measured = best["measured"]
        lines.append(
            f"Best candidate: {best['name']} ({best['formula'] or '–'}), {best['verdict']}, "
            f"z = {_signed(best['z'])}; if it is {best['name']}, its own corrections give "
            f"{format_with_uncertainty(measured['value'], COVERAGE_FACTOR * measured['u'])}"
            f" g/mol (M = {best['molar_mass']:.3f} g/mol)."
        )
    return lines


def _findings(label, extras, candidates, top) -> list:
    """Collect what the measurement can and cannot tell: label check, separation, candidate notes."""
    findings = []
    if label:
        findings.append(label_sentence(label))
    findings += [note[0].upper() + note[1:] for note in extras.get("distinguish", []) or []]
    for item in candidates[:top]:
        if item.get("note") and item["verdict"] != "excluded":
            findings.append(f"{item['name']}: {item['note']}.")
    return findings


def _message_blocks(result, key, positions, run_labels, columns, said_above=False) -> list:
    """Give the page's errors, warnings and the notes the file itself carries, as bullet lists."""
    kind, ident = key
    warnings = []
    if kind == "sample":
        warnings += [item[0].upper() + item[1:] for item in result.sample_warnings.get(ident, [])]
    runs_of = {}  # a message several runs share is said once, naming them all
    for position in positions:
        for message in result.warnings[position]:
            if said_above and "no residual-vapour correction" in message:
                continue  # the result box says it (RESIDUAL_VAPOUR_SENTENCE)
            runs_of.setdefault(message, []).append(run_labels[position])
    warnings += [f"{', '.join(runs)}: {message}" for message, runs in runs_of.items()]
    errors = [f"{run_labels[p]}: {message}" for p in positions for message in result.errors[p]]
    blocks = []
    if errors:
        blocks.append(Bullets("Errors (these runs were not analysed)", errors, "error"))
    if warnings:
        blocks.append(Bullets("Warnings", warnings, "warning"))
    free_notes = [f"{run_labels[p]}: {columns['notes'][p]}" for p in positions
                  if columns["notes"] is not None and columns["notes"][p]]
    if free_notes:
        blocks.append(Bullets("Notes in the file", free_notes, "note"))
    return blocks


def _page_for(result, key, positions, run_labels, columns, top, library_hazards) -> Page:
    kind, ident = key
    ok_positions = [p for p in positions if not result.errors[p]]
    runs = [run_labels[p] for p in positions]
    methods = [m for m in result.table.text["method"].to_numpy(dtype=object)[positions] if m]
    title = f"Sample {ident}" if kind == "sample" else f"Run {runs[0]}"
    blocks = [_page_fields(result.table, key, positions, runs, columns, methods)]
    value, u, origin, candidates, extras = _page_result(result, key, ok_positions)
    flask_positions = _residual_positions(result, positions)
    lines = _result_lines(value, u, origin, candidates)
    if flask_positions and value is not None:
        lines.append(RESIDUAL_VAPOUR_SENTENCE)
    blocks.append(Highlight(lines))
    blocks.append(_inputs_table(result, positions, run_labels, result.notes))

    label = extras.get("label")
    if value is not None:
        budget = _budget_rows(result, positions)
        nearby = _nearby(candidates, value, COVERAGE_FACTOR * u, label["name"] if label else None)
        blocks.append(Columns(_budget_table(budget, len(ok_positions)),
                              _plot_block(value, COVERAGE_FACTOR * u, nearby,
                                          label["name"] if label else None)))
        if candidates:
            residual = (_residual_columns(result, key, flask_positions, candidates,
                                          label["name"] if label else None, top)
                        if flask_positions else None)
            blocks.append(_candidate_table(candidates, top, residual))
        density = density_lines(result, key, ok_positions, candidates)
        blocks += [Bullets(DENSITY_TITLE, density, "note")] if density else []
    findings = _findings(label, extras, candidates, top)
    purity = purity_finding(result, key, positions[0])
    findings += [purity] if purity else []
    if findings:
        blocks.append(Bullets("What the measurement can and cannot tell", findings, "note"))
    decision = specification_parts(result, key, positions[0])
    if decision is not None:
        sentences, spec, alt = decision
        blocks += [Bullets("Specification", sentences, "note"),
                   Plot(lambda spec=spec: _figure(spec), spec[-2], spec[-1], alt, spec=spec)]
    blocks += _message_blocks(result, key, positions, run_labels, columns,
                              said_above=bool(flask_positions) and value is not None)
    summary = hazard_summary(candidates, library_hazards, label=label, methods=methods,
                             units=pressure_unit_texts(result.table.units),
                             analysed=value is not None)
    blocks.append(safety_block(summary, analysed=value is not None))
    blocks.append(Signature())
    return Page(title, "", blocks, key=str(ident) if kind == "sample" else runs[0])


def _library_hazards(result) -> dict:
    if result.ranking is None:
        return {}
    library = result.ranking.library
    return {name: list(hazards) for name, hazards in
            zip(library["name"], library["ghs_hazards"], strict=True)}


def identify_report(result, *, top=5, title="Gas identification report", page_limit=None) -> Report:
    """Build the page model of an identification: a page per sample, or per run without one.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
    top : int
        How many ranked candidates each page lists.
    title : str
        The report title printed on every page.
    page_limit : int, optional
        Draw at most this many samples and runs; one page summarises the rest (see
        :mod:`molid.reports.limits`).

    Returns
    -------
    Report
        Pages in the order the samples and runs first appear in the file.
    """
    table = result.table
    run_ids = table.text["run"].to_numpy(dtype=object)
    run_labels = [run if run is not None else f"row {table.row_numbers[k]}"
                  for k, run in enumerate(run_ids)]
    columns = {"operator": None, "operator_label": "Operator",
               "date": _free_column(table.raw, _DATE_HEADERS),
               "notes": _free_column(table.raw, _NOTE_HEADERS)}
    for header in _OPERATOR_HEADERS:
        cells = _free_column(table.raw, (header,))
        if cells is not None:
            columns["operator"] = cells
            columns["operator_label"] = "Student" if header == "student" else "Operator"
            break
    hazards = _library_hazards(result)
    groups = _groups(result)
    drawn = groups if page_limit is None else groups[:page_limit]
    pages = [_page_for(result, key, positions, run_labels, columns, top, hazards)
             for key, positions in drawn]
    if len(drawn) < len(groups):
        pages.append(_omitted_page(result, groups[len(drawn):], page_limit, run_labels))
    return Report(title, table.source or "data", pages)


def _omitted_page(result, groups, page_limit, run_labels) -> Page:
    """Summarise the samples and runs beyond the page limit on one page, naming the unidentified."""
    from molid.candidates.hazards import load_cautions
    from molid.reports.limits import MOST_NAMED, group_identified

    positions = [p for _, members in groups for p in members]
    errors = sum(1 for p in positions if result.errors[p])
    identified = group_identified(result, groups)
    names = [f"sample {ident}" if kind == "sample" else f"run {run_labels[ident]}"
             for (kind, ident), _ in groups]
    unknown = [name for name, found in zip(names, identified, strict=True) if found is False]
    blocks = [
        Highlight([f"{len(groups):,} more samples and runs are not drawn",
                   f"This report draws the first {page_limit:,} (--max-pages); the rest are "
                   "counted here. The per-run CSV (molid identify FILE -o out.csv) and the JSON "
                   "document (--json) hold every run."]),
        Fields([("Not drawn", f"{len(groups):,} samples and runs without a sample"),
                ("Their runs", f"{len(positions):,}, of which {errors:,} with errors"),
                ("Identified", f"{identified.count(True):,}"), ("Unidentified", f"{len(unknown):,}"),
                ("No result", f"{sum(1 for found in identified if found is None):,}")]),
    ]
    if unknown:
        more = [f"… and {len(unknown) - MOST_NAMED:,} more: see the CSV or JSON"] \
            if len(unknown) > MOST_NAMED else []
        blocks.append(Bullets("Unidentified gases among them", unknown[:MOST_NAMED] + more,
                              "safety", lead=load_cautions()["unidentified"]["caution"]))
    return Page("Samples and runs not drawn", "", blocks, key="not drawn")
