"""Per-method widening of the percent-error bands in a rubric."""

import pytest

from molid.teaching.rubric import RubricError, load_rubric


def test_method_scale_widens_the_bands_of_one_method():
    """Checks behaviour: with vapour-flask = 2, a flask run's 0.9 % earns what a bulb's 0.45 % does."""
    rubric = load_rubric({"percent_error": {"method_scale": {"vapour-flask": 2.0}}})
    points = rubric.band_points([0.9, 0.9], ["vapour-flask", "evacuated-bulb"]).tolist()
    assert points == [60.0, 55.0]
    assert load_rubric().band_points([0.9], ["vapour-flask"]).tolist() == [55.0]


def test_method_scale_names_only_known_methods():
    """Checks behaviour: an unknown method or a factor that is not positive is refused, by key."""
    with pytest.raises(RubricError, match="method_scale.flask': not a method"):
        load_rubric({"percent_error": {"method_scale": {"flask": 2.0}}})
    with pytest.raises(RubricError, match="method_scale.syringe"):
        load_rubric({"percent_error": {"method_scale": {"syringe": 0}}})
