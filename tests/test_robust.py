"""Robustness: per-design overrides of the sizing model, and the Monte Carlo of optimiser.robust.

Expected values are computed independently here: the deterministic model with the spec value
replaced (dataclasses.replace), root finding on a margin for the probability of a uniform
factor, and the Wilson interval formula.

Source: E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
J. Amer. Statist. Assoc. 22 (1927) 209-212 (from memory); the binomial standard error
sqrt(p (1 - p) / n) is common practice.
"""

import dataclasses as dc
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy.optimize import brentq

from optimiser.evaluation import CAUTION
from optimiser.robust import monte_carlo, wilson_interval
from optimiser.sizing import size_designs
from optimiser.study import StudyError, load_study, parse_study

ROOT = Path(__file__).resolve().parent.parent
STRIP = ROOT / "problems" / "high_strip_utility.toml"
JET = ROOT / "problems" / "light_twin_jet.toml"
DESIGN = {"wing_loading_N_m2": [800.0], "power_loading_N_kW": [73.0], "aspect_ratio": [8.1],
          "flap": ["none"]}  # row 1 of problems/high_strip_utility_designs.csv (feasible)


def _batch(study, n):
    rng = np.random.default_rng(5)
    v = study.variables
    return (rng.uniform(v[0].lower, v[0].upper, n), rng.uniform(v[1].lower, v[1].upper, n),
            rng.uniform(v[2].lower, v[2].upper, n), rng.integers(0, len(study.spec.high_lift), n))


def _replaced(spec, key, value):
    part = {"cd0_clean": "aerodynamics", "empty_mass_factor": "weights"}.get(key, "propulsion")
    # a cd0_clean override pins the clean CD0: the spec with that value, method "fixed"
    extra = {"cd0_method": "fixed"} if key == "cd0_clean" else {}
    return dc.replace(spec, **{part: dc.replace(getattr(spec, part), **{key: value}, **extra)})


def _compare(a, b, i):
    for k in a:
        if k in ("feasible", "limiting_index"):
            assert a[k][0] == b[k][i], k
        else:
            assert a[k][0] == pytest.approx(b[k][i], rel=1e-12, abs=1e-12), k


@pytest.mark.parametrize("path,keys", [
    (STRIP, ("cd0_clean", "empty_mass_factor", "sfc_cruise", "propeller_efficiency_cruise",
             "propeller_efficiency_climb")),
    (JET, ("cd0_clean", "empty_mass_factor", "tsfc_cruise")),
])
def test_override_equals_the_model_with_that_spec_value(path, keys):
    study = load_study(path)
    spec = study.spec
    ws, ld, ar, ix = _batch(study, 6)
    for key in keys:
        part = {"cd0_clean": spec.aerodynamics, "empty_mass_factor": spec.weights}.get(
            key, spec.propulsion)
        nominal = getattr(part, key)
        values = nominal * np.array([0.9, 0.95, 1.0, 1.03, 1.06, 1.1])
        if "efficiency" in key:
            values = np.minimum(values, 0.95)
        batch = size_designs(spec, ws, ld, ar, ix, overrides={key: values})
        for i in (0, 3, 5):
            one = size_designs(_replaced(spec, key, float(values[i])), ws[i:i + 1],
                               ld[i:i + 1], ar[i:i + 1], ix[i:i + 1])
            _compare(one, batch, i)


def test_no_overrides_and_nominal_overrides_change_nothing():
    study = load_study(STRIP)
    spec = study.spec
    ws, ld, ar, ix = _batch(study, 40)
    plain = size_designs(spec, ws, ld, ar, ix)
    same = size_designs(spec, ws, ld, ar, ix, overrides={
        "cd0_scale": 1.0, "empty_mass_factor": 1.0,
        "sfc_cruise": np.full(40, spec.propulsion.sfc_cruise)})
    for k in plain:
        assert np.array_equal(plain[k], same[k]), k


def test_oswald_scale_multiplies_the_oswald_factor():
    study = load_study(STRIP)
    ws, ld, ar, ix = _batch(study, 5)
    plain = size_designs(study.spec, ws, ld, ar, ix)
    scale = np.array([0.9, 1.0, 1.05, 1.1, 0.95])
    scaled = size_designs(study.spec, ws, ld, ar, ix, overrides={"oswald_factor_scale": scale})
    # a larger Oswald factor means less induced drag, so less trip fuel (the closed mass
    # changes too, so only the sign is exact); a scale of 1 changes nothing
    assert np.all(np.sign(scaled["trip_fuel_kg"] - plain["trip_fuel_kg"])[scale != 1.0]
                  == -np.sign(scale - 1.0)[scale != 1.0])
    assert scaled["oswald_e"][1] == plain["oswald_e"][1]


@pytest.mark.parametrize("overrides,message", [
    ({"cd0": 0.03}, "unknown key 'cd0'"),
    ({"cd0_clean": [0.03, 0.03]}, "expected one per design"),
    ({"empty_mass_factor": -1.0}, "not finite and positive"),
    ({"tsfc_cruise": 1e-5}, "propeller study"),
])
def test_bad_overrides_are_refused(overrides, message):
    study = load_study(STRIP)
    with pytest.raises(ValueError, match=message):
        size_designs(study.spec, [1000.0] * 3, [80.0] * 3, [8.0] * 3, [0] * 3,
                     overrides=overrides)


def _without_uncertainty(path) -> str:
    """The study text with its own [uncertainty] table (if any) taken out."""
    import re
    return re.sub(r"(?ms)^\[uncertainty\][^\n]*\n.*?(?=^\[)", "", path.read_text("utf-8"))


def _study_with(table: str, path=STRIP):
    return parse_study(_without_uncertainty(path) + "\n[uncertainty]\n" + table, str(path))


def test_zero_spread_gives_the_deterministic_answer():
    study = _study_with('cd0_clean = { distribution = "normal", std = 0.0 }\n'
                        'sfc = { distribution = "normal", std = 0.0 }\n')
    for design in (DESIGN, {"wing_loading_N_m2": [1390.0], "power_loading_N_kW": [72.0],
                            "aspect_ratio": [7.0], "flap": ["split"]}):
        r = monte_carlo(study, design, samples=500, seed=2)
        nominal = r.design.iloc[0]
        for _, row in r.constraints.iterrows():
            expected = float(row["nominal_met"])
            assert row["probability_met"] == expected
            assert row["standard_error"] == 0.0
        assert r.trip_fuel["std_kg"].iloc[0] == pytest.approx(0.0, abs=1e-9)
        assert r.trip_fuel["mean_kg"].iloc[0] == pytest.approx(nominal["trip_fuel_kg"], rel=1e-12)


def test_drag_spread_leaves_stall_and_landing_untouched():
    # stall speed and landing distance depend on wing loading and CLmax only, not on CD0
    study = _study_with('cd0_clean = { distribution = "normal", std = 0.15 }\n')
    r = monte_carlo(study, DESIGN, samples=2000, seed=4)
    c = r.constraints.set_index("constraint")
    for name in ("stall_speed", "landing_field"):
        assert c.loc[name, "probability_met"] == 1.0
        assert c.loc[name, "margin_p5"] == pytest.approx(c.loc[name, "nominal_margin"], rel=1e-9)


def test_uniform_drag_factor_probability_matches_the_root_of_the_margin():
    # cruise-speed margin falls as CD0 grows: it is met for factors below the root f*, so with
    # a factor uniform on [f* - 0.1, f* + 0.2] the probability is exactly 1/3
    study = load_study(STRIP)
    spec = study.spec
    args = ([800.0], [73.0], [8.1], [study.spec.high_lift_names.index("none")])

    def margin(f):  # the study builds its CD0 up: the factor multiplies the build-up's
        return float(size_designs(spec, *args, overrides={"cd0_scale": f})[
            "margin_cruise_speed"][0])
    root = brentq(margin, 0.8, 1.6, xtol=1e-10)
    assert 1.0 < root < 1.5
    low, high = root - 0.1, root + 0.2
    unc = {"assumptions": {"cd0_clean": {"distribution": "uniform", "low": low, "high": high}}}
    n = 20000
    r = monte_carlo(study, DESIGN, samples=n, seed=11, uncertainty=unc)
    row = r.constraints.set_index("constraint").loc["cruise_speed"]
    se = np.sqrt((1 / 3) * (2 / 3) / n)
    assert row["probability_met"] == pytest.approx(1 / 3, abs=4 * se)
    assert row["standard_error"] == pytest.approx(se, rel=0.05)


def test_wilson_interval_textbook_value():
    # 50 successes in 100 trials: Wilson 95 % interval 0.4038 to 0.5962 (Wilson 1927 formula,
    # evaluated by hand with z = 1.96)
    lo, hi = wilson_interval(0.5, 100)
    assert float(lo) == pytest.approx(0.4038, abs=1e-4)
    assert float(hi) == pytest.approx(0.5962, abs=1e-4)


@pytest.mark.parametrize("n", [1, 7, 200, 1000, 10_000, 123_457])
def test_wilson_interval_at_zero_and_one_contains_p(n):
    # Wilson (1927): at p = 0 the interval is [0, z^2/n / (1 + z^2/n)], at p = 1 its mirror
    # [1 - z^2/n / (1 + z^2/n), 1]. Rounding used to put the upper end a hair below 1, which
    # made the robustness plot's error bar negative (a crash of `optimiser robust`).
    z2 = 1.959963984540054 ** 2
    width = (z2 / n) / (1 + z2 / n)
    lo0, hi0 = wilson_interval(0.0, n)
    lo1, hi1 = wilson_interval(1.0, n)
    assert float(lo0) == 0.0 and float(hi1) == 1.0
    assert float(hi0) == pytest.approx(width, rel=1e-12)
    assert float(lo1) == pytest.approx(1 - width, rel=1e-12)
    p = np.array([0.0, 1e-9, 0.5, 1 - 1e-9, 1.0])
    lo, hi = wilson_interval(p, n)
    assert np.all(lo <= p) and np.all(p <= hi)


@pytest.mark.parametrize("table,message", [
    ('cd0 = { distribution = "normal", std = 0.1 }', "unknown key 'cd0'"),
    ('cd0_clean = { distribution = "gauss", std = 0.1 }', "distribution: got 'gauss'"),
    ('cd0_clean = { distribution = "normal", std = 0.5 }', "std: got 0.5"),
    ('cd0_clean = { distribution = "uniform", low = 1.1, high = 0.9 }', "low <= high"),
    ('samples = 0', "samples: got 0"),
])
def test_bad_uncertainty_table_is_one_line(table, message):
    with pytest.raises(StudyError, match=message) as exc:
        _study_with(table)
    assert "\n" not in str(exc.value) and "[uncertainty]" in str(exc.value)


def test_propeller_efficiency_refused_for_a_turbofan():
    with pytest.raises(StudyError, match="propeller studies"):
        _study_with('propeller_efficiency = { distribution = "normal", std = 0.02 }', JET)


def test_robust_command_writes_its_files_and_refuses_bad_input(tmp_path):
    study = tmp_path / "strip.toml"
    study.write_text(_without_uncertainty(STRIP) + """
[uncertainty]
samples = 3000
seed = 5
cd0_clean = { distribution = "normal", std = 0.08 }
oswald_factor = { distribution = "uniform", low = 0.95, high = 1.03 }
propeller_efficiency = { distribution = "triangular", low = 0.96, mode = 1.0, high = 1.02 }
sfc = { distribution = "normal", mean = 1.02, std = 0.04 }
empty_mass_factor = { distribution = "normal", std = 0.03 }
""", encoding="utf-8")
    out = tmp_path / "robust"
    cmd = [sys.executable, "-m", "optimiser", "robust", str(study), "--design",
           "wing_loading_N_m2=800 power_loading_N_kW=73 aspect_ratio=8.1 flap=none",
           "--out", str(out)]
    done = subprocess.run(cmd, capture_output=True, text=True, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert CAUTION in done.stdout
    for name in ("constraints.csv", "trip_fuel.csv", "samples.csv", "summary.txt",
                 "robust.json", "trip_fuel_spread.png", "constraint_probability.svg"):
        assert (out / name).is_file(), name
    assert len(pd.read_csv(out / "samples.csv")) == 3000
    c = pd.read_csv(out / "constraints.csv").set_index("constraint")
    assert 0.0 <= c.loc["all", "probability_met"] <= c.loc["cruise_speed", "probability_met"]
    # nothing is overwritten without --force, and a bad row number is one line, status 2
    again = subprocess.run(cmd, capture_output=True, text=True, cwd=tmp_path)
    assert again.returncode == 2 and "--force" in again.stderr
    assert len(again.stderr.strip().splitlines()) == 1
    bad = subprocess.run([sys.executable, "-m", "optimiser", "robust", str(study), "--front",
                          str(out / "design.csv"), "--row", "9", "--out", str(tmp_path / "x")],
                         capture_output=True, text=True, cwd=tmp_path)
    assert bad.returncode == 2 and "--row: got 9; expected 1 to 1" in bad.stderr
    assert not (tmp_path / "x").exists()
