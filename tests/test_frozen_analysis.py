"""The frozen-design analysis (optimiser analyse): a fixed airplane at an operating case.

Source: the model's own sizing (a sized design analysed at its design case must give the
same numbers: the issue's check, to 1e-10 relative); the stall speed V_S = sqrt(2 W /
(rho S CL_max)) (the lift equation: V_S grows as sqrt(m) at fixed wing and CL_max, exact);
the mass breakdown takeoff = empty + crew + payload + fuel (J. Roskam, "Airplane Design",
Part I, ch. 2); the U.S. Standard Atmosphere 1976 (NOAA-S/T 76-1562) troposphere, computed
by hand below (T = 288.15 K - 0.0065 K/m h + offset, p = 101 325 Pa (T_std / 288.15 K)^(g0 /
(R L)), rho = p / (R T), R = 8.31432 / 0.0289644 J/(kg K)); exact unit definitions for the
command line's quantities (1 lb = 0.45359237 kg, NIST SP 811, 2008, appendix B)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser.analysis import (OperatingCase, analyse, frozen_from_table, read_case,
                                read_table)
from optimiser.errors import StudyError
from optimiser.physics import performance
from optimiser.sizing import size_designs
from optimiser.sizing.frozen import (analyse_designs, case_spec, frozen_from_sized,
                                     operating_masses)
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


def _random_sized(study, n=400, seed=3):
    spec = study.spec
    rng = np.random.default_rng(seed)
    x = [rng.uniform(study.variable(c).lower, study.variable(c).upper, n)
         for c in ("wing_loading_N_m2", study.loading_column, "aspect_ratio")]
    idx = rng.integers(0, len(spec.high_lift), n)
    return size_designs(spec, *x, idx), idx


@pytest.mark.parametrize("name", NAMES)
def test_a_sized_design_analysed_at_its_design_case_reproduces_the_sizing(name):
    study = load_study(PROBLEMS / f"{name}.toml")
    spec = study.spec
    sized, idx = _random_sized(study)
    frozen = frozen_from_sized(sized, idx, spec.uses_power_loading)
    out = analyse_designs(spec, frozen, operating_masses(spec, frozen))
    compared = 0
    for key, value in sized.items():
        if key not in out or value.dtype.kind != "f":
            continue
        compared += 1
        if key in ("fuel_volume_required_m3", "margin_fuel_volume"):
            # the analysis checks the fuel on board, which differs from the mission fuel by
            # the closure's residual (about 1e-9 of the takeoff mass)
            np.testing.assert_allclose(out[key], value, rtol=0, atol=1e-6, err_msg=key)
        else:
            np.testing.assert_allclose(out[key], value, rtol=1e-10, atol=1e-12, err_msg=key)
    assert compared > 70
    closes = sized["margin_mass_closure"] >= 0
    np.testing.assert_array_equal(out["feasible"], sized["feasible"])
    assert np.all(out["margin_mission_fuel"][closes] == 0.0)  # balanced within tolerance
    assert np.all(out["margin_max_takeoff_mass"] == 0.0)
    np.testing.assert_allclose(out["fuel_on_board_kg"][closes], sized["fuel_mass_kg"][closes],
                               rtol=1e-7)
    # the limiting constraint is the sizing's (the two zero-margin mass checks never name
    # themselves where they are met)
    from optimiser.sizing import checked_constraints
    from optimiser.sizing.frozen import analysis_checked_constraints
    sized_names = np.asarray(checked_constraints(spec, sized))[sized["limiting_index"]]
    names = np.asarray(analysis_checked_constraints(spec, out))[out["limiting_index"]]
    kept = closes & (sized_names != "mass_closure")
    assert kept.sum() > 100
    np.testing.assert_array_equal(names[kept], sized_names[kept])


def _default_frozen(study):
    table = pd.read_csv(PROBLEMS / "high_strip_utility_designs.csv")
    return frozen_from_table(study, table)


def test_heavier_takeoff_raises_the_stall_speed_as_the_root_of_the_mass(study):
    frozen, flaps = _default_frozen(study)
    base = analyse(study, frozen, flaps)
    heavy = analyse(study, frozen, flaps,
                    OperatingCase(takeoff_mass_kg=frozen.max_takeoff_mass_kg * 1.1))
    np.testing.assert_allclose(heavy["stall_speed_m_s"] / base["stall_speed_m_s"],
                               np.sqrt(1.1), rtol=1e-12)
    assert np.all(heavy["takeoff_ground_roll_m"] > 1.2 * base["takeoff_ground_roll_m"])
    np.testing.assert_allclose(heavy["margin_max_takeoff_mass"], -0.1, rtol=1e-12)
    assert not heavy["feasible"].any()
    # the airplane is the same: wing, span and engine do not follow the mass
    for col in ("wing_area_m2", "span_m", "engine_power_kW", "empty_mass_kg"):
        np.testing.assert_array_equal(heavy[col], base[col])


def test_mass_breakdown_of_an_operating_case(study):
    frozen, flaps = _default_frozen(study)
    crew = study.spec.weights.crew_kg
    light = analyse(study, frozen, flaps, OperatingCase(payload_kg=0.0, fuel_kg=150.0))
    np.testing.assert_allclose(light["takeoff_mass_kg"],
                               frozen.empty_mass_kg + crew + 0.0 + 150.0, rtol=1e-15)
    np.testing.assert_allclose(light["fuel_on_board_kg"], 150.0, rtol=1e-15)
    given = analyse(study, frozen, flaps, OperatingCase(takeoff_mass_kg=1500.0))
    np.testing.assert_allclose(given["fuel_on_board_kg"], 1500.0 - frozen.empty_mass_kg - crew
                               - study.spec.weights.payload_kg, rtol=1e-12)
    # less fuel than the mission needs fails mission_fuel and names it the limiting one
    short = analyse(study, frozen, flaps, OperatingCase(fuel_kg=50.0))
    assert np.all(short["margin_mission_fuel"] < 0)
    assert set(short["most_violated"]) == {"mission_fuel"}
    np.testing.assert_allclose(short["margin_mission_fuel"],
                               50.0 / short["fuel_mass_kg"] - 1.0, rtol=1e-12)


def test_a_case_changes_the_airfield_by_the_standard_atmosphere(study):
    frozen, flaps = _default_frozen(study)
    case = read_case({"elevation": "2000 m", "temperature_offset": "20 K"})
    frame = analyse(study, frozen, flaps, case)
    r_air = 8.31432 / 0.0289644
    t_std = 288.15 - 0.0065 * 2000.0
    p = 101325.0 * (t_std / 288.15) ** (9.80665 / (r_air * 0.0065))
    np.testing.assert_allclose(frame["density_takeoff_kg_m3"], p / (r_air * (t_std + 20.0)),
                               rtol=1e-6)
    base = analyse(study, frozen, flaps)
    assert np.all(frame["takeoff_ground_roll_m"] != base["takeoff_ground_roll_m"])


def test_a_new_runway_brings_its_frictions(study):
    spec = case_spec(study.spec, departure_runway="long_grass")
    roll, brake = performance.RUNWAY_SURFACES["long_grass"]
    assert (spec.departure.rolling_friction, spec.departure.braking_friction) == (roll, brake)
    assert spec.destination == study.spec.destination


def test_a_heavier_empty_mass_leaves_less_fuel_at_the_same_takeoff_mass(study):
    frozen, flaps = _default_frozen(study)
    emf = study.spec.weights.empty_mass_factor
    base = analyse(study, frozen, flaps)
    heavy = analyse(study, frozen, flaps, overrides={"empty_mass_factor": emf * 1.05})
    np.testing.assert_allclose(heavy["empty_mass_kg"], base["empty_mass_kg"] * 1.05,
                               rtol=1e-14)
    np.testing.assert_allclose(base["fuel_on_board_kg"] - heavy["fuel_on_board_kg"],
                               base["empty_mass_kg"] * 0.05, rtol=1e-9)
    assert np.all(heavy["margin_mission_fuel"] < 0)


def test_frozen_tables_from_evaluate_output_and_their_errors(study, tmp_path):
    table = pd.read_csv(PROBLEMS / "high_strip_utility_designs.csv")
    from optimiser.evaluation import evaluate
    evaluated = evaluate(study, table)
    path = tmp_path / "evaluated.csv"
    evaluated.to_csv(path, index=False)
    frozen, flaps = frozen_from_table(study, read_table(study, path), str(path))
    np.testing.assert_allclose(frozen.wing_area_m2, evaluated["wing_area_m2"], rtol=1e-15)
    np.testing.assert_allclose(frozen.max_takeoff_mass_kg, evaluated["takeoff_mass_kg"])
    with pytest.raises(StudyError, match="missing column 'empty_mass_kg'"):
        frozen_from_table(study, evaluated.drop(columns="empty_mass_kg"), "t")
    bad = evaluated.copy()
    bad.loc[2, "flap"] = "krueger"
    with pytest.raises(StudyError, match=r"row 3, column 'flap': got 'krueger'"):
        frozen_from_table(study, bad, "t")
    bad = evaluated.copy()
    bad.loc[0, "takeoff_mass_kg"] = 100.0
    with pytest.raises(StudyError, match="expected more than the empty mass plus crew"):
        frozen_from_table(study, bad, "t")


def test_case_options_take_units_and_refuse_nonsense():
    case = read_case({"takeoff_mass": "4600 lb", "cruise_speed": "150 kn"})
    assert case.takeoff_mass_kg == pytest.approx(4600 * 0.45359237, rel=1e-12)
    assert case.conditions["cruise_speed_m_s"] == pytest.approx(150 * 1852 / 3600, rel=1e-12)
    with pytest.raises(StudyError, match="--fuel: got '5 m', which is not a mass"):
        read_case({"fuel": "5 m"})
    with pytest.raises(StudyError, match="got all three"):
        read_case({"fuel": "5 kg", "payload": "1 kg", "takeoff_mass": "900 kg"})


def test_every_case_option_is_on_the_command_line():
    from optimiser.analysis import CASE_OPTIONS
    from optimiser.cli_analyse import CASE_HELP
    assert set(CASE_HELP) == set(CASE_OPTIONS)


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "optimiser", "analyse", *args],
                          capture_output=True, text=True, cwd=cwd)


def test_command_line_writes_the_table_and_keeps_an_existing_file(tmp_path):
    out = tmp_path / "case.csv"
    done = _cli("--temperature-offset", "15 K", "--out", str(out), cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "departure temperature offset 15 K" in done.stdout
    assert "Conceptual-design estimates only" in done.stdout
    frame = pd.read_csv(out)
    assert {"fuel_on_board_kg", "margin_mission_fuel", "margin_max_takeoff_mass"} \
        <= set(frame.columns)
    before = out.read_bytes()
    again = _cli("--out", str(out), cwd=tmp_path)
    assert again.returncode == 2 and again.stderr.count("\n") == 1
    assert "exists" in again.stderr and out.read_bytes() == before
    bad = _cli("--runway", "ice", cwd=tmp_path)
    assert bad.returncode == 2 and "Traceback" not in bad.stderr
    assert "--runway: got 'ice'; expected one of" in bad.stderr
