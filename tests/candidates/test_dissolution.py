"""Tests for molid.candidates.dissolution and the Henry's-law data file molid/data/henry.csv."""

import csv

import chemicals
import numpy as np
import pytest

from molid.candidates.dissolution import (
    HENRY_PATH,
    dissolution_bias,
    henry_constants,
    henry_solubility,
    load_henry_table,
    not_collectable,
)
from molid.candidates.library import load_library

REQUIRED = ["hydrogen", "helium", "nitrogen", "oxygen", "argon", "methane", "ethane", "propane", "n-butane",
            "isobutane", "carbon monoxide", "carbon dioxide", "nitrous oxide", "hydrogen sulfide",
            "sulfur dioxide", "ammonia", "hydrogen chloride", "chlorine", "ethylene", "acetylene",
            "dimethyl ether", "sulfur hexafluoride"]


def _rows():
    with HENRY_PATH.open(encoding="utf-8", newline="") as handle:
        header = [line for line in handle if line.startswith("#")]
    with HENRY_PATH.open(encoding="utf-8", newline="") as handle:
        rows = list(csv.DictReader(line for line in handle if not line.startswith("#")))
    return header, rows


def test_file_has_sources_units_and_library_names():
    """Checks behaviour: each row has a source, each column a unit in the header, each name a candidate."""
    header, rows = _rows()
    text = "".join(header)
    assert "[mol/(m³·Pa)]" in text and "d(1/T) at 298.15 K [K]" in text
    assert "doi:10.5194/acp-15-4399-2015" in text
    library_names = set(load_library()["name"])
    names = [row["name"] for row in rows]
    assert len(names) == len(set(names))
    assert set(REQUIRED) <= set(names)
    assert set(names) <= library_names
    for row in rows:
        assert row["source"].strip(), row["name"]
        assert row["collectable"] in ("yes", "no"), row["name"]
        assert float(row["henry_cp_298_mol_per_m3_Pa"]) > 0.0


def test_every_not_collectable_row_names_a_reason():
    """Checks behaviour: collectable = no always comes with a reason; ammonia, HCl and SO2 are among them."""
    _, rows = _rows()
    refused = {row["name"] for row in rows if row["collectable"] == "no"}
    assert {"ammonia", "hydrogen chloride", "sulfur dioxide"} <= refused
    assert all(row["reason"].strip() for row in rows if row["collectable"] == "no")
    assert not_collectable(sorted(refused)).all()
    assert not not_collectable(["nitrogen", "oxygen", "not a gas"]).any()


# Mole-fraction solubility x2 at 298.15 K and 101.325 kPa partial pressure of the gas, CRC Handbook of
# Chemistry and Physics, "Solubility of selected gases in water" (values from memory).
CRC_MOLE_FRACTION_298 = {"carbon dioxide": 6.15e-4, "nitrogen": 1.18e-5, "oxygen": 2.29e-5}


@pytest.mark.parametrize("name", sorted(CRC_MOLE_FRACTION_298))
def test_constants_against_handbook(name):
    """H^cp(298.15 K) of CO2, N2, O2 agrees with the CRC Handbook mole-fraction solubility within 5 %.

    chemicals 1.5 has no Henry's-law data of its own, only scale conversions: its Henry_converter turns
    the handbook's x2/p (Hxp, 1/atm) into H^cp with water's molar density 55 344.6 mol/m³. The table
    values carry two significant digits (up to 4 % rounding), hence 5 %.
    """
    hxp = CRC_MOLE_FRACTION_298[name]  # x2 per atm of the gas = Hxp [1/atm]
    reference = chemicals.solubility.Henry_converter(hxp, "Hxp", "Hcp", rhom=55344.59, MW=18.01528)
    henry_298, _ = henry_constants([name])
    assert henry_298[0] == pytest.approx(reference, rel=0.05)


def test_oxygen_temperature_dependence_against_handbook():
    """O2 solubility 10 °C → 25 °C: the van 't Hoff ratio matches tabulated oxygen solubility within 5 %.

    Air-saturated fresh water at 101.325 kPa holds 11.29 mg/L O2 at 10 °C and 8.26 mg/L at 25 °C
    (USGS / Benson & Krause 1984 oxygen solubility table; values from memory). The O2 partial pressure
    is 0.20946 (p − p_sat(water)), p_sat = 1.228 kPa and 3.169 kPa (IAPWS; from memory), so the ratio
    of H^cp is (11.29/8.26) × (101.325 − 3.169)/(101.325 − 1.228) = 1.340.
    """
    expected = (11.29 / 8.26) * (101.325 - 3.169) / (101.325 - 1.228)
    henry_298, slope = henry_constants(["oxygen"])
    ratio = henry_solubility(283.15, henry_298, slope) / henry_solubility(298.15, henry_298, slope)
    assert ratio[0] == pytest.approx(expected, rel=0.05)


def test_solubility_falls_with_temperature():
    """Checks behaviour: for every gas with a temperature dependence H^cp falls from 5 °C to 35 °C."""
    names = sorted(load_henry_table())
    henry_298, slope = henry_constants(names)
    known = np.isfinite(slope)
    assert known.sum() >= 20
    cold = henry_solubility(278.15, henry_298[known], slope[known])
    warm = henry_solubility(308.15, henry_298[known], slope[known])
    assert np.all(warm < cold)


def test_dissolution_fraction_by_hand():
    """CO2, 25 °C, 100 kPa, 100 mL gas over 100 mL water: 45.0 % dissolves (hand computation).

    n_g = pV/(RT) = 1e5 × 1e-4 / (8.314462618 × 298.15) = 4.0339e-3 mol (ideal gas, R from SI 2019);
    n_aq = H^cp p V_w = 3.3e-4 × 1e5 × 1e-4 = 3.3e-3 mol (Henry's law, H^cp from Sander 2015);
    x = 3.3 / (4.0339 + 3.3) = 0.44996.
    """
    x = dissolution_bias(np.array([298.15, 298.15]), np.array([1e5, 1e5]), np.array([1e-4, 2e-4]),
                         np.array([1e-4, 1e-4]), ["carbon dioxide", "no such gas"])
    assert x.shape == (2, 2)
    assert x[0, 0] == pytest.approx(3.3e-3 / (4.0339e-3 + 3.3e-3), rel=1e-4)
    assert x[1, 0] == pytest.approx(3.3e-3 / (2 * 4.0339e-3 + 3.3e-3), rel=1e-4)
    assert np.isnan(x[:, 1]).all()


def test_dissolution_is_complex_step_safe():
    """Checks behaviour: the complex-step derivative in T equals a central difference (1e-6)."""
    args = (np.array([1e5]), np.array([1e-4]), np.array([1e-4]), ["carbon dioxide"])
    step = 1e-20
    complex_derivative = np.imag(dissolution_bias(np.array([298.15 + 1j * step]), *args)) / step
    upper, lower = dissolution_bias(np.array([298.16]), *args), dissolution_bias(np.array([298.14]), *args)
    central = (upper - lower) / 0.02
    assert complex_derivative[0, 0] == pytest.approx(central[0, 0], rel=1e-6)
