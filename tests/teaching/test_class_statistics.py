r"""Class statistics against the robust estimators of ISO 13528 and the Iglewicz-Hoaglin limit.

ISO 13528:2015, Statistical methods for use in proficiency testing by
interlaboratory comparison, Annex C (from memory): the simple robust estimators
of location and spread are the median and MADe = 1.483·median|xᵢ − med(x)|
(the same start as Algorithm A, ISO 13528:2005 eq. C.2), or nIQR = 0.7413·IQR;
a participant's score is z = (x − x_pt)/σ_pt, with |z| ≤ 2.0 satisfactory,
2.0 < |z| < 3.0 a warning signal and |z| ≥ 3.0 an action signal (unsatisfactory).
The worked-example data of the standard are not recalled reliably, so the
definitions are applied by hand to a class below.

B. Iglewicz and D. C. Hoaglin, How to Detect and Handle Outliers (ASQC Quality
Press, 1993): modified z-score Mᵢ = 0.6745 (xᵢ − x̃)/MAD, flagged when |Mᵢ| > 3.5.
0.6745 = 1/1.4826, so Mᵢ is the robust z with MADe as the spread.
"""

import numpy as np
import pandas as pd
import pytest

from molid.teaching.class_summary import MAD_SCALE, OUTLIER_LIMIT, robust_spread, robust_z, summarise

#: ISO 13528 constants as printed (four significant figures).
ISO_MADE_FACTOR = 1.483
ISO_ACTION_LIMIT = 3.0
#: Iglewicz and Hoaglin's constant and limit.
IGLEWICZ_HOAGLIN_FACTOR = 0.6745
IGLEWICZ_HOAGLIN_LIMIT = 3.5

#: Percent errors of an invented class of eleven, in the order the runs were handed in.
CLASS_ERRORS = [0.26, -0.35, 1.55, 0.05, -0.10, 0.20, 2.40, -0.22, 0.31, 0.48, 0.12]


def test_constants_agree_with_iso_13528_and_iglewicz_hoaglin():
    """MAD_SCALE is ISO 13528's 1.483 and 1/0.6745 to their printed digits; the limit is 3.5.

    Sources: ISO 13528:2015 Annex C (MADe = 1.483·MAD; from memory); Iglewicz and
    Hoaglin (1993), modified z-score 0.6745 (xᵢ − x̃)/MAD, outlier when > 3.5.
    """
    assert round(MAD_SCALE, 3) == ISO_MADE_FACTOR
    assert round(1.0 / MAD_SCALE, 4) == IGLEWICZ_HOAGLIN_FACTOR
    assert OUTLIER_LIMIT == IGLEWICZ_HOAGLIN_LIMIT


def test_class_statistics_by_hand_with_iso_13528_definitions():
    r"""Median, MADe, robust z and outliers of a class of eleven, worked by hand.

    Data (percent errors): 0.26, −0.35, 1.55, 0.05, −0.10, 0.20, 2.40, −0.22, 0.31,
    0.48, 0.12.

    - sorted: −0.35, −0.22, −0.10, 0.05, 0.12, **0.20**, 0.26, 0.31, 0.48, 1.55, 2.40;
      median (6th of 11) = 0.20
    - |xᵢ − 0.20|: 0.06, 0.55, 1.35, 0.15, 0.30, 0, 2.20, 0.42, 0.11, 0.28, 0.08;
      sorted 0, 0.06, 0.08, 0.11, 0.15, **0.28**, 0.30, 0.42, 0.55, 1.35, 2.20;
      MAD = 0.28
    - MADe = 1.483 × 0.28 = 0.41524 (ISO 13528); molid's 1.4826 × 0.28 = 0.41513
      differs by the rounding of the printed factor (< 3.4 × 10⁻⁴ relative)
    - robust z of 2.40: 2.20/0.41524 = 5.30; of 1.55: 1.35/0.41524 = 3.25; of
      −0.35: −0.55/0.41524 = −1.32
    - ISO 13528 gives action signals (|z| ≥ 3.0) for 1.55 and 2.40; the
      Iglewicz-Hoaglin limit 3.5 that molid uses flags 2.40 only.
    """
    median, mad = 0.20, 0.28
    made = ISO_MADE_FACTOR * mad
    iso_rounding = 0.0005 / ISO_MADE_FACTOR  # half a unit of the printed factor's last digit
    assert robust_spread(CLASS_ERRORS) == pytest.approx(made, rel=iso_rounding)
    hand_z = (np.array(CLASS_ERRORS) - median) / made
    np.testing.assert_allclose(robust_z(CLASS_ERRORS), hand_z, rtol=iso_rounding)
    assert hand_z[6] == pytest.approx(5.30, abs=0.005) and hand_z[2] == pytest.approx(3.25, abs=0.005)
    iso_action = [x for x, z in zip(CLASS_ERRORS, hand_z, strict=True) if abs(z) >= ISO_ACTION_LIMIT]
    assert iso_action == [1.55, 2.40]

    frame = pd.DataFrame({
        "run": [f"c{number:02d}" for number in range(11)],
        "student": [f"student {number}" for number in range(11)],
        "section": ["A"] * 11, "expected": ["Ar"] * 11, "expected_name": ["argon"] * 11,
        "percent_error": CLASS_ERRORS, "identified": [True] * 11, "in_interval": [True] * 11,
        "points": [90.0] * 11, "max_points": [90.0] * 11, "diagnosis": [[]] * 11,
        "error": [None] * 11,
    })
    group = summarise(frame)["overall"]
    assert group["median_percent_error"] == pytest.approx(median)
    assert group["robust_spread_percent"] == pytest.approx(made, rel=iso_rounding)
    modified_z = IGLEWICZ_HOAGLIN_FACTOR * (2.40 - median) / mad
    assert [item["run"] for item in group["outliers"]] == ["c06"]
    assert group["outliers"][0]["robust_z"] == pytest.approx(modified_z, rel=1e-4)


def test_even_count_median_and_mad_by_hand():
    r"""With an even count the median and the MAD are midpoints (ISO 13528 Annex C; common practice).

    Data: 0.4, −0.2, 0.1, 0.9, −0.6, 0.3.

    - sorted −0.6, −0.2, 0.1, 0.3, 0.4, 0.9: median = (0.1 + 0.3)/2 = 0.2
    - |xᵢ − 0.2| sorted: 0.1, 0.1, 0.2, 0.4, 0.7, 0.8: MAD = (0.2 + 0.4)/2 = 0.3
    - MADe = 1.483 × 0.3 = 0.4449
    """
    data = [0.4, -0.2, 0.1, 0.9, -0.6, 0.3]
    assert robust_spread(data) == pytest.approx(ISO_MADE_FACTOR * 0.3, rel=0.0005 / ISO_MADE_FACTOR)
    assert robust_z(data)[3] == pytest.approx((0.9 - 0.2) / (ISO_MADE_FACTOR * 0.3), rel=4e-4)
