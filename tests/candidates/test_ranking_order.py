"""The order of the ranked candidates: verdict bands first, then the nearest molar masses."""

from pathlib import Path

import numpy as np
import pandas as pd

from molid.pipeline.identify import identify
from tests.simulate import air_density, gas_density, readings

DEMO = Path(__file__).resolve().parents[2] / "sample_runs"
FLUIDS = {"argon": "Argon", "carbon dioxide": "CarbonDioxide", "propane": "Propane",
          "R-134a": "R134a", "sulfur hexafluoride": "SulfurHexafluoride", "ammonia": "Ammonia"}


def _runs(rng):
    """Evacuated 500 mL bulb runs of six gases, CoolProp densities, QA noise (0.1 mg, 0.05 K, 0.03 kPa)."""
    rows = []
    for number, (name, fluid) in enumerate(list(FLUIDS.items()) * 3):
        T, p = 293.15 + 2 * rng.random(), 100.5e3
        density, _ = gas_density(fluid, T, p)
        tare, filled = readings("evacuated-bulb", density * 500e-6, air_density(T, p, 0.4), 500e-6)
        rows.append({"run": f"r{number}", "method": "evacuated-bulb", "expected": name,
                     "mass_tare [g]": f"{tare * 1e3 + rng.normal(0, 1e-4):.5f}",
                     "mass_filled [g]": f"{filled * 1e3 + rng.normal(0, 1e-4):.5f}",
                     "volume [mL]": "500", "temperature [K]": f"{T:.3f}", "pressure [kPa]": "100.5"})
    return pd.DataFrame(rows)


def test_excluded_candidates_follow_in_order_of_relative_difference():
    """Consistent and marginal candidates first; then excluded ones, non-decreasing |M_c − M_as_c|/M_c.

    Densities: CoolProp 8.0 reference equations of state (tests/simulate.py). The rule
    itself is molid's, so this checks behaviour on realistic runs.
    """
    result = identify(_runs(np.random.default_rng(4)))
    for position in range(len(result.table)):
        items = result.ranking.run_candidates(position, None)
        bands = [item["verdict"] for item in items]
        possible = [b for b in bands if b in ("consistent", "marginal", "excluded")]
        first_excluded = possible.index("excluded") if "excluded" in possible else len(possible)
        assert all(b in ("consistent", "marginal") for b in possible[:first_excluded])
        assert all(b == "excluded" for b in possible[first_excluded:])
        relative = [item["relative_difference"] for item in items if item["verdict"] == "excluded"]
        assert all(b >= a for a, b in zip(relative, relative[1:], strict=False)), relative
        unfit = [i for i, b in enumerate(bands) if b in ("condenses", "not-a-liquid", "dissolves")]
        assert all(i >= len(possible) for i in unfit)


def test_demo_r134a_runners_up_are_near_in_molar_mass():
    """Checks behaviour on invented demo data: under R-134a (102.03 g/mol), halogenated gases near 100 g/mol.

    sample_runs/qa_cylinders.csv, CYL-2233 (R-134a from CoolProp densities). Molar masses from
    the IUPAC standard atomic weights (periodictable).
    """
    result = identify(DEMO / "qa_cylinders.csv", profile=DEMO / "qa_lab_profile.toml")
    items = result.ranking.sample_candidates("CYL-2233", 5)
    assert items[0]["name"] == "R-134a"
    for item in items[1:]:
        assert 85 <= item["molar_mass"] <= 125, item
        assert any(halogen in (item["formula"] or "") for halogen in ("F", "Br", "Cl")), item
