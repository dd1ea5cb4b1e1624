"""Report pages of runs collected over water: their readings, the pressure chain, the cautions.

The pressure chain printed for a run is checked against IAPWS-95 (the ``iapws``
package: the water's saturation pressure and density) and the standard acceleration
of free fall g_n = 9.80665 m/s² (3rd CGPM, 1901), to the 0.01 kPa printed.
"""

import re

import pandas as pd
import pytest
from iapws import IAPWS95

from molid.reports import build_report

SHEET = pd.DataFrame([{
    "run": "HV-R3-1", "sample": "R-3", "method": "over-water", "source_before [g]": "16.4127",
    "source_after [g]": "16.2430", "volume [mL]": "71.6", "temperature [degC]": "21.4",
    "pressure [kPa]": "99.84", "water_column [mm]": "120",
}])


def _text(report):
    parts = []
    for page in report.pages:
        for block in page.blocks:
            parts += [str(getattr(block, name, "")) for name in ("title", "note", "text", "rows", "lines",
                                                                 "columns", "items")]
    return " ".join(parts)


def test_page_shows_the_source_readings_and_the_pressure_chain():
    """The inputs table has the source's readings and the water column; the chain matches IAPWS-95."""
    report, ok = build_report(SHEET)
    assert ok
    text = _text(report)
    assert "before [g]" in text and "after [g]" in text and "h water [mm]" in text
    assert "tare [g]" not in text
    T, p = 294.55, 99.84e3
    column = IAPWS95(T=T, P=p / 1e6).rho * 9.80665 * 0.120
    vapour = IAPWS95(T=T, x=0).P * 1e6
    chain = re.search(r"HV-R3-1: (\d+\.\d+) − (\d+\.\d+) − (\d+\.\d+) = (\d+\.\d+) kPa", text)
    assert chain, text[:2000]
    barometer, shown_column, shown_vapour, dry = map(float, chain.groups())
    assert barometer == pytest.approx(99.84, abs=0.005)
    assert shown_column == pytest.approx(column / 1e3, abs=0.006)
    assert shown_vapour == pytest.approx(vapour / 1e3, abs=0.006)
    assert dry == pytest.approx((p - column - vapour) / 1e3, abs=0.011)


def test_page_carries_the_over_water_cautions():
    """Checks behaviour: the method's apparatus cautions reach the page (gas released under water)."""
    text = _text(build_report(SHEET)[0])
    assert "released under water is still flammable" in text
