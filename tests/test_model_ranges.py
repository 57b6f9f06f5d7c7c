"""The model's valid ranges of the decision variables: one table, used by the study (bounds),
by ``evaluate`` (refusal) and by the model itself (a design outside is sized at the nearest
limit and flagged ``outside_model_range``, never reported feasible at a clipped value).

Source: the project's own rules (optimiser.sizing.inputs.MODEL_RANGES and DEVELOPERS.md
"Model ranges"); the geometry checks are exact definitions (A = b^2 / S); the margin is the
documented ``min(x / lower - 1, 1 - x / upper)``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from optimiser.evaluation import size_frame
from optimiser.sizing import MODEL_RANGES, checked_constraints, size_designs
from optimiser.sizing.inputs import CRUISE_ALTITUDE_MAX_M, range_margin
from optimiser.study import StudyError, VARIABLE_UNITS, load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


@pytest.fixture(scope="module")
def utility():
    return load_study(PROBLEMS / "high_strip_utility.toml")


def test_the_study_bounds_are_the_model_ranges():
    # one table: the study refuses bounds outside the very ranges the model flags
    for key, (column, _, lo, hi) in VARIABLE_UNITS.items():
        if key == "cruise_altitude":  # an override of the sizing, bounded by the same 15 km
            assert (lo, hi) == (0.0, CRUISE_ALTITUDE_MAX_M)  # as [mission] cruise_altitude
            continue
        assert (lo, hi) == (MODEL_RANGES[column].lower, MODEL_RANGES[column].upper), key
    for r in MODEL_RANGES.values():
        assert r.reason.strip() and "\n" not in r.reason and 0 < r.lower < r.upper


@pytest.mark.parametrize("name", NAMES)
def test_bundled_study_bounds_lie_inside_the_model_ranges(name):
    study = load_study(PROBLEMS / f"{name}.toml")
    for v in study.variables:
        r = MODEL_RANGES[v.column]
        assert r.lower <= v.lower <= v.upper <= r.upper, v.column


def test_a_study_bound_outside_the_model_range_is_refused():
    text = (PROBLEMS / "high_strip_utility.toml").read_text()
    bad = text.replace("aspect_ratio = [6, 11]", "aspect_ratio = [6, 40]")
    assert bad != text
    from optimiser.study import parse_study
    with pytest.raises(StudyError, match=r"\[variables\] aspect_ratio \(upper\): got 40") as info:
        parse_study(bad, "bad.toml")
    assert "\n" not in str(info.value)


def test_aspect_ratio_40_is_flagged_not_sized_as_30(utility):
    spec = utility.spec
    out = size_designs(spec, [1100.0, 1100.0, 1100.0], [75.0, 75.0, 75.0],
                       [8.0, 40.0, 20.0], [4, 4, 4])
    names = checked_constraints(spec, out)
    assert names[-1] == "outside_model_range"
    # A = 40 is twice the upper limit 20: margin 1 - 40/20 = -1 exactly
    assert out["margin_outside_model_range"][1] == pytest.approx(-1.0, abs=1e-15)
    assert out["margin_outside_model_range"][2] == pytest.approx(0.0, abs=1e-15)
    assert out["margin_outside_model_range"][0] == pytest.approx(min(8 / 3 - 1, 1 - 8 / 20),
                                                                 rel=1e-12)
    assert out["feasible"][1] == np.False_
    assert names[out["limiting_index"][1]] == "outside_model_range"
    # sized at the limit (A = 20: b^2 / S reads 20), so the flag is what tells the user
    assert out["span_m"][1] ** 2 / out["wing_area_m2"][1] == pytest.approx(20.0, rel=1e-9)
    # the in-range design of the same batch is sized as it would be alone, bit for bit
    alone = size_designs(spec, [1100.0], [75.0], [8.0], [4])
    assert out["takeoff_mass_kg"][0] == alone["takeoff_mass_kg"][0]
    assert "margin_outside_model_range" not in alone


def test_nan_and_each_variable_outside_are_flagged(utility):
    spec = utility.spec
    out = size_designs(spec, [np.nan, 50.0, 1100.0, 1100.0], [75.0, 75.0, 600.0, 75.0],
                       [8.0, 8.0, 8.0, 2.0], [0, 0, 0, 0])
    m = out["margin_outside_model_range"]
    assert m[0] == -1e3  # NaN: as far outside as the margins go
    assert m[1] == pytest.approx(50.0 / 100.0 - 1.0, rel=1e-12)
    assert m[2] == pytest.approx(1.0 - 600.0 / 500.0, rel=1e-12)
    assert m[3] == pytest.approx(2.0 / 3.0 - 1.0, rel=1e-12)
    names = checked_constraints(spec, out)
    assert [names[i] for i in out["limiting_index"]] == ["outside_model_range"] * 4
    assert not out["feasible"].any()
    assert all(np.isfinite(v).all() for k, v in out.items() if v.dtype.kind == "f")


def test_turbofan_thrust_to_weight_outside_is_flagged():
    jet = load_study(PROBLEMS / "light_twin_jet.toml")
    out = size_designs(jet.spec, [3000.0], [2.0], [8.0], [0])
    assert out["margin_outside_model_range"][0] == pytest.approx(1.0 - 2.0 / 1.5, rel=1e-12)
    assert not out["feasible"][0]


def test_the_frame_shows_the_inputs_as_given(utility):
    frame = size_frame(utility, np.array([1100.0]), np.array([75.0]), np.array([40.0]),
                       np.array([4]))
    assert frame["aspect_ratio"].iloc[0] == 40.0
    assert frame["limiting_constraint"].iloc[0] == "outside_model_range"
    assert frame["most_violated"].iloc[0] == "outside_model_range"
    assert not frame["feasible"].iloc[0]


def test_range_margin_inside_outside_and_at_the_limits():
    assert range_margin("aspect_ratio", [3.0, 20.0, 1.5, 30.0]).tolist() == \
        pytest.approx([0.0, 0.0, -0.5, -0.5], abs=1e-15)
    assert range_margin("aspect_ratio", [np.nan])[0] == -np.inf


def test_the_guide_lists_the_model_ranges_of_the_table():
    guide = (Path(__file__).resolve().parents[1] / "DEVELOPERS.md").read_text(encoding="utf-8")
    for r in MODEL_RANGES.values():
        assert f"| `{r.column}` | {r.lower:g} | {r.upper:g} | {r.reason} |" in guide


def test_the_python_evaluate_flags_what_the_command_line_refuses(utility):
    import optimiser
    from optimiser.designs import parse_design_option
    frame = optimiser.evaluate(utility, {"wing_loading_N_m2": [1100.0, 1100.0],
                                         "power_loading_N_kW": [75.0, 75.0],
                                         "aspect_ratio": [8.0, 40.0],
                                         "flap": ["fowler", "fowler"]})
    assert frame["aspect_ratio"].tolist() == [8.0, 40.0]  # as given
    assert frame["limiting_constraint"].iloc[1] == "outside_model_range"
    assert frame["margin_outside_model_range"].iloc[1] == pytest.approx(-1.0, abs=1e-15)
    assert not frame["feasible"].iloc[1]
    with pytest.raises(StudyError, match=r"--design: column 'aspect_ratio': got '40'; "
                                         r"expected a number from 3 to 20"):
        parse_design_option(utility, "wing_loading_N_m2=1100 power_loading_N_kW=75 "
                                     "aspect_ratio=40 flap=fowler")
