"""What a plan says about the parts of u that replicates cannot average, and about gas lost to water.

Sources: R. Sander, Atmos. Chem. Phys. 15 (2015) 4399, Henry's-law solubility of carbon dioxide,
H^cp = 3.3e-4 mol/(m³·Pa) at 298.15 K with d ln H/d(1/T) = 2400 K; the gas constant
R = 8.314462618 J/(mol·K) (SI 2019).
"""

import math

import pytest

from molid.planning.plan import make_plan


def test_carbon_dioxide_over_water_by_hand():
    """Over water at 21 °C the plan notes the share of CO2 an equal volume of water would take up.

    By hand (Sander 2015): H(294.15 K) = 3.3e-4 · exp(2400 · (1/294.15 − 1/298.15)) = 3.68e-4
    mol/(m³·Pa); with equal volumes the dissolved share is x = H·R·T/(1 + H·R·T) = 0.474, and
    the result reads up to x/(1 − x) = 90 % high. A syringe plan says nothing of it.
    """
    henry = 3.3e-4 * math.exp(2400 * (1 / 294.15 - 1 / 298.15))
    share = henry * 8.314462618 * 294.15 / (1 + henry * 8.314462618 * 294.15)
    plan = make_plan(method="over-water", unknowns="carbon dioxide, propane")
    note = next(note for note in plan["notes"] if note.startswith("gas lost to the water"))
    assert f"carbon dioxide about {share * 100:.2g} %" in note
    assert f"up to {share / (1 - share) * 100:.2g} % high" in note
    syringe = make_plan(method="syringe", unknowns="carbon dioxide")
    assert not any("gas lost" in note for note in syringe["notes"])


def test_common_parts_named_for_the_pair_and_the_replicates():
    """Checks behaviour: the part of u that replicates cannot average is named, with N runs as with one.

    Argon read as propyne is limited by propyne's real-gas model term, CO2 read as N2O by the
    assumed humidity; with an assumed humidity replicates cannot help, and the largest part of
    u with 50 runs is a part common to every run.
    """
    plan = make_plan(method="syringe", unknowns="argon, carbon dioxide", against_library=True, replicates=50)
    reasons = {(pair["a"], pair["b"]): pair["reason"] for pair in plan["pairs"]}
    assert "real-gas model term of propyne" in reasons[("argon", "propyne")]
    assert "room humidity, assumed" in reasons[("carbon dioxide", "nitrous oxide")]
    for item in plan["unknowns"]:
        replicates = item["replicates"]
        assert replicates["shared_dominates"] and replicates["dominant_input"] == "humidity"
        assert replicates["dominant_percent"] > item["dominant_percent"]
        parts = math.hypot(replicates["u_shared"], replicates["u_independent"])
        assert replicates["u"] == pytest.approx(parts, rel=1e-3)
    assert any("humidity" in note and "--humidity" in note for note in plan["notes"])
