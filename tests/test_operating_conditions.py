"""Operating conditions per design (temperature, wind, runway friction) and their sampling
in the robustness of a frozen design."""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from optimiser import sizing
from optimiser.errors import StudyError
from optimiser.physics import G0, performance
from optimiser.study import load_study
from optimiser.uncertainty import nominal_draws

ROOT = Path(__file__).resolve().parent.parent
STUDIES = ["high_strip_utility", "twin_turboprop_commuter", "light_twin_jet"]
KNOT = 1852.0 / 3600.0  # exact


def _constant_thrust(t):
    return lambda v: np.full(np.shape(v), t)


def test_ground_roll_in_a_headwind_against_its_closed_form():
    # constant thrust, a = A - B V^2 with A = g (T/W - mu), B = g rho / (2 W/S) (C_D0 + phi K
    # C_L^2 - mu C_L) (Anderson, APD 1999, sec. 6.7); with a headwind V_w the roll is
    # s = int_{V_w}^{V_LO} (V - V_w) / (A - B V^2) dV
    #   = ln[(A - B V_w^2) / (A - B V_LO^2)] / (2 B)
    #     - V_w / (2 sqrt(A B)) ln[(sqrt A + sqrt B V_LO)(sqrt A - sqrt B V_w)
    #                               / ((sqrt A - sqrt B V_LO)(sqrt A + sqrt B V_w))]   (derived)
    w, s_ref, rho, cd0, k, phi, clg, mu, thrust, vlo = (12000.0, 14.0, 1.1, 0.04, 0.05, 0.8,
                                                        0.5, 0.04, 3600.0, 33.0)
    a_ = G0 * (thrust / w - mu)
    b_ = G0 * rho / (2 * w / s_ref) * (cd0 + phi * k * clg**2 - mu * clg)
    for vw in (-3.0, 0.0, 4.0, 9.0):
        ra, rb = np.sqrt(a_), np.sqrt(b_)
        exact = np.log((a_ - b_ * vw**2) / (a_ - b_ * vlo**2)) / (2 * b_) - vw / (2 * ra * rb) \
            * np.log((ra + rb * vlo) * (ra - rb * vw) / ((ra - rb * vlo) * (ra + rb * vw)))
        s, _, _ = performance.ground_roll(np.array([w]), np.array([s_ref]), np.array([vlo]),
                                          _constant_thrust(thrust), rho, cd0, k, phi, clg, mu,
                                          headwind=np.array([vw]))
        assert s[0] == pytest.approx(exact, rel=1e-9)
    still, _, _ = performance.ground_roll(np.array([w]), np.array([s_ref]), np.array([vlo]),
                                          _constant_thrust(thrust), rho, cd0, k, phi, clg, mu)
    calm, _, _ = performance.ground_roll(np.array([w]), np.array([s_ref]), np.array([vlo]),
                                         _constant_thrust(thrust), rho, cd0, k, phi, clg, mu,
                                         headwind=np.zeros(1))
    np.testing.assert_array_equal(still, calm)  # still air: the same numbers, bit for bit


def test_wind_is_factored_as_the_rules_ask():
    # 14 CFR 25.105(d)(1) and 25.125(f) (from memory): not more than 50 % of a headwind,
    # not less than 150 % of a tailwind
    np.testing.assert_allclose(performance.factored_wind([10.0, 0.0, -4.0]), [5.0, 0.0, -6.0])


def test_landing_in_a_wind_scales_each_part_by_its_ground_speed():
    # approach x (V_A - V_w)/V_A, flare x (V_F - V_w)/V_F, free roll N (V_TD - V_w), braking
    # x ((V_TD - V_w)/V_TD)^2, V_A = 1.3 V_s, V_F = 1.23 V_s, V_TD = 1.15 V_s (derived)
    ws, rho, cl, mu, h = 1500.0, 1.2, 2.2, 0.4, 15.24
    _, a0, f0, g0 = performance.landing_distance(ws, rho, cl, mu, h)
    vs = performance.stall_speed(ws, rho, cl)
    vw = 6.0
    total, a1, f1, g1 = performance.landing_distance(ws, rho, cl, mu, h, headwind=vw)
    assert a1 == pytest.approx(a0 * (1.3 * vs - vw) / (1.3 * vs), rel=1e-12)
    assert f1 == pytest.approx(f0 * (1.23 * vs - vw) / (1.23 * vs), rel=1e-12)
    free0 = 1.15 * 3.0 * vs
    brake0 = g0 - free0
    assert g1 == pytest.approx(3.0 * (1.15 * vs - vw) + brake0 * (1 - vw / (1.15 * vs)) ** 2,
                               rel=1e-12)
    assert total == pytest.approx(a1 + f1 + g1, rel=1e-15)


def _designs(study, n=60, seed=2):
    rng = np.random.default_rng(seed)
    x = [rng.uniform(v.lower, v.upper, n) for v in study.variables[:3]]
    names = study.spec.high_lift_names
    return (*x, rng.choice([names.index(f) for f in study.flaps], n))


def _float_columns(out):
    return [k for k, v in out.items() if np.asarray(v).dtype.kind == "f"]


@pytest.mark.parametrize("name", STUDIES)
def test_per_design_airfield_conditions_equal_the_study_at_those_conditions(name):
    # a batch whose designs each have their own temperature offsets and friction equals the
    # study set to those values, design by design (every column to 1e-12)
    study = load_study(ROOT / "problems" / f"{name}.toml")
    spec = study.spec
    ws, load, ar, flap = _designs(study)
    n = ws.size
    dep, dst = spec.departure, spec.destination
    cases = [(-10.0, 0.9), (0.0, 1.0), (12.0, 1.2)]
    dt = np.repeat([c[0] for c in cases], n // 3)
    f = np.repeat([c[1] for c in cases], n // 3)
    batch = sizing.size_designs(spec, ws, load, ar, flap, {
        "departure_temperature_offset_K": dep.temperature_offset_K + dt,
        "destination_temperature_offset_K": dst.temperature_offset_K + dt,
        "rolling_friction": dep.rolling_friction * f, "braking_friction": dst.braking_friction * f})
    for j, (d, fac) in enumerate(cases):
        part = slice(j * (n // 3), (j + 1) * (n // 3))
        s = replace(spec, departure=replace(dep, temperature_offset_K=dep.temperature_offset_K + d,
                                            rolling_friction=dep.rolling_friction * fac),
                    destination=replace(dst, temperature_offset_K=dst.temperature_offset_K + d,
                                        braking_friction=dst.braking_friction * fac))
        alone = sizing.size_designs(s, ws[part], load[part], ar[part], flap[part])
        for k in _float_columns(alone):
            np.testing.assert_allclose(np.asarray(batch[k], float)[part], alone[k], rtol=1e-12,
                                       atol=1e-12, err_msg=f"{name} {k} at {d} K x{fac}")


def test_headwind_shortens_and_tailwind_lengthens_the_field():
    study = load_study(ROOT / "problems" / "twin_turboprop_commuter.toml")
    spec = study.spec
    ws, load, ar, flap = _designs(study, 30)
    still = sizing.size_designs(spec, ws, load, ar, flap)
    calm = sizing.size_designs(spec, ws, load, ar, flap, {"departure_headwind_m_s": 0.0,
                                                          "destination_headwind_m_s": 0.0})
    for k in ("takeoff_field_required_m", "landing_distance_m"):
        np.testing.assert_allclose(calm[k], still[k], rtol=1e-12)
    head = sizing.size_designs(spec, ws, load, ar, flap, {"departure_headwind_m_s": 10.0,
                                                          "destination_headwind_m_s": 10.0})
    tail = sizing.size_designs(spec, ws, load, ar, flap, {"departure_headwind_m_s": -5.0,
                                                          "destination_headwind_m_s": -5.0})
    for k in ("takeoff_field_required_m", "landing_distance_m"):
        assert np.all(head[k] < still[k]) and np.all(tail[k] > still[k]), k


def _study_with(tmp_path, extra):
    text = (ROOT / "problems" / "high_strip_utility.toml").read_text(encoding="utf-8")
    text = text.replace('empty_mass_factor = { distribution = "normal", std = 0.03 }\n',
                        'empty_mass_factor = { distribution = "normal", std = 0.03 }\n' + extra)
    p = tmp_path / "s.toml"
    p.write_text(text, encoding="utf-8")
    return load_study(p)


def test_conditions_are_read_with_their_units(tmp_path):
    study = _study_with(tmp_path, 'temperature_offset = { distribution = "normal", std = "9 delta_degF" }\n'
                        'headwind = { distribution = "uniform", low = "-10 kn", high = "20 kn" }\n'
                        'runway_friction = { distribution = "uniform", low = 0.8, high = 1.25 }\n')
    a = study.uncertainty["assumptions"]
    assert a["temperature_offset"]["std"] == pytest.approx(5.0, rel=1e-12)  # 9 delta_degF = 5 K
    assert a["temperature_offset"]["mean"] == 0.0
    assert (a["headwind"]["low"], a["headwind"]["high"]) == pytest.approx((-10 * KNOT, 20 * KNOT))
    assert a["runway_friction"]["high"] == 1.25
    assert list(nominal_draws(a)["headwind"]) == [0.0]
    assert list(nominal_draws(a)["runway_friction"]) == [1.0]


@pytest.mark.parametrize("extra, words", [
    ('headwind = { distribution = "uniform", low = -5, high = 10 }\n',
     "[uncertainty] headwind low: got -5; expected a value with its unit"),
    ('temperature_offset = { distribution = "normal", std = "30 K" }\n',
     "[uncertainty] temperature_offset std: got 30 K; expected at most 20 K"),
    ('headwind = { distribution = "uniform", low = "20 kn", high = "-10 kn" }\n',
     "[uncertainty] headwind: expected low <= high"),
    ('gusts = { distribution = "normal", std = 0.1 }\n', "runway_friction"),
])
def test_bad_condition_entries_are_one_line_errors(tmp_path, extra, words):
    with pytest.raises(StudyError) as err:
        _study_with(tmp_path, extra)
    assert words in str(err.value) and "\n" not in str(err.value)


def test_frozen_robustness_samples_the_conditions(tmp_path):
    # on the default study's mid-bounds design: a day fixed 10 K hotter (std 0) lowers the
    # takeoff-field margin of every sample against the nominal; a steady 20 kn headwind
    # (uniform 19.99 to 20 kn) raises the takeoff and landing field margins; the drawn
    # values are the samples' columns
    from optimiser.robust import frozen_monte_carlo
    study = load_study(ROOT / "problems" / "high_strip_utility.toml")
    x = {v.column: [0.5 * (v.lower + v.upper)] for v in study.variables}
    design = {**x, "flap": [study.flaps[-1]]}
    hot = frozen_monte_carlo(study, design, samples=50, seed=3, uncertainty={"assumptions": {
        "temperature_offset": {"distribution": "normal", "mean": 10.0, "std": 0.0,
                               "unit": "K"}}})
    nominal = hot.constraints.set_index("constraint").loc["takeoff_field", "nominal_margin"]
    s = hot.samples
    assert np.all(s["temperature_offset_change_K"] == 10.0)
    assert np.all(s["margin_takeoff_field"] < nominal)
    windy = frozen_monte_carlo(study, design, samples=50, seed=3, uncertainty={"assumptions": {
        "headwind": {"distribution": "uniform", "low": 19.99 * KNOT, "high": 20 * KNOT,
                     "unit": "m/s"}}})
    c = windy.constraints.set_index("constraint")
    assert np.all(windy.samples["margin_takeoff_field"] > c.loc["takeoff_field", "nominal_margin"])
    assert np.all(windy.samples["margin_landing_field"] > c.loc["landing_field", "nominal_margin"])


def test_analyse_takes_a_headwind_case(tmp_path):
    # optimiser analyse --headwind "20 kn": the frozen design's takeoff field shrinks by the
    # factored wind (50 % of 20 kn), the same as the sizing override of that design
    from optimiser.analysis import analyse, frozen_from_table, read_case
    study = load_study(ROOT / "problems" / "high_strip_utility.toml")
    x = {v.column: [0.5 * (v.lower + v.upper)] for v in study.variables}
    import pandas as pd
    frozen, flaps = frozen_from_table(study, pd.DataFrame({**x, "flap": [study.flaps[0]]}))
    calm = analyse(study, frozen, flaps)
    case = read_case({"headwind": "20 kn"})
    assert case.conditions == {"departure_headwind_m_s": pytest.approx(20 * KNOT)}
    windy = analyse(study, frozen, flaps, case)
    assert windy["takeoff_field_required_m"][0] < calm["takeoff_field_required_m"][0]
    direct = analyse(study, frozen, flaps, overrides={"departure_headwind_m_s": [20 * KNOT]})
    assert windy["takeoff_field_required_m"][0] == direct["takeoff_field_required_m"][0]
    assert "departure headwind 10.2889 m/s" in case.describe(study)
