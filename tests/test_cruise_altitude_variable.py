"""The cruise altitude as an optional decision variable ([variables] cruise_altitude).

Source: U.S. Standard Atmosphere 1976, Table I (the densities checked); the other checks are
identities of the model (a batch against the same study fixed at each altitude; a run resumed
against one uninterrupted).
"""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser import sizing
from optimiser.errors import StudyError
from optimiser.physics import atmosphere as atm
from optimiser.study import load_study

ROOT = Path(__file__).resolve().parent.parent
STUDIES = ["high_strip_utility", "twin_turboprop_commuter", "light_twin_jet"]
FT = 0.3048  # exact (international foot, 1959)


def _random_designs(study, n, seed):
    rng = np.random.default_rng(seed)
    x = [rng.uniform(v.lower, v.upper, n) for v in study.variables[:3]]
    names = study.spec.high_lift_names
    return (*x, rng.choice([names.index(f) for f in study.flaps], n))


def _with_altitude(spec, h):
    return replace(spec, mission=replace(spec.mission, cruise_altitude_m=float(h)))


def _float_columns(out):
    return [k for k, v in out.items() if np.asarray(v).dtype.kind == "f"]


@pytest.mark.parametrize("name", STUDIES)
def test_per_design_altitude_equals_the_study_sized_at_that_altitude(name):
    # every stage that reads the cruise air (mission fuel, cruise speed, Reynolds numbers and
    # compressibility of the drag build-up, wave drag, Oswald factor at the cruise Mach,
    # propeller diameter from the cruise tip Mach, the structural cruise EAS) must see each
    # design's own altitude: a batch with four altitudes equals four studies each fixed at
    # one of them, design by design (to 1e-9 relative; the root solves converge to 1e-9)
    study = load_study(ROOT / "problems" / f"{name}.toml")
    spec = study.spec
    h0 = spec.mission.cruise_altitude_m
    heights = np.array([0.6, 0.8, 1.0, 1.1]) * min(h0, 11000.0)
    ws, load, ar, flap = _random_designs(study, 40, 5)
    h = np.repeat(heights, 10)
    batch = sizing.size_designs(spec, ws, load, ar, flap, {"cruise_altitude_m": h})
    np.testing.assert_array_equal(batch["cruise_altitude_m"], h)
    for j, hj in enumerate(heights):
        part = slice(10 * j, 10 * j + 10)
        alone = sizing.size_designs(_with_altitude(spec, hj), ws[part], load[part], ar[part],
                                    flap[part])
        for k in _float_columns(alone):
            np.testing.assert_allclose(np.asarray(batch[k], float)[part], alone[k],
                                       rtol=1e-9, atol=1e-9, err_msg=f"{name} {k} at {hj} m")


def test_cruise_air_follows_each_design_altitude():
    # U.S. Standard Atmosphere 1976, Table I (geometric altitude): density 1.1117 kg/m^3
    # at 1000 m and 0.90925 kg/m^3 at 3000 m; each design's cruise states are its own
    study = load_study(ROOT / "problems" / "high_strip_utility.toml")
    spec = study.spec
    ws, load, ar, flap = (np.full(2, v) for v in (900.0, 80.0, 8.0, 0))
    out = sizing.size_designs(spec, ws, load, ar, flap, {"cruise_altitude_m": [1000.0, 3000.0]})
    np.testing.assert_allclose(out["density_cruise_kg_m3"], [1.11166, 0.90925], rtol=2e-4)
    # thinner air at the same true airspeed: a higher cruise lift coefficient
    rho = atm.isa_density(np.array([1000.0, 3000.0]), spec.mission.cruise_temperature_offset_K)
    assert out["cruise_lift_coefficient"][1] > out["cruise_lift_coefficient"][0]
    np.testing.assert_allclose(out["density_cruise_kg_m3"], rho, rtol=1e-12)
    assert np.all(np.isfinite(out["trip_fuel_kg"]))


def _study_text(bounds='["3000 ft", "14000 ft"]'):
    text = (ROOT / "problems" / "high_strip_utility.toml").read_text(encoding="utf-8")
    return text.replace("aspect_ratio = [6, 11]\n",
                        f"aspect_ratio = [6, 11]\ncruise_altitude = {bounds}\n")


def test_study_reads_the_bounds_in_its_own_units(tmp_path):
    p = tmp_path / "s.toml"
    p.write_text(_study_text(), encoding="utf-8")
    study = load_study(p)
    v = study.variable("cruise_altitude_m")
    assert (v.lower, v.upper) == pytest.approx((3000 * FT, 14000 * FT), rel=1e-12)
    assert [w.column for w in study.variables][3:] == ["cruise_altitude_m"]


@pytest.mark.parametrize("bounds, words", [
    ('["3000 ft", "60000 ft"]', "[variables] cruise_altitude (upper)"),
    ('["9000 ft", "3000 ft"]', "[variables] cruise_altitude"),
    ('[1000, 3000]', "[variables] cruise_altitude (lower)"),
])
def test_bad_altitude_bounds_are_one_line_errors(tmp_path, bounds, words):
    p = tmp_path / "s.toml"
    p.write_text(_study_text(bounds), encoding="utf-8")
    with pytest.raises(StudyError) as err:
        load_study(p)
    assert words in str(err.value) and "\n" not in str(err.value)


def test_mach_limit_is_checked_at_the_highest_altitude(tmp_path):
    # a fixed true airspeed of 480 kn (246.9 m/s) is Mach 0.781 at 20 000 ft (ISA: T 248.5 K,
    # a 316.0 m/s) but Mach 0.837 above 11 km (T 216.65 K, a 295.07 m/s; USSA 1976): within
    # the model's Mach 0.82 at the study's fixed altitude, beyond it at the variable's top
    text = (ROOT / "problems" / "light_twin_jet.toml").read_text(encoding="utf-8")
    text = text.replace('cruise_altitude = "37000 ft"', 'cruise_altitude = "20000 ft"')
    text = text.replace('cruise_speed = "400 kn"', 'cruise_speed = "480 kn"')
    ar_line = next(line for line in text.splitlines() if line.startswith("aspect_ratio"))
    p = tmp_path / "j.toml"
    p.write_text(text, encoding="utf-8")
    load_study(p)  # fine at its fixed altitude
    p.write_text(text.replace(ar_line, ar_line + '\ncruise_altitude = ["20000 ft", "41000 ft"]'),
                 encoding="utf-8")
    with pytest.raises(StudyError, match=r"\[variables\] cruise_altitude: got Mach 0\.837 at the cruise altitude 12497 m \(the upper bound\)"):
        load_study(p)


def test_a_run_searches_the_altitude_and_its_files_carry_it(tmp_path):
    from optimiser.analysis import analyse, frozen_from_table
    from optimiser.evaluation import evaluate
    from optimiser.runs import optimise
    p = tmp_path / "s.toml"
    p.write_text(_study_text(), encoding="utf-8")
    study = load_study(p)
    optimise(study, out=tmp_path / "R", generations=12, seed=3)
    front = pd.read_csv(tmp_path / "R" / "front.csv")
    archive = pd.read_csv(tmp_path / "R" / "evaluations.csv")
    lo, hi = 3000 * FT, 14000 * FT
    for table in (front, archive):
        h = table["cruise_altitude_m"].to_numpy()
        assert np.all((h >= lo - 1e-9) & (h <= hi + 1e-9))
    assert front["cruise_altitude_m"].std() > 0.0  # the search moves it
    # the front's numbers come back when its designs are sized again from their inputs
    again = evaluate(study, front[["wing_loading_N_m2", "power_loading_N_kW", "aspect_ratio",
                                   "flap", "cruise_altitude_m"]])
    np.testing.assert_allclose(again["trip_fuel_kg"], front["trip_fuel_kg"], rtol=1e-12)
    # the frozen airplanes keep their own altitude: at the design case the fuel on board is
    # the fuel their mission needs (margin 0 to the closure's 1e-6)
    frozen, flaps = frozen_from_table(study, front)
    np.testing.assert_allclose(frozen.cruise_altitude_m, front["cruise_altitude_m"], rtol=1e-12)
    analysed = analyse(study, frozen, flaps)
    assert np.abs(analysed["margin_mission_fuel"]).max() < 1e-6


def test_an_interrupted_run_with_the_altitude_resumes_to_the_same_files(tmp_path):
    # the checkpoint holds the fourth design column: a run stopped after generation 2 and
    # resumed writes the same archive and front, byte for byte, as one uninterrupted run
    import optimiser
    from optimiser import runs
    p = tmp_path / "s.toml"
    p.write_text(_study_text(), encoding="utf-8")
    study = load_study(p)
    tiny = dict(population=12, generations=5, checkpoint_every=1, seed=4, plots=False)

    def stop(row, state):
        if row["generation"] == 2:
            raise KeyboardInterrupt

    with pytest.raises(runs.RunInterrupted):
        optimiser.optimise(study, out=tmp_path / "a", progress=stop, **tiny)
    runs.resume(tmp_path / "a", plots=False)
    optimiser.optimise(study, out=tmp_path / "b", **tiny)
    for name in ("evaluations.csv", "front.csv"):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes()
    assert "cruise_altitude_m" in (tmp_path / "a" / "front.csv").read_text().splitlines()[0]


def test_a_design_may_not_cruise_above_its_own_service_ceiling(tmp_path):
    # with the altitude searched up to 20 000 ft (above the 14 000 ft the study requires as
    # ceiling), the constraint cruise_ceiling = service ceiling / cruise altitude - 1 keeps
    # each design at or below its own ceiling; a study without the variable does not have it
    p = tmp_path / "s.toml"
    p.write_text(_study_text('["3000 ft", "20000 ft"]'), encoding="utf-8")
    study = load_study(p)
    assert "cruise_ceiling" in sizing.active_constraints(study.spec)
    fixed = load_study(ROOT / "problems" / "high_strip_utility.toml")
    assert "cruise_ceiling" not in sizing.active_constraints(fixed.spec)
    ws, load, ar, flap = _random_designs(study, 400, 9)
    h = np.full(400, 20000 * FT)
    out = sizing.size_designs(study.spec, ws, load, ar, flap, {"cruise_altitude_m": h})
    np.testing.assert_allclose(out["margin_cruise_ceiling"], out["service_ceiling_m"] / h - 1.0,
                               rtol=1e-12)
    below = out["margin_cruise_ceiling"] < 0.0
    assert below.any() and not out["feasible"][below].any()
    # the margin a study may require on it, like any other constraint
    text = _study_text('["3000 ft", "20000 ft"]')
    assert "[requirements]\n" in text
    p.write_text(text.replace("[requirements]\n",
                              "[requirements]\nmargins = { cruise_ceiling = 0.1 }\n", 1),
                 encoding="utf-8")
    assert dict(load_study(p).spec.requirements.margins) == {"cruise_ceiling": 0.1}


def test_evaluate_prints_the_design_altitude(tmp_path, capsys):
    # the console table of `optimiser evaluate` shows the searched variable: 3000 m is
    # 9843 ft (3000 / 0.3048) with --units us
    from optimiser.cli import main
    p = tmp_path / "s.toml"
    p.write_text(_study_text(), encoding="utf-8")
    design = ("wing_loading_N_m2=900 power_loading_N_kW=80 aspect_ratio=8 flap=none "
              "cruise_altitude_m=3000")
    main(["evaluate", str(p), "--design", design])
    out = capsys.readouterr().out.splitlines()
    assert "cruise_altitude_m" in out[1] and out[2].split()[4] == "3000"
    main(["--units", "us", "evaluate", str(p), "--design", design])
    out = capsys.readouterr().out.splitlines()
    assert "cruise altitude [ft]" in out[1] and f"{3000 / FT:.0f}" in out[2].split()
