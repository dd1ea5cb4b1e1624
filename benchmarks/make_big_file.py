"""Write a large run file for the throughput benchmark (synthetic, invented readings).

python benchmarks/make_big_file.py RUNS OUT.csv
"""

import sys

import numpy as np
import pandas as pd


def make_frame(runs: int, seed: int = 1) -> pd.DataFrame:
    """Runs of a few gases by the three methods, with noise; every 10th run a replicate pair."""
    rng = np.random.default_rng(seed)
    molar_mass = rng.choice([4.0026, 28.0134, 39.948, 44.0095, 58.1222, 146.055], runs) * 1e-3
    method = rng.choice(["evacuated-bulb", "air-tare-bulb", "syringe"], runs)
    volume = np.where(method == "syringe", 100.0, 250.0) * (1 + 0.01 * rng.random(runs))
    temperature = 18 + 6 * rng.random(runs)
    pressure = 98 + 5 * rng.random(runs)
    density = molar_mass * pressure * 1e3 / (8.314462618 * (temperature + 273.15))  # kg/m³
    gas = density * volume * 1e-6 * 1e3  # g
    air = 1.19 * volume * 1e-6 * 1e3
    tare = 80 + 40 * rng.random(runs)
    filled = tare + gas - np.where(method == "evacuated-bulb", 0.0, air)
    frame = pd.DataFrame({
        "run": [f"R{i:07d}" for i in range(runs)],
        "sample": [f"S{i // 2:07d}" if i % 10 < 2 else "" for i in range(runs)],
        "method": method,
        "mass_tare": np.round(tare + 1e-4 * rng.standard_normal(runs), 4),
        "mass_filled": np.round(filled + 1e-4 * rng.standard_normal(runs), 4),
        "volume": np.round(volume, 2),
        "temperature": np.round(temperature, 2),
        "pressure": np.round(pressure, 2),
        "humidity": np.round(30 + 40 * rng.random(runs), 0),
        "operator": rng.choice(["A. Quist", "B. Noor", "C. Ferro"], runs),
    })
    return frame


if __name__ == "__main__":
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    out = sys.argv[2] if len(sys.argv) > 2 else "big.csv"
    make_frame(runs).to_csv(out, index=False)
