"""``molid identify --monte-carlo``: the GUM Supplement 1 check beside the linear interval.

Sources: JCGM 101:2008 (GUM Supplement 1) 7.7.1 (probabilistically symmetric interval) and 8
(a near-linear model gives the linear interval); JCGM 100:2008 (GUM) Table G.1 (k = 1.960 for 95 %
of a normal distribution); a monotone function maps the quantiles of its input onto those of its
output (common practice), which gives the exact interval of a run whose only sizeable uncertainty
is its volume. Weighings are simulated from CoolProp densities and humid air.
"""

import csv
import json
import subprocess
import sys

import numpy as np
import pytest

from molid import __version__
from molid.cli import main
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY, GAS_CONSTANT

simulate = pytest.importorskip("simulate")

HEADER = ("run,method,mass_tare [g],mass_filled [g],volume [mL],temperature [K],pressure [kPa],"
          "humidity [%]")
K95 = 1.959963984540054  # GUM Table G.1: 1.960


def _row(run, method, fluid, volume_ml, temperature=293.15, pressure=100e3, humidity=45, extra=""):
    air = simulate.air_density(temperature, pressure, humidity / 100)
    density, _ = simulate.gas_density(fluid, temperature, pressure)
    volume = volume_ml * 1e-6
    tare, filled = simulate.readings(method, density * volume, air, volume)
    return (f"{run},{method},{tare * 1e3:.4f},{filled * 1e3:.4f},{volume_ml},{temperature},"
            f"{pressure / 1e3},{humidity}{extra}")


def _write(tmp_path, name, header, rows):
    path = tmp_path / name
    path.write_text("\n".join([header, *rows]) + "\n", encoding="utf-8")
    return path


def _document(capsys, *arguments):
    code = main(["identify", *map(str, arguments), "--json"])
    return code, json.loads(capsys.readouterr().out)


def test_bulb_of_carbon_dioxide_agrees_with_the_linear_interval(tmp_path, capsys):
    """A 0.9 g bulb of CO2 is near-linear: both Monte Carlo ends within 1 % of the 1.96u half-width.

    Source: JCGM 101:2008, 8 (the linear interval holds for a near-linear model); GUM Table G.1.
    At 10⁶ trials an end's noise is about 2.7u/√M = 0.003u, 0.14 % of 1.96u (JCGM 101:2008, 7.9).
    """
    path = _write(tmp_path, "co2.csv", HEADER, [_row("b1", "evacuated-bulb", "CO2", 500)])
    code, document = _document(capsys, path, "--monte-carlo", 1_000_000, "--seed", 4)
    assert code == 0
    run = document["results"][0]
    block, check = run["molar_mass"], run["monte_carlo"]
    half_width = K95 * block["u"]
    assert check["low"] == pytest.approx(block["value"] - half_width, abs=0.01 * half_width)
    assert check["high"] == pytest.approx(block["value"] + half_width, abs=0.01 * half_width)
    assert check["agrees_with_linear"] is True
    assert (check["N"], check["seed"]) == (1_000_000, 4)


def test_helium_syringe_differs_only_when_its_volume_is_poorly_known(tmp_path, capsys):
    """A few mg of helium in a syringe: linear while the balance dominates, skewed by an uncertain volume.

    Measured, not assumed: with the default profile (volume to 0.1 %) the molar mass is linear in
    the balance readings that dominate its uncertainty, and the Monte Carlo agrees. With the volume
    read to ±1 mL on 30 mL (u = 1 mL) and every other u zero, M = (ΔI(1 − ρa/ρc) + ρaV)RT/(pV) rises
    monotonically with V, so the exact 95 % ends are M at V ∓ 1.960 u(V) (common practice: quantiles
    through a monotone function; OIML D 28 for the weighing, ρc = 8000 kg/m³); the Monte Carlo finds
    them, and the linear ends miss them by more than the tolerance of JCGM 101:2008, 8.1.
    """
    extra = ",u_volume [mL],u_mass [g],u_temperature [K],u_pressure [kPa],u_humidity [%]"
    rows = [_row("default", "syringe", "Helium", 30, extra=",,,,,"),
            _row("loose", "syringe", "Helium", 30, extra=",1,0,0,0,0")]
    path = _write(tmp_path, "helium.csv", HEADER + extra, rows)
    code, document = _document(capsys, path, "--monte-carlo", 400_000)
    assert code == 0
    default, loose = document["results"]
    assert default["gas_mass_g"] < 0.01  # a few milligrams
    assert default["monte_carlo"]["agrees_with_linear"] is True
    assert loose["monte_carlo"]["agrees_with_linear"] is False
    tare, filled = (float(cell) * 1e-3 for cell in rows[1].split(",")[2:4])
    air = loose["air_density_kg_m3"]

    def molar_mass(volume):
        mass = (filled - tare) * (1 - air / CONVENTIONAL_MASS_DENSITY) + air * volume
        return mass * GAS_CONSTANT * 293.15 / (100e3 * volume) * 1e3

    exact = molar_mass(30e-6 - K95 * 1e-6), molar_mass(30e-6 + K95 * 1e-6)
    block = loose["molar_mass"]
    assert block["value"] == pytest.approx(molar_mass(30e-6), rel=1e-6)
    # the other inputs left (air-density formula, assumed CO2) move the ends by under 0.1 %
    assert loose["monte_carlo"]["low"] == pytest.approx(exact[0], rel=3e-3)
    assert loose["monte_carlo"]["high"] == pytest.approx(exact[1], rel=3e-3)
    linear_low = block["value"] - K95 * block["u"]
    assert abs(linear_low - exact[0]) > 0.05  # δ = 0.05 g/mol for u = 0.8 g/mol


def test_seed_makes_the_output_reproducible(tmp_path, capsys):
    """Checks behaviour: the same seed gives the same bytes, another seed other numbers, no seed is seed 0."""
    path = _write(tmp_path, "co2.csv", HEADER, [_row("b1", "evacuated-bulb", "CO2", 500),
                                                 _row("b2", "evacuated-bulb", "CO2", 250)])
    outputs = []
    for seed in (["--seed", "7"], ["--seed", "7"], ["--seed", "8"], [], ["--seed", "0"]):
        assert main(["identify", str(path), "--json", "--monte-carlo", "5000", *seed]) == 0
        outputs.append(capsys.readouterr().out)
    # the bytes before the provenance, which records the seed as given (or none) and the time
    before = [text.split(',\n  "provenance": ')[0] for text in outputs]
    assert before[0] == before[1] and before[0] != before[2] and before[3] == before[4]
    first, other = json.loads(outputs[0])["results"][0], json.loads(outputs[2])["results"][0]
    assert first["monte_carlo"]["low"] != other["monte_carlo"]["low"]
    assert first["molar_mass"] == other["molar_mass"]  # the linear result does not move


def test_terminal_csv_and_json_carry_the_check(tmp_path, capsys):
    """Checks behaviour: a line for flagged runs only and one summary; CSV columns added at the end; keys."""
    extra = ",u_volume [mL]"
    path = _write(tmp_path, "mixed.csv", HEADER + extra, [
        _row("loose", "syringe", "Helium", 30, extra=",1"),
        _row("bulb", "evacuated-bulb", "CO2", 500, extra=","),
        "broken,evacuated-bulb,oops,1,500,293.15,100,45,"])
    assert main(["identify", str(path), "--monte-carlo", "100000"]) == 1
    lines = capsys.readouterr().out.splitlines()
    flagged = [index for index, line in enumerate(lines) if "Monte Carlo 95 %" in line]
    assert len(flagged) == 1 and lines[flagged[0] - 1].startswith("loose")
    assert sum(line.startswith("Monte Carlo check") for line in lines) == 1
    plain, checked = tmp_path / "plain.csv", tmp_path / "checked.csv"
    assert main(["identify", str(path), "-o", str(plain)]) == 1
    assert main(["identify", str(path), "-o", str(checked), "--monte-carlo", "100000"]) == 1
    capsys.readouterr()
    before, after = (list(csv.reader(name.open(encoding="utf-8"))) for name in (plain, checked))
    added = ["monte_carlo_draws", "monte_carlo_seed", "monte_carlo_low_g_mol", "monte_carlo_high_g_mol",
             "monte_carlo_agrees_with_linear"]
    assert [row[:len(before[0])] for row in after] == before and after[0][len(before[0]):] == added
    assert [row[-1] for row in after[1:]] == ["no", "yes", ""]
    _, document = _document(capsys, path)
    assert all("monte_carlo" not in run for run in document["results"])
    _, document = _document(capsys, path, "--monte-carlo", 2000)
    assert document["results"][2]["monte_carlo"] is None
    assert set(document["results"][1]["monte_carlo"]) == {"N", "seed", "low", "high", "agrees_with_linear"}


def test_too_many_or_too_few_draws_are_refused(tmp_path, capsys):
    """Checks behaviour: draws × runs above 2·10⁷, under 1000 draws, or --seed alone: exit 2, a message."""
    rows = [_row(f"b{index}", "evacuated-bulb", "CO2", 500) for index in range(3)]
    path = _write(tmp_path, "co2.csv", HEADER, rows)
    for arguments, words in ((["--monte-carlo", "7000000"], "21,000,000 draws"),
                             (["--monte-carlo", "999"], "at least 1000"),
                             (["--seed", "3"], "--seed needs --monte-carlo")):
        assert main(["identify", str(path), *arguments]) == 2
        captured = capsys.readouterr()
        assert words in captured.err and captured.out == ""


def test_the_draws_are_vectorised_and_bounded():
    """Checks behaviour: a file of runs is drawn in blocks, not a model call per run."""
    from molid.pipeline import monte_carlo as module
    from molid.pipeline.identify import identify

    result = identify("sample_runs/qa_cylinders.csv", profile="sample_runs/qa_lab_profile.toml")
    calls = []
    original = module.monte_carlo_draws

    def counted(*arguments, **keywords):
        calls.append(1)
        return original(*arguments, **keywords)

    module.monte_carlo_draws = counted
    try:
        check = result.monte_carlo(20_000, seed=2)
    finally:
        module.monte_carlo_draws = original
    assert len(calls) < result.ok.sum() and np.isfinite(check.low[result.ok]).all()


def test_python_dash_m_runs_the_command_line():
    """Checks behaviour: ``python -m molid --version`` prints the version, exit 0."""
    completed = subprocess.run([sys.executable, "-m", "molid", "--version"], capture_output=True, text=True,
                               timeout=60)
    assert completed.returncode == 0 and completed.stdout.strip() == f"molid {__version__}"
