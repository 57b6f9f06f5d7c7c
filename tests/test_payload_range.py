"""Payload-range corners of frozen designs (optimiser payload-range).

Sources: the Breguet range equation, for propeller aircraft R = (eta / (c g)) (L/D)
ln(W0/W1) and for jets R = (V / (c g)) (L/D) ln(W0/W1) (J. D. Anderson, "Aircraft
Performance and Design", McGraw-Hill, 1999, sec. 5.13 and 5.14; from memory), computed by
hand below with the model's own mid-cruise L/D, cruise efficiency and SFC and segment
fractions (Roskam, "Airplane Design", Part I, Table 2.1); the mass breakdown takeoff = empty
+ crew + payload + fuel (Roskam, Part I, ch. 2); the model's own sizing (a sized design at
its maximum takeoff mass and design payload flies the study's design range) and its own
frozen analysis (a corner's mass and range balance the mission fuel: margin 0)."""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from optimiser.analysis import frozen_from_table, read_table
from optimiser.payload_range import CORNERS, payload_range, range_for_fuel
from optimiser.physics import G0
from optimiser.sizing import size_designs
from optimiser.sizing.engines import cruise_consumption
from optimiser.sizing.frozen import (analyse_designs, case_spec, frozen_from_sized,
                                     operating_masses)
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


def _designs(name):
    study = load_study(PROBLEMS / f"{name}.toml")
    frozen, flaps = frozen_from_table(study, read_table(study, PROBLEMS / f"{name}_designs.csv"))
    return study, frozen, flaps


def _corner(table, corner):
    return table[table["corner"] == corner].reset_index(drop=True)


def _analysed_at(spec, frozen, rows):
    """The frozen analysis at each row's takeoff mass, payload and range (one design at a
    time: the range is a study-wide condition)."""
    out = []
    for i in range(frozen.size):
        one = type(frozen)(*(None if getattr(frozen, f) is None else getattr(frozen, f)[i:i + 1]
                         for f in frozen.__slots__))
        s = case_spec(spec, range_m=float(rows["range_km"][i]) * 1e3)
        masses = operating_masses(s, one, rows["takeoff_mass_kg"][i], rows["payload_kg"][i])
        out.append(analyse_designs(s, one, masses))
    return {k: np.concatenate([o[k] for o in out]) for k in out[0]}


@pytest.mark.parametrize("name", ["twin_turboprop_commuter", "light_twin_jet"])
def test_range_at_max_payload_is_the_breguet_range_of_the_fuel_above_reserves(name):
    study, frozen, flaps = _designs(name)
    spec, ms = study.spec, study.spec.mission
    b = _corner(payload_range(spec, frozen, flaps), "B")
    out = _analysed_at(spec, frozen, b)
    cons = cruise_consumption(spec, {})
    m = b["takeoff_mass_kg"].to_numpy()
    # the fuel above reserves and trapped fuel is the trip fuel
    trip = b["fuel_on_board_kg"].to_numpy() - out["reserve_fuel_kg"] \
        - ms.trapped_fuel_fraction * m
    f_pre = ms.fraction_startup * ms.fraction_taxi * ms.fraction_takeoff * ms.fraction_climb
    w0 = m * G0 * f_pre  # start of cruise
    w1 = (m - trip) * G0 / (ms.fraction_descent * ms.fraction_landing)  # end of cruise
    ld = out["cruise_lift_to_drag"]  # the model's mid-cruise L/D
    if spec.propulsion.family == "turbofan":
        by_hand = ms.cruise_speed_m_s / (cons.tsfc_kg_N_s * G0) * ld * np.log(w0 / w1)
    else:
        by_hand = cons.propeller_efficiency / (cons.sfc_kg_J * G0) * ld * np.log(w0 / w1)
    np.testing.assert_allclose(b["range_km"].to_numpy() * 1e3, by_hand, rtol=1e-6)
    assert 500e3 < by_hand.min() < by_hand.max() < 3e6  # a real range, not a degenerate one


@pytest.mark.parametrize("name", NAMES)
def test_every_corner_balances_the_mission_fuel_of_the_frozen_analysis(name):
    study, frozen, flaps = _designs(name)
    table = payload_range(study.spec, frozen, flaps)
    for corner in CORNERS:
        rows = _corner(table, corner)
        out = _analysed_at(study.spec, frozen, rows)
        np.testing.assert_allclose(out["margin_mission_fuel"], 0.0, atol=1e-6, err_msg=corner)
        np.testing.assert_allclose(out["fuel_on_board_kg"], rows["fuel_on_board_kg"],
                                   rtol=1e-12, err_msg=corner)
        # takeoff = empty + crew + payload + fuel (Roskam Part I ch. 2)
        np.testing.assert_allclose(rows["takeoff_mass_kg"], frozen.empty_mass_kg
                                   + study.spec.weights.crew_kg + rows["payload_kg"]
                                   + rows["fuel_on_board_kg"], rtol=1e-12)
        assert np.all(rows["takeoff_mass_kg"] <= frozen.max_takeoff_mass_kg * (1 + 1e-12))


@pytest.mark.parametrize("name", NAMES)
def test_full_tank_corner_carries_the_capacity_of_the_fuel_volume_constraint(name):
    study, frozen, flaps = _designs(name)
    spec = study.spec
    table = payload_range(spec, frozen, flaps)
    c, d = _corner(table, "C"), _corner(table, "D")
    out = _analysed_at(spec, frozen, c)
    capacity = out["fuel_volume_m3"] * spec.weights.fuel_density_kg_m3
    useful = frozen.max_takeoff_mass_kg - frozen.empty_mass_kg - spec.weights.crew_kg
    full = capacity < useful  # the tanks, not the maximum takeoff mass, limit the fuel
    assert full.any()
    np.testing.assert_allclose(c["fuel_on_board_kg"][full], capacity[full], rtol=1e-12)
    np.testing.assert_allclose(c["tank_capacity_kg"], capacity, rtol=1e-12)
    np.testing.assert_allclose(out["margin_fuel_volume"][full], 0.0, atol=1e-12)
    np.testing.assert_allclose(d["fuel_on_board_kg"], np.minimum(capacity, useful), rtol=1e-12)
    np.testing.assert_array_equal(d["payload_kg"], 0.0)


@pytest.mark.parametrize("name", NAMES)
def test_ranges_grow_from_a_to_d(name):
    study, frozen, flaps = _designs(name)
    table = payload_range(study.spec, frozen, flaps)
    r = {k: _corner(table, k)["range_km"].to_numpy() for k in CORNERS}
    p_c = _corner(table, "C")["payload_kg"].to_numpy()
    assert np.all(r["A"] == 0.0)
    assert np.all(r["A"] < r["B"])
    assert np.all(r["B"] <= r["C"] * (1 + 1e-12))
    assert np.all(r["C"][p_c > 0] < r["D"][p_c > 0])  # C = D only where C carries no payload


def test_small_tanks_make_b_and_c_coincide():
    # commuter design 3: its tanks (822 kg) hold less than the 6008 kg maximum takeoff mass
    # leaves at the 1800 kg design payload, so B is full tanks below the maximum mass
    study, frozen, flaps = _designs("twin_turboprop_commuter")
    table = payload_range(study.spec, frozen, flaps)
    b, c = _corner(table, "B"), _corner(table, "C")
    useful = frozen.max_takeoff_mass_kg - frozen.empty_mass_kg - study.spec.weights.crew_kg
    small = b["tank_capacity_kg"].to_numpy() < useful - study.spec.weights.payload_kg
    assert small[2]
    for col in ("range_km", "payload_kg", "fuel_on_board_kg", "takeoff_mass_kg"):
        np.testing.assert_array_equal(b[col][small], c[col][small])
    assert np.all(b["takeoff_mass_kg"][small] < frozen.max_takeoff_mass_kg[small])
    np.testing.assert_array_equal(b["payload_kg"], study.spec.weights.payload_kg)


@pytest.mark.parametrize("name", NAMES)
def test_a_sized_design_at_max_payload_flies_the_design_range(name):
    # the sizing closes the mass on the design range with the design payload (model's own)
    study = load_study(PROBLEMS / f"{name}.toml")
    spec = study.spec
    rng = np.random.default_rng(5)
    x = [rng.uniform(study.variable(c).lower, study.variable(c).upper, 50)
         for c in ("wing_loading_N_m2", study.loading_column, "aspect_ratio")]
    idx = rng.integers(0, len(spec.high_lift), 50)
    sized = size_designs(spec, *x, idx)
    ok = np.isfinite(sized["takeoff_mass_kg"]) & (sized["margin_mass_closure"] >= 0)
    frozen = frozen_from_sized({k: v[ok] for k, v in sized.items()}, idx[ok],
                               spec.uses_power_loading)
    masses = operating_masses(spec, frozen)
    r = range_for_fuel(spec, frozen, masses.takeoff_mass_kg, masses.fuel_on_board_kg)
    np.testing.assert_allclose(r, spec.mission.range_m, rtol=1e-6)


def test_fuel_short_of_the_reserves_has_no_range():
    study, frozen, _ = _designs("light_twin_jet")
    m = frozen.max_takeoff_mass_kg
    r = range_for_fuel(study.spec, frozen, m, np.full(frozen.size, 1.0))
    assert np.all(np.isnan(r))


def _cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "optimiser", *args], capture_output=True,
                          text=True, cwd=cwd)


def test_cli_writes_the_corners_and_refuses_to_overwrite(tmp_path):
    study = PROBLEMS / "light_twin_jet.toml"
    designs = PROBLEMS / "light_twin_jet_designs.csv"
    out = tmp_path / "pr"
    done = _cli("payload-range", str(designs), "--study", str(study), "--out", str(out),
                cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "Conceptual-design estimates only" in done.stdout
    import pandas as pd
    table = pd.read_csv(out / "payload_range.csv")
    assert list(table["corner"][:4]) == list(CORNERS)
    assert math.isclose(table["range_km"][1], study_range_km(study), rel_tol=1e-6)
    for ext in ("png", "svg"):
        assert (out / f"payload_range.{ext}").stat().st_size > 1000
    before = (out / "payload_range.csv").read_bytes()
    again = _cli("payload-range", str(designs), "--study", str(study), "--out", str(out),
                 cwd=tmp_path)
    assert again.returncode == 2
    assert len(again.stderr.strip().splitlines()) == 1 and "exists" in again.stderr
    assert (out / "payload_range.csv").read_bytes() == before


def study_range_km(path):
    return load_study(path).spec.mission.range_m / 1e3


@pytest.mark.parametrize("content, expected", [
    ("flap,wing_area_m2\nplain,12\n", "missing column"),
    ("", "empty"),
])
def test_cli_bad_input_is_one_line_exit_2(tmp_path, content, expected):
    bad = tmp_path / "bad.csv"
    bad.write_text(content, encoding="utf-8")
    done = _cli("payload-range", str(bad), "--study", str(PROBLEMS / "light_twin_jet.toml"),
                "--out", str(tmp_path / "o"), cwd=tmp_path)
    assert done.returncode == 2
    assert len(done.stderr.strip().splitlines()) == 1 and expected in done.stderr
    assert not (tmp_path / "o").exists()


def test_cli_missing_file_is_one_line_exit_2(tmp_path):
    done = _cli("payload-range", str(tmp_path / "nope.csv"), cwd=tmp_path)
    assert done.returncode == 2
    assert len(done.stderr.strip().splitlines()) == 1


def test_a_picked_front_row_flies_the_design_range_at_max_payload():
    # a pick's front row is sized on the design range with the design payload (model's own)
    import pandas as pd

    from optimiser.evaluation import evaluate
    from optimiser.report.picks import pick_payload_range
    study = load_study(PROBLEMS / "high_strip_utility.toml")
    frame = evaluate(study, pd.read_csv(PROBLEMS / "high_strip_utility_designs.csv"))
    row = frame[frame["margin_mass_closure"] >= 0].iloc[0]
    corners = pick_payload_range(study, row)
    assert list(corners["corner"]) == list(CORNERS)
    assert math.isclose(corners["range_km"][1] * 1e3, study.spec.mission.range_m, rel_tol=1e-6)
    assert corners["payload_kg"][1] == study.spec.weights.payload_kg
