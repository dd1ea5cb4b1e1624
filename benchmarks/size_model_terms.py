"""Size the real-gas model terms on one set of fluids and states; check them on another.

Not part of the test suite. Run from the repository root:

    python benchmarks/size_model_terms.py            # print sizing and check figures
    python benchmarks/size_model_terms.py --write    # also rewrite molid/data/virial_model.csv

Each term of ``molid/data/virial_model.csv`` (u(B) of the Tsonopoulos correlation, the
factors k of the truncated virial series, the vapour-pressure terms of Ambrose-Walton and
Lee-Kesler) is sized per polar class on a SIZING set and its coverage reported on a separate
CHECK set, so the check figure is out-of-sample.

The split, by fluid and by state:

* Fluids: the ``split`` column of ``tests/coolprop_fluids.csv`` (within each polar class the
  CoolProp fluids alternate in alphabetical order: sizing, check, ...). Candidates without a
  CoolProp equation that enter the vapour-pressure terms through McGarry's Wagner fits
  alternate the same way among themselves. Water, alone in its class, is split by state only.
* States: gases (normal boiling point below 15 degC) are sized at 15, 25, 35 degC and checked at
  20, 30 degC; vapours of liquids are sized at 60-110 degC in 10 K steps and checked at
  65-105 degC in 10 K steps, where the reference saturation pressure is >= 50 kPa. The
  truncation term is sized at 95 kPa (gases) or min(101.325 kPa, 0.8 p_sat) (vapours) and
  checked at 105 kPa or min(95 kPa, 0.7 p_sat).

Sizing rule: u is the smallest value, rounded up to two significant digits, for which 95 % of
the sizing deviations lie within 2u (u(B) keeps its absolute floor of 3e-7 m3/mol). The
vapour-pressure terms are sized on the room-temperature and hot ranges separately and the larger
is kept. References: CoolProp 8.0 (I. H. Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498) and
J. McGarry, Ind. Eng. Chem. Process Des. Dev. 22 (1983) 313, as tabulated in chemicals.
"""

from __future__ import annotations

import argparse
import csv
import io
import math
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from chemicals import vapor_pressure as chemicals_vapour
from CoolProp import CoolProp as CP

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from molid.candidates.library import load_library  # noqa: E402
from molid.physics import vapour_pressure, virial  # noqa: E402
from molid.physics.constants import GAS_CONSTANT  # noqa: E402

MODEL_FILE = ROOT / "molid" / "data" / "virial_model.csv"
ABSOLUTE_FLOOR_B = 3.0e-7  # m3/mol, kept from the existing file (matters near the Boyle point)
COVERAGE = 0.95
TRUNCATION_THRESHOLD = 0.005  # |Bp/RT| below which the neglected terms are below 3e-5 in Z
CELSIUS = 273.15


@dataclass(frozen=True)
class StateSet:
    """Temperatures [K] and pressures of one set (sizing or check)."""

    name: str
    gas_temperatures: tuple
    vapour_temperatures: tuple
    gas_pressure: float
    vapour_pressure_cap: float
    vapour_pressure_fraction: float

    def vapour_pressure(self, saturation):
        """Pressure [Pa] of a vapour state below the saturation pressure [Pa]."""
        return min(self.vapour_pressure_cap, self.vapour_pressure_fraction * saturation)


SIZING = StateSet("sizing", tuple(CELSIUS + t for t in (15.0, 25.0, 35.0)),
                  tuple(CELSIUS + t for t in range(60, 111, 10)), 95e3, 101325.0, 0.8)
CHECK = StateSet("check", tuple(CELSIUS + t for t in (20.0, 30.0)),
                 tuple(CELSIUS + t for t in range(65, 106, 10)), 105e3, 95e3, 0.7)


# ---- fluids and references ---------------------------------------------------------------


def library():
    """Return the candidate library indexed by name."""
    return load_library().set_index("name")


def coolprop_fluids():
    """Library name -> (CoolProp fluid, split) from tests/coolprop_fluids.csv."""
    table = pd.read_csv(ROOT / "tests" / "coolprop_fluids.csv", comment="#")
    return {row.library_name: (row.coolprop_name, row.split) for row in table.itertuples()}


def in_set(split, set_name):
    """Whether a fluid of this split enters the named set."""
    return split == "both" or split == set_name


def mcgarry_split(table):
    """Split of candidates that only McGarry's Wagner fits cover, alternating per class."""
    fits = chemicals_vapour.Psat_data_WagnerMcGarry
    mapped = coolprop_fluids()
    split = {}
    for _, group in table[table["has_critical_data"]].groupby("polar_class"):
        names = sorted(name for name in group.index if name not in mapped
                       and isinstance(group.loc[name, "cas"], str)
                       and group.loc[name, "cas"] in fits.index)
        for position, name in enumerate(names):
            split[name] = "sizing" if position % 2 == 0 else "check"
    return split


def saturation(fluid, temperature):
    """CoolProp saturation pressure [Pa]; +inf at or above the critical temperature."""
    if temperature >= CP.PropsSI("Tcrit", fluid):
        return math.inf
    return CP.PropsSI("P", "T", temperature, "Q", 0, fluid)


def coolprop_B(fluid, temperature):
    """CoolProp's second virial coefficient [m3/mol] (zero-density limit of the EOS)."""
    state = CP.AbstractState("HEOS", fluid)
    state.update(CP.DmolarT_INPUTS, 1e-6, float(temperature))
    return state.Bvirial()


def library_B(row, temperature):
    """Tsonopoulos B [m3/mol] with the library's constants."""
    return float(virial.second_virial(
        temperature, row["critical_temperature"], row["critical_pressure"], row["acentric_factor"],
        float(np.nan_to_num(row["dipole_moment"])), row["polar_class"], row["molar_mass"],
        row["hill"] if isinstance(row["hill"], str) else ""))


def states(table, name, fluid, state_set):
    """(T, p) of a fluid in a set: gases at the gas grid, vapours where p_sat >= 50 kPa."""
    if table.loc[name, "normal_boiling_point"] < CELSIUS + 15.0:
        return [(T, state_set.gas_pressure) for T in state_set.gas_temperatures]
    found = []
    for T in state_set.vapour_temperatures:
        p_sat = saturation(fluid, T)
        if p_sat >= 50e3:
            found.append((T, state_set.vapour_pressure(p_sat)))
    return found


# ---- deviations ----------------------------------------------------------------------------
# Each row: class, fluid, |deviation|, scale and floor, so that a term u covers the state within
# m·u when |deviation| <= m·sqrt((u·scale)² + floor²).


def b_rows(table, state_set):
    """Tsonopoulos B against CoolProp's B at the set's states."""
    rows = []
    for name, (fluid, split) in coolprop_fluids().items():
        if not in_set(split, state_set.name):
            continue
        for T, _ in states(table, name, fluid, state_set):
            reference = coolprop_B(fluid, T)
            rows.append({"polar_class": table.loc[name, "polar_class"], "fluid": name, "hot": T > 330,
                         "deviation": abs(library_B(table.loc[name], T) - reference),
                         "scale": abs(reference), "floor": ABSOLUTE_FLOOR_B})
    return pd.DataFrame(rows)


def truncation_rows(table, state_set, form):
    """Z of the series truncated after CoolProp's B against the EOS Z, where |Bp/RT| > 0.005."""
    rows = []
    for name, (fluid, split) in coolprop_fluids().items():
        if not in_set(split, state_set.name):
            continue
        for T, p in states(table, name, fluid, state_set):
            B = coolprop_B(fluid, T)
            beta = B * p / (GAS_CONSTANT * T)
            if abs(beta) <= TRUNCATION_THRESHOLD:
                continue
            reference = CP.PropsSI("Z", "T", T, "P", p, fluid)
            truncated = float(virial.compressibility_factor(T, p, B, form=form))
            rows.append({"polar_class": table.loc[name, "polar_class"], "fluid": name, "hot": T > 330,
                         "deviation": abs(truncated - reference), "scale": beta**2, "floor": 0.0})
    return pd.DataFrame(rows)


def reference_saturation(name, fluid, temperature):
    """CoolProp's saturation pressure, or McGarry's Wagner fit where CoolProp has none."""
    if fluid is not None:
        return saturation(fluid, temperature)
    fit = chemicals_vapour.Psat_data_WagnerMcGarry.loc[library().loc[name, "cas"]]
    return chemicals_vapour.Wagner_original(temperature, fit.Tc, fit.Pc, fit.A, fit.B, fit.C, fit.D)


def vapour_subjects(table, state_set):
    """(name, CoolProp fluid or None, lower and upper temperature limit [K]) of the set."""
    subjects = []
    fits = chemicals_vapour.Psat_data_WagnerMcGarry
    for name, (fluid, split) in coolprop_fluids().items():
        if in_set(split, state_set.name) and table.loc[name, "has_critical_data"]:
            subjects.append((name, fluid, CP.PropsSI("Ttriple", fluid), CP.PropsSI("Tcrit", fluid)))
    for name, split in mcgarry_split(table).items():
        if in_set(split, state_set.name):
            fit = fits.loc[table.loc[name, "cas"]]
            subjects.append((name, None, fit.Tmin, fit.Tc))
    return subjects


def vapour_rows(table, state_set, method):
    """Relative deviation of a vapour-pressure estimate from the reference, below Tc."""
    estimate = {"ambrose-walton": vapour_pressure.vapour_pressure_ambrose_walton,
                "lee-kesler": vapour_pressure.vapour_pressure_lee_kesler}[method]
    rows = []
    for name, fluid, lower, upper in vapour_subjects(table, state_set):
        row = table.loc[name]
        for T in state_set.gas_temperatures + state_set.vapour_temperatures:
            if T >= min(row["critical_temperature"], upper) or T < lower:
                continue
            value = float(estimate(T, row["critical_temperature"], row["critical_pressure"],
                                   row["acentric_factor"]))
            rows.append({"polar_class": row["polar_class"], "fluid": name, "hot": T > 330,
                         "deviation": abs(value / reference_saturation(name, fluid, T) - 1),
                         "scale": 1.0, "floor": 0.0})
    return pd.DataFrame(rows)


# ---- sizing and coverage -------------------------------------------------------------------


def round_up(value, digits=2):
    """Round a positive number up to the given number of significant digits."""
    if value <= 0:
        return 0.0
    exponent = math.floor(math.log10(value)) - digits + 1
    return round(math.ceil(round(value / 10**exponent, 9)) * 10**exponent, 12)


def size(rows):
    """Smallest u (two digits, rounded up) with 95 % of the rows within 2u."""
    if rows.empty:
        return math.nan
    needed = np.sqrt(np.maximum((rows["deviation"] / 2) ** 2 - rows["floor"] ** 2, 0)) / rows["scale"]
    needed = np.sort(needed.to_numpy())
    return round_up(float(needed[math.ceil(COVERAGE * len(needed)) - 1]))


def coverage(rows, u, multiple):
    """Fraction of rows within multiple·u."""
    if rows.empty:
        return math.nan
    allowance = multiple * np.sqrt((u * rows["scale"]) ** 2 + rows["floor"] ** 2)
    return float(np.mean(rows["deviation"] <= allowance))


def binomial_tail(count, n, probability, upper):
    """P(X >= count) (upper) or P(X <= count) for X ~ Binomial(n, probability)."""
    values = range(count, n + 1) if upper else range(0, count + 1)
    return sum(math.comb(n, k) * probability**k * (1 - probability) ** (n - k) for k in values)


def check_verdict(rows, u):
    """'low', 'high' or 'ok': the check set's states outside 2u against 5 % expected.

    'low' when that many outside would happen with probability below 5 % if 95 % were covered;
    'high' when so few outside would happen with probability below 1 % (none outside of 90 or
    more states, i.e. above 99.5 % within 2u where n can tell).
    """
    if rows.empty:
        return "no check states"
    outside = int(np.sum(rows["deviation"] > 2 * np.sqrt((u * rows["scale"]) ** 2 + rows["floor"] ** 2)))
    # under-coverage is tested at 5 %, over-coverage at 1 %: a too-small term misleads users more
    if binomial_tail(outside, len(rows), 1 - COVERAGE, upper=True) < 0.05:
        return "low"
    if binomial_tail(outside, len(rows), 1 - COVERAGE, upper=False) < 0.01:
        return "high"
    return "ok"


def worst(rows):
    """Largest relative deviation and its fluid."""
    ratio = rows["deviation"] / rows["scale"]
    index = ratio.idxmax()
    return float(ratio[index]), rows.loc[index, "fluid"]


@dataclass
class Term:
    """One class's term: sized value and the figures of both sets."""

    u: float
    sizing: pd.DataFrame
    check: pd.DataFrame
    sized: float = math.nan
    verdict: str = ""

    def figures(self):
        """N fluids, n states and coverage within 2u and u, for sizing and check."""
        result = {}
        for label, rows in (("sizing", self.sizing), ("check", self.check)):
            result[label] = (rows["fluid"].nunique() if len(rows) else 0, len(rows),
                             coverage(rows, self.u, 2), coverage(rows, self.u, 1))
        return result


def select(frame, polar_class):
    """Rows of one class (an empty frame if none)."""
    if frame.empty:
        return frame
    return frame[frame["polar_class"] == polar_class]


def size_all(table):
    """Every class's terms: {class: {term: Term}}."""
    frames = {"B": (b_rows(table, SIZING), b_rows(table, CHECK))}
    for form in ("pressure", "density"):
        frames[f"k_{form}"] = (truncation_rows(table, SIZING, form), truncation_rows(table, CHECK, form))
    for method in ("ambrose-walton", "lee-kesler"):
        frames[method] = (vapour_rows(table, SIZING, method), vapour_rows(table, CHECK, method))
    terms = {}
    for polar_class in virial.POLAR_CLASSES:
        terms[polar_class] = {}
        for term, (sizing, check) in frames.items():
            sizing, check = select(sizing, polar_class), select(check, polar_class)
            if term in ("ambrose-walton", "lee-kesler"):
                # the larger of the room-temperature and hot terms, so both kinds of run are covered
                u = max(size(sizing[sizing["hot"] == hot]) if (sizing["hot"] == hot).any() else 0.0
                        for hot in (False, True)) if len(sizing) else math.nan
            else:
                u = size(sizing)
            terms[polar_class][term] = Term(u, sizing, check)
    # quantum gases: no state reaches |Bp/RT| > 0.005, so the nonpolar factors are used
    for form in ("pressure", "density"):
        terms["quantum"][f"k_{form}"].u = terms["nonpolar"][f"k_{form}"].u
    hold_under_covering_terms(terms)
    return terms


FILE_COLUMNS = {"B": "u_relative_B", "k_pressure": "k_truncation_pressure_form",
                "k_density": "k_truncation_density_form",
                "ambrose-walton": "u_relative_vapour_pressure_ambrose_walton",
                "lee-kesler": "u_relative_vapour_pressure_lee_kesler"}


def hold_under_covering_terms(terms):
    """Keep the file's value where the split-sized term under-covers the check set.

    A class term sized on half a small class's fluids can miss a fluid of the other half by far
    (the class is not homogeneous); writing it would make the tool overconfident for that fluid.
    Such terms are held at the file's value, sized on all fluids, and reported as held.
    """
    rows = csv.DictReader(line for line in MODEL_FILE.read_text(encoding="utf-8").splitlines()
                          if not line.startswith("#"))
    current = {row["polar_class"]: row for row in rows}
    for polar_class, by_term in terms.items():
        for term, item in by_term.items():
            item.sized = item.u
            item.verdict = check_verdict(item.check, item.u)
            if item.verdict == "low":
                item.u = float(current[polar_class][FILE_COLUMNS[term]])
                item.verdict = f"held at the file's value ({item.sized:.2g} covered too few)"


# ---- output ------------------------------------------------------------------------------


def percent(value):
    """Format a fraction as a percentage, or a dash when there is none."""
    return "-" if math.isnan(value) else f"{100 * value:.1f}"


def print_table(terms):
    """Per class and term: sizing n, u, check n and check coverage within 2u and u."""
    header = (f"{'class':<19}{'term':<16}{'sized u':>9}{'file u':>8}  {'sizing fl/st':>12}{'in 2u':>7}"
              f"  {'check fl/st':>11}{'in 2u':>7}{'in 1u':>7}  verdict")
    print(header)
    print("-" * len(header))
    for polar_class, by_term in terms.items():
        for term, item in by_term.items():
            figures = item.figures()
            fluids, count, within_two, _ = figures["sizing"]
            check_fluids, check_count, check_two, check_one = figures["check"]
            print(f"{polar_class:<19}{term:<16}{item.sized:>9.3g}{item.u:>8.3g}  {fluids:>5}/{count:<6}"
                  f"{percent(within_two):>7}  {check_fluids:>4}/{check_count:<6}{percent(check_two):>7}"
                  f"{percent(check_one):>7}  {item.verdict}")


def _set_text(item, set_name, fluid_word="substances"):
    """'n substances, m states; x % within 2u, y % within u' for one set of a term."""
    fluids, count, within_two, within_one = item.figures()[set_name]
    word = fluid_word if fluids != 1 else fluid_word[:-1]
    text = f"{fluids} {word}, {count} states; {percent(within_two)} % within 2u"
    if set_name == "check":
        text += f", {percent(within_one)} % within u"
    return text


def _check_words(polar_class):
    return ("the same substance at the check states" if polar_class == "water"
            else "the class's other substances at the check states")


def basis_B(polar_class, item):
    """Text of the basis_B column."""
    largest, fluid = worst(item.sizing)
    return (f"Tsonopoulos B (molid.physics.virial.second_virial, library constants) vs CoolProp "
            f"{CP.get_global_param_string('version')} reference-EOS B. Sizing (gases 15/25/35 degC, "
            f"vapours 60-110 degC in 10 K steps): {_set_text(item, 'sizing')}; "
            f"|dB|/|B| max {largest:.3f} ({fluid}). "
            f"Check ({_check_words(polar_class)}, gases 20/30 degC, vapours 65-105 degC): "
            f"{_set_text(item, 'check')}")


def basis_truncation(polar_class, pressure, density):
    """Text of the basis_truncation column."""
    if polar_class == "quantum":
        return ("no state with |Bp/RT| > 0.005 (the neglected terms are below 1e-6 in Z); "
                "the nonpolar factors are used")
    largest_pressure, _ = worst(pressure.sizing)
    largest_density, _ = worst(density.sizing)
    text = (f"States with |Bp/RT| > 0.005. Sizing (gases 15/25/35 degC at 95 kPa, vapours "
            f"60-110 degC at min(101.325 kPa, 0.8 p_sat)): {_set_text(pressure, 'sizing')} (pressure form), "
            f"{percent(density.figures()['sizing'][2])} % (density form); neglected/(Bp/RT)^2 max "
            f"{largest_pressure:.2f} (pressure form), {largest_density:.2f} (density form). "
            f"Check ({_check_words(polar_class)}, gases 20/30 degC at 105 kPa, vapours 65-105 degC at "
            f"min(95 kPa, 0.7 p_sat)): ")
    if pressure.check.empty:
        return text + "no state"
    return text + (f"{_set_text(pressure, 'check')} (pressure form); "
                   f"{percent(density.figures()['check'][2])} % within 2u, "
                   f"{percent(density.figures()['check'][3])} % within u (density form)")


def basis_vapour(polar_class, walton, kesler):
    """Text of the basis_vapour_pressure column."""
    if polar_class == "quantum":
        return ("above the critical temperature at every laboratory temperature: the estimates "
                "return +inf and the term is never used")
    ranges = []
    for name, item in (("Ambrose-Walton", walton), ("Lee-Kesler", kesler)):
        room = size(item.sizing[~item.sizing["hot"]])
        hot = size(item.sizing[item.sizing["hot"]])
        ranges.append(f"{name} {room:.2g} and {hot:.2g}")
    largest, fluid = worst(walton.sizing)
    return (f"Against CoolProp, or McGarry's Wagner fits for candidates CoolProp lacks. Sizing "
            f"(15/25/35 degC and 60-110 degC in 10 K steps): {_set_text(walton, 'sizing')} (Ambrose-Walton), "
            f"{percent(kesler.figures()['sizing'][2])} % (Lee-Kesler); Ambrose-Walton max {largest:.3f} "
            f"({fluid}); u is the larger of the room and hot ranges' terms ({'; '.join(ranges)}). "
            f"Check ({_check_words(polar_class)}, 20/30 degC and 65-105 degC): "
            f"{_set_text(walton, 'check')} (Ambrose-Walton); "
            f"{percent(kesler.figures()['check'][2])} % within 2u, "
            f"{percent(kesler.figures()['check'][3])} % within u (Lee-Kesler)")


def held_note(label, item):
    """Sentence for a term held at the file's value, or an empty string."""
    if not item.verdict.startswith("held"):
        return ""
    return (f" HELD{label}: sized on the sizing set u = {item.sized:.2g} covered only "
            f"{percent(coverage(item.check, item.sized, 2))} % of the check set within 2u, so the earlier "
            f"value {item.u:.2g}, sized on all fluids, is kept; its check figure is not out-of-sample "
            f"by fluid.")


def write_model_file(terms):
    """Rewrite the rows of virial_model.csv, keeping its comment lines."""
    lines = MODEL_FILE.read_text(encoding="utf-8").splitlines()
    comments = [line for line in lines if line.startswith("#")]
    columns = next(line for line in lines if not line.startswith("#")).split(",")
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(columns)
    for polar_class, by_term in terms.items():
        quantum = polar_class == "quantum"
        writer.writerow([
            polar_class, f"{by_term['B'].u:.2g}", f"{ABSOLUTE_FLOOR_B:.1e}",
            f"{by_term['k_pressure'].u:.2g}", f"{by_term['k_density'].u:.2g}",
            0 if quantum else f"{by_term['ambrose-walton'].u:.2g}",
            0 if quantum else f"{by_term['lee-kesler'].u:.2g}",
            basis_B(polar_class, by_term["B"]) + held_note("", by_term["B"]),
            basis_truncation(polar_class, by_term["k_pressure"], by_term["k_density"])
            + held_note(" (pressure form)", by_term["k_pressure"])
            + held_note(" (density form)", by_term["k_density"]),
            basis_vapour(polar_class, by_term["ambrose-walton"], by_term["lee-kesler"])
            + held_note(" (Ambrose-Walton)", by_term["ambrose-walton"])
            + held_note(" (Lee-Kesler)", by_term["lee-kesler"]),
        ])
    MODEL_FILE.write_text("\n".join(comments) + "\n" + buffer.getvalue(), encoding="utf-8")


def main():
    """Size, print, and optionally write the model file."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--write", action="store_true", help="rewrite molid/data/virial_model.csv")
    arguments = parser.parse_args()
    terms = size_all(library())
    print_table(terms)
    if arguments.write:
        write_model_file(terms)
        print(f"wrote {MODEL_FILE.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
