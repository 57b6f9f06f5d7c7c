"""``optimiser.evaluate`` and ``optimiser evaluate``: columns, internal consistency, mass
closure by hand, designs-file errors, output files and the caution text."""

from __future__ import annotations

import math
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser.study import StudyError, load_study, parse_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")
G0 = 9.80665  # m/s^2, standard gravity (3rd CGPM 1901), exact
# ISA sea level (ICAO Doc 7488 / USSA 1976): p0 = 101325 Pa, T0 = 288.15 K,
# R = 287.05287 J/(kg K) -> rho0 = p0 / (R T0) = 1.2250000 kg/m^3 (tabulated 1.225)
RHO0 = 101325.0 / (287.05287 * 288.15)


@pytest.fixture(scope="module")
def studies():
    return {n: load_study(PROBLEMS / f"{n}.toml") for n in NAMES}


@pytest.fixture(scope="module")
def samples(studies):
    """The bundled sample designs of each study, evaluated."""
    return {n: optimiser.evaluate(studies[n], pd.read_csv(PROBLEMS / f"{n}_designs.csv"))
            for n in NAMES}


@pytest.fixture(scope="module")
def randoms(studies):
    """1500 seeded random in-bounds designs per study, evaluated."""
    rng = np.random.default_rng(20240601)
    out = {}
    for n, study in studies.items():
        d = {v.column: rng.uniform(v.lower, v.upper, 1500) for v in study.variables}
        d["flap"] = rng.choice(study.flaps, 1500)
        out[n] = optimiser.evaluate(study, pd.DataFrame(d))
    return out


COMMON = ["wing_loading_N_m2", "aspect_ratio", "flap", "takeoff_mass_kg", "empty_mass_kg",
          "fuel_mass_kg", "trip_fuel_kg", "wing_area_m2", "span_m", "cd0", "oswald_e",
          "cl_max_takeoff", "cl_max_landing", "cruise_lift_to_drag", "stall_speed_m_s",
          "takeoff_ground_roll_m", "takeoff_distance_m", "landing_distance_m", "climb_rate_m_s",
          "climb_gradient", "cruise_speed_m_s", "service_ceiling_m", "maintenance_index",
          "feasible", "most_violated", "within_bounds", "outside_bounds"]
# Constraints per study. Part 23 AEO gradient 14 CFR 23.65; OEI 14 CFR 23.67 / 25.121(b)
# for twins only; Part 25 has no AEO gradient minimum here (from memory).
CONSTRAINTS = {
    # Part 23 single: the 12 500 lb weight limit applies (14 CFR 23.3(a), old; from memory)
    "high_strip_utility": ["mass_closure", "takeoff_mass_limit", "runway_acceleration",
                           "stall_speed", "takeoff_field", "landing_field", "climb_rate",
                           "climb_gradient", "cruise_speed", "service_ceiling", "fuel_volume"],
    # Part 25 twin: no Part 23 gradient or weight limit; the one-engine-out second segment and
    # the first-segment, final-takeoff, approach (25.121(a), (c), (d)) and landing (25.119)
    # climbs instead
    "twin_turboprop_commuter": ["mass_closure", "runway_acceleration", "stall_speed",
                                "takeoff_field", "landing_field", "climb_rate",
                                "oei_climb_gradient", "first_segment_climb",
                                "final_takeoff_climb", "approach_climb", "landing_climb",
                                "cruise_speed", "service_ceiling", "fuel_volume"],
    "light_twin_jet": ["mass_closure", "runway_acceleration", "stall_speed", "takeoff_field",
                       "landing_field", "climb_rate", "oei_climb_gradient",
                       "first_segment_climb", "final_takeoff_climb", "approach_climb",
                       "landing_climb", "cruise_speed", "service_ceiling", "fuel_volume"],
}
# every study: the fuel carried must fit the usable tank volume (Torenbeek 1982 wing box)


@pytest.mark.parametrize("name", NAMES)
def test_one_row_per_design_with_the_required_columns(name, studies, samples):
    study, frame = studies[name], samples[name]
    designs = pd.read_csv(PROBLEMS / f"{name}_designs.csv")
    assert len(frame) == len(designs) >= 5
    missing = [c for c in COMMON if c not in frame.columns]
    assert not missing
    if name == "light_twin_jet":
        assert {"thrust_to_weight", "engine_thrust_kN"} <= set(frame.columns)
        assert not {"power_loading_N_kW", "engine_power_kW"} & set(frame.columns)
    else:
        assert {"power_loading_N_kW", "engine_power_kW"} <= set(frame.columns)
        assert not {"thrust_to_weight", "engine_thrust_kN"} & set(frame.columns)
    # one-engine-inoperative gradient only for multi-engine studies
    assert ("oei_climb_gradient" in frame.columns) == (study.spec.propulsion.engine_count > 1)
    margins = sorted(c for c in frame.columns if c.startswith("margin_"))
    assert margins == sorted(f"margin_{c}" for c in CONSTRAINTS[name])
    # the inputs come back unchanged and in order
    for col in designs.columns:
        if col == "flap":
            assert frame[col].tolist() == designs[col].tolist()
        else:
            np.testing.assert_allclose(frame[col], designs[col], rtol=0, atol=0)
    assert frame["within_bounds"].all()


@pytest.mark.parametrize("name", NAMES)
def test_internal_consistency(name, studies, samples, randoms):
    study = studies[name]
    frame = pd.concat([samples[name], randoms[name]], ignore_index=True)
    m = frame["takeoff_mass_kg"].to_numpy()
    w = m * G0
    # S = W / (W/S); b = sqrt(A S)  (definitions)
    np.testing.assert_allclose(frame["wing_area_m2"], w / frame["wing_loading_N_m2"], rtol=1e-9)
    np.testing.assert_allclose(frame["span_m"],
                               np.sqrt(frame["aspect_ratio"] * frame["wing_area_m2"]), rtol=1e-9)
    if study.spec.uses_power_loading:
        # P [kW] = W [N] / (W/P [N/kW])
        np.testing.assert_allclose(frame["engine_power_kW"], w / frame["power_loading_N_kW"],
                                   rtol=1e-9)
    else:
        # T [kN] = (T/W) W / 1000
        np.testing.assert_allclose(frame["engine_thrust_kN"],
                                   frame["thrust_to_weight"] * w / 1e3, rtol=1e-9)
    # in-bounds designs of the demo studies all close (40 x payload + crew is never reached)
    closed = frame["margin_mass_closure"] >= 0
    assert closed.mean() > 0.95
    c = frame[closed]
    total = c["payload_kg"] + c["crew_kg"] + c["fuel_mass_kg"] + c["empty_mass_kg"]
    np.testing.assert_allclose(total, c["takeoff_mass_kg"], rtol=1e-6)
    assert (c["payload_kg"] == study.spec.weights.payload_kg).all()
    assert (c["crew_kg"] == study.spec.weights.crew_kg).all()
    assert (c["trip_fuel_kg"] > 0).all()
    assert (c["trip_fuel_kg"] < c["fuel_mass_kg"]).all()
    # feasibility is exactly "every margin is met"; most_violated empty iff feasible and
    # otherwise the constraint with the smallest margin
    mcols = [f"margin_{k}" for k in CONSTRAINTS[name]]
    mm = frame[mcols].to_numpy()
    assert (frame["feasible"].to_numpy() == (mm >= 0).all(axis=1)).all()
    assert ((frame["most_violated"] == "") == frame["feasible"]).all()
    bad = frame[~frame["feasible"]]
    worst = np.asarray(CONSTRAINTS[name])[np.argmin(bad[mcols].to_numpy(), axis=1)]
    # a design whose mass does not close is reported as mass_closure whatever its other
    # margins (computed at the capped mass); otherwise the smallest margin names the reason
    worst = np.where(bad["margin_mass_closure"].to_numpy() < 0, "mass_closure", worst)
    assert bad["most_violated"].tolist() == worst.tolist()
    assert frame["feasible"].any() and (~frame["feasible"]).any()
    # stall speed, landing configuration, sea level: V_s = sqrt(2 (W/S) / (rho0 CLmax,L))
    np.testing.assert_allclose(
        frame["stall_speed_m_s"],
        np.sqrt(2 * frame["wing_loading_N_m2"] / (RHO0 * frame["cl_max_landing"])), rtol=1e-9)
    # margin_stall_speed = 1 - V_s / V_s,max (sizing module docstring: upper-limit margin)
    np.testing.assert_allclose(
        frame["margin_stall_speed"],
        1 - frame["stall_speed_m_s"] / study.spec.requirements.stall_speed_m_s, rtol=1e-9)
    # the Part 25 field length is at least 1.15 x the all-engines distance (14 CFR 25.113)
    if name == "light_twin_jet":
        assert (frame["takeoff_field_required_m"] >= 1.15 * frame["takeoff_distance_m"]
                * (1 - 1e-12)).all()


def test_mass_closure_by_hand(studies, samples):
    """First sample design of the default study, every mass checked by hand."""
    study, r = studies["high_strip_utility"], samples["high_strip_utility"].iloc[0]
    sp = study.spec
    m_to, empty, fuel = r["takeoff_mass_kg"], r["empty_mass_kg"], r["fuel_mass_kg"]
    # definition of takeoff mass (common practice): payload + crew + fuel + empty
    assert 450.0 + 90.0 + fuel + empty == pytest.approx(m_to, rel=1e-6)
    # a plausible six-seat single: 1.5 to 2.5 t (common practice)
    assert 1500 < m_to < 2500
    # fuel = trip + reserve + trapped (0.5 % of m_TO, Roskam Pt I, from memory)
    assert r["trip_fuel_kg"] + r["reserve_fuel_kg"] + 0.005 * m_to == pytest.approx(fuel,
                                                                                   rel=1e-9)
    # empty = the sum of the mass groups (empty_mass_factor 1); components: no class I share
    assert sum(r[c] for c in MASS_GROUP_COLUMNS) == pytest.approx(empty, rel=1e-9)
    assert r["structure_systems_mass_kg"] == 0.0
    assert r["flap"] == "none" and r["high_lift_mass_kg"] == 0.0
    # trip fuel by the Breguet range equation (propeller form, Anderson, "Aircraft Performance
    # and Design", 1999, ch. 5, from memory): W_i / W_f = exp(R g c / (eta L/D)), at the mid-cruise L/D,
    # with the Roskam Pt I Table 2.1 fractions before (start, taxi, takeoff, climb) and
    # after (descent, landing) the cruise.
    ms = sp.mission
    before = ms.fraction_startup * ms.fraction_taxi * ms.fraction_takeoff * ms.fraction_climb
    after = ms.fraction_descent * ms.fraction_landing
    assert before == pytest.approx(0.995 * 0.997 * 0.998 * 0.992, rel=1e-12)
    cruise = math.exp(-926000.0 * G0 * sp.propulsion.sfc_cruise
                      / (0.80 * r["cruise_lift_to_drag"]))
    assert r["trip_fuel_kg"] == pytest.approx(m_to * (1 - before * cruise * after), rel=1e-9)


# --- designs files through the command line ------------------------------------------------

def run_cli(args, cwd: Path, timeout=120):
    return subprocess.run([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                          capture_output=True, text=True, timeout=timeout)


DEFAULT = PROBLEMS / "high_strip_utility.toml"
HEADER = "wing_loading_N_m2,power_loading_N_kW,aspect_ratio,flap"
BAD_DESIGNS = [
    ("missing-column", "wing_loading_N_m2,power_loading_N_kW,flap\n1000,70,fowler\n",
     r"missing column 'aspect_ratio'; expected columns: wing_loading_N_m2, power_loading_N_kW, "
     r"aspect_ratio, flap"),
    ("misspelt-column", "wing_loading_N_m2,power_loading_N_kw,aspect_ratio,flap\n1000,70,8,fowler\n",
     r"missing column 'power_loading_N_kW' \(is 'power_loading_N_kw' a misspelling\?\)"),
    ("non-numeric-cell", f"{HEADER}\n1000,70,8,fowler\n1000,70,eight,plain\n",
     r"row 2, column 'aspect_ratio': got 'eight'; expected a number"),
    ("nan-cell", f"{HEADER}\n1000,nan,8,fowler\n",
     r"row 1, column 'power_loading_N_kW': got 'nan'; expected a finite number from 10 to 500 "
     r"\(the model's valid range; "),
    ("infinite-cell", f"{HEADER}\n1000,70,inf,fowler\n",
     r"row 1, column 'aspect_ratio': got 'inf'; expected a finite number from 3 to 20 "),
    ("negative-cell", f"{HEADER}\n-1000,70,8,fowler\n",
     r"row 1, column 'wing_loading_N_m2': got '-1000'; expected a number from 100 to 12000 "
     r"\(the model's valid range; "),
    # the model's ranges (optimiser.sizing.inputs.MODEL_RANGES): A 3-20, W/S 100-12000 N/m^2,
    # W/P 10-500 N/kW; outside them the model would size the nearest limit instead
    ("aspect-ratio-40", f"{HEADER}\n1000,70,8,fowler\n1000,70,40,fowler\n",
     r"row 2, column 'aspect_ratio': got '40'; expected a number from 3 to 20 \(the model's "
     r"valid range; common practice: the wing mass equation"),
    ("wing-loading-too-high", f"{HEADER}\n12000.5,70,8,fowler\n",
     r"row 1, column 'wing_loading_N_m2': got '12000.5'; expected a number from 100 to 12000 "),
    ("power-loading-too-low", f"{HEADER}\n1000,9.99,8,fowler\n",
     r"row 1, column 'power_loading_N_kW': got '9.99'; expected a number from 10 to 500 "),
    ("unknown-flap", f"{HEADER}\n1000,70,8,fowler\n1000,70,8,fowlr\n",
     r"row 2, column 'flap': unknown flap type 'fowlr' \(did you mean 'fowler'\?\); expected "
     r"one of: .*fowler.*, optionally followed by '\+slats'"),
    ("empty-file", "", r"the file is empty; expected a header wing_loading_N_m2,"),
    ("header-only", f"{HEADER}\n", r"no design rows; expected at least one row"),
    ("ragged-row", f"{HEADER}\n1000,70,8,fowler\n1000,70,8\n",
     r"row 2 has 3 cells; expected 4 like the header"),
    ("not-utf8", None, r"byte 1 is not UTF-8; expected a UTF-8 CSV file"),
]


def _write_designs(path: Path, content):
    if content is None:
        path.write_bytes(b"w\xff\n")
    else:
        path.write_text(content, encoding="utf-8")


@pytest.mark.parametrize("case", BAD_DESIGNS, ids=[c[0] for c in BAD_DESIGNS])
def test_bad_designs_file_api(case, tmp_path, studies):
    from optimiser.designs import read_designs_csv
    _, content, pattern = case
    path = tmp_path / "bad.csv"
    _write_designs(path, content)
    with pytest.raises(StudyError, match=pattern) as info:
        read_designs_csv(studies["high_strip_utility"], path)
    assert "\n" not in str(info.value)
    assert str(info.value).startswith(str(path))


CLI_DESIGNS = ("missing-column", "misspelt-column", "non-numeric-cell", "unknown-flap",
               "empty-file", "ragged-row", "nan-cell", "aspect-ratio-40")


@pytest.mark.parametrize("case", [c for c in BAD_DESIGNS if c[0] in CLI_DESIGNS],
                         ids=list(CLI_DESIGNS))
def test_bad_designs_file_cli(case, tmp_path):
    _, content, pattern = case
    path = tmp_path / "bad.csv"
    _write_designs(path, content)
    cwd = tmp_path / "work"
    cwd.mkdir()
    proc = run_cli(["evaluate", DEFAULT, "--designs", path, "--out", cwd / "out.csv"], cwd)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), proc.stderr
    assert re.search(pattern, lines[0]), lines[0]
    assert list(cwd.iterdir()) == []  # no output file, no results/ folder


def test_designs_outside_the_bounds_are_evaluated_and_flagged(studies):
    study = studies["high_strip_utility"]  # bounds: W/S 500-1600, W/P 45-150, A 6-11
    frame = optimiser.evaluate(study, pd.DataFrame({
        "wing_loading_N_m2": [1000.0, 2000.0, 1000.0, 400.0, 1000.0],
        "power_loading_N_kW": [70.0, 70.0, 70.0, 200.0, 70.0],
        "aspect_ratio": [8.0, 8.0, 12.5, 8.0, 8.0],
        "flap": ["fowler", "fowler", "fowler", "fowler", "double_slotted"]}))
    assert frame["within_bounds"].tolist() == [True, False, False, False, False]
    assert frame["outside_bounds"].tolist() == [
        "", "wing_loading_N_m2", "aspect_ratio", "wing_loading_N_m2;power_loading_N_kW", "flap"]
    assert np.isfinite(frame["takeoff_mass_kg"]).all()
    # evaluated as given, not clipped to the bounds
    assert frame["wing_loading_N_m2"].tolist()[1] == 2000.0
    assert frame["wing_area_m2"].iloc[1] == pytest.approx(
        frame["takeoff_mass_kg"].iloc[1] * G0 / 2000.0, rel=1e-12)


def test_evaluate_api_rejects_bad_tables(studies):
    study = studies["high_strip_utility"]
    with pytest.raises(StudyError, match=r"missing column 'flap'"):
        optimiser.evaluate(study, {"wing_loading_N_m2": [1000.0],
                                   "power_loading_N_kW": [70.0], "aspect_ratio": [8.0]})
    with pytest.raises(StudyError, match=r"unknown flap type 'slotted'"):
        optimiser.evaluate(study, {"wing_loading_N_m2": [1000.0], "power_loading_N_kW": [70.0],
                                   "aspect_ratio": [8.0], "flap": ["slotted"]})
    # a turbofan study wants thrust_to_weight, not power_loading_N_kW
    with pytest.raises(StudyError, match=r"missing column 'thrust_to_weight'"):
        optimiser.evaluate(studies["light_twin_jet"], {
            "wing_loading_N_m2": [3000.0], "power_loading_N_kW": [70.0],
            "aspect_ratio": [8.0], "flap": ["fowler"]})


# --- output files, --design and the caution ------------------------------------------------

def test_out_file_round_trips_and_is_never_replaced_without_force(tmp_path, studies):
    out = tmp_path / "designs_out.csv"
    proc = run_cli(["evaluate", DEFAULT, "--out", out], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert optimiser.CAUTION in proc.stdout
    assert f"wrote {out}" in proc.stdout
    back = pd.read_csv(out, keep_default_na=False)
    expect = optimiser.evaluate(studies["high_strip_utility"],
                                pd.read_csv(PROBLEMS / "high_strip_utility_designs.csv"))
    assert list(back.columns) == list(expect.columns)
    assert len(back) == len(expect) == 9
    for col in expect.columns:
        if expect[col].dtype == bool:
            assert back[col].astype(str).tolist() == expect[col].astype(str).tolist(), col
        elif pd.api.types.is_numeric_dtype(expect[col]):
            # written with 10 significant digits
            np.testing.assert_allclose(back[col].astype(float), expect[col], rtol=1e-9,
                                       atol=1e-300, err_msg=col)
        else:
            assert back[col].tolist() == expect[col].tolist(), col
    assert not (tmp_path / "results").exists()

    # an existing file is kept without --force: exit 2, one line, bytes unchanged
    out.write_text("keep me\n")
    proc = run_cli(["evaluate", DEFAULT, "--out", out], tmp_path)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert re.fullmatch(r"error: .*designs_out\.csv: exists; expected a new file \(use --force "
                        r"to replace it\)\n", proc.stderr), proc.stderr
    assert out.read_text() == "keep me\n"
    # ... and replaced with --force
    proc = run_cli(["evaluate", DEFAULT, "--out", out, "--force"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert len(pd.read_csv(out)) == 9
    assert [p.name for p in tmp_path.iterdir()] == ["designs_out.csv"]  # no temporary left


def test_design_option(tmp_path, studies):
    out = tmp_path / "one.csv"
    design = "wing_loading_N_m2=1100 power_loading_N_kW=75 aspect_ratio=8 flap=fowler"
    proc = run_cli(["evaluate", DEFAULT, "--design", design, "--out", out], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "1 design(s)" in proc.stdout
    assert optimiser.CAUTION in proc.stdout
    back = pd.read_csv(out)
    assert len(back) == 1
    assert back.loc[0, ["wing_loading_N_m2", "power_loading_N_kW", "aspect_ratio"]].tolist() \
        == [1100.0, 75.0, 8.0]
    assert back.loc[0, "flap"] == "fowler"
    api = optimiser.evaluate(studies["high_strip_utility"], {
        "wing_loading_N_m2": [1100.0], "power_loading_N_kW": [75.0], "aspect_ratio": [8.0],
        "flap": ["fowler"]})
    assert back.loc[0, "takeoff_mass_kg"] == pytest.approx(api["takeoff_mass_kg"].iloc[0],
                                                           rel=1e-9)
    # outside the bounds (W/S 500 to 1600): evaluated, and flagged in the summary
    proc = run_cli(["evaluate", DEFAULT, "--design", design.replace("=1100", "=2000")],
                   tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "[outside bounds: wing_loading_N_m2]" in proc.stdout
    # a misspelt name in --design: exit 2 with a hint
    proc = run_cli(["evaluate", DEFAULT, "--design", design.replace("aspect_ratio", "aspect")],
                   tmp_path)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr
    assert re.search(r"--design: unknown name 'aspect' \(did you mean 'aspect_ratio'\?\)",
                     proc.stderr), proc.stderr


def test_readme_first_command_default_study_and_its_samples(tmp_path):
    proc = run_cli(["evaluate"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "Traceback" not in proc.stderr
    assert proc.stdout.startswith("study high-strip-utility: 9 design(s), ")
    assert optimiser.CAUTION in proc.stdout
    assert proc.stdout.rstrip().endswith(optimiser.CAUTION)
    assert list(tmp_path.iterdir()) == []  # prints only; writes nothing


@pytest.mark.parametrize("name", NAMES[1:])
def test_evaluate_other_demos_with_their_samples(name, tmp_path):
    proc = run_cli(["evaluate", PROBLEMS / f"{name}.toml"], tmp_path)
    assert proc.returncode == 0, proc.stderr
    n = len(pd.read_csv(PROBLEMS / f"{name}_designs.csv"))
    assert re.match(rf"study [\w-]+: {n} design\(s\), \d+ feasible", proc.stdout)
    assert optimiser.CAUTION in proc.stdout


def test_caution_text_is_the_documented_one():
    assert optimiser.CAUTION.startswith("Conceptual-design estimates only")
    assert "not for certification" in optimiser.CAUTION
    assert "\n" not in optimiser.CAUTION


MASS_GROUP_COLUMNS = ("wing_mass_kg", "engine_mass_kg", "high_lift_mass_kg",
                      "horizontal_tail_mass_kg", "vertical_tail_mass_kg", "fuselage_mass_kg",
                      "main_gear_mass_kg", "nose_gear_mass_kg", "fuel_system_mass_kg",
                      "flight_controls_mass_kg", "fixed_equipment_mass_kg",
                      "structure_systems_mass_kg")


def test_class_ii_build_up_of_the_default_study_by_hand(studies, samples):
    """The first sample design of the default study (Part 23 piston single, fixed gear),
    every component mass recomputed here from its equation in native units with the
    geometry derived by hand (a self-consistency check of the build-up, not a published
    worked example: none could be checked against its page)."""
    study, r = studies["high_strip_utility"], samples["high_strip_utility"].iloc[0]
    lb, ft, kt = 0.45359237, 0.3048, 1852.0 / 3600.0   # exact definitions
    w = r["takeoff_mass_kg"] / lb
    n = 5.7  # 1.5 x 3.8 (family default)
    s, b = r["wing_area_m2"], r["span_m"]
    # geometry (the study's [geometry]; physics/geometry.py, common practice): fuselage
    # 8.8 m x 1.3 m, tail arm half of it; V_H 0.65, V_V 0.045 (single-engine prop); tails A
    # 4.5 and 1.5, taper 0.5, t/c 0.10; mean aerodynamic chord of the taper-0.6 wing
    l_f, d_f = 8.8, 1.3
    arm = 0.5 * l_f
    c_r = 2 * s / (b * 1.6)
    mac = 2 / 3 * c_r * (1 + 0.6 + 0.36) / 1.6
    s_h, s_v = 0.65 * s * mac / arm, 0.045 * s * b / arm
    b_h, b_v = (4.5 * s_h) ** 0.5, (1.5 * s_v) ** 0.5
    t_h, t_v = 0.10 * 2 * s_h / (b_h * 1.5), 0.10 * 2 * s_v / (b_v * 1.5)
    load = w * n / 1e5
    ht = 127 * (load**0.87 * (s_h / ft**2 / 100) ** 1.2 * (arm / ft / 10) ** 0.483
                * (b_h / t_h) ** 0.5) ** 0.458
    vt = 98.5 * (load**0.87 * (s_v / ft**2 / 100) ** 1.2 * (b_v / t_v) ** 0.5) ** 0.458
    v_c = 125.0 * (r["density_cruise_kg_m3"] / 1.225) ** 0.5  # KEAS of 125 kn TAS at 8000 ft
    fus = 200 * (load**0.286 * (l_f / ft / 10) ** 0.857 * (2 * d_f / ft / 10)
                 * (v_c / 100) ** 0.338) ** 1.1
    gal = r["fuel_mass_kg"] / 720.0 / 3.785411784e-3  # avgas 720 kg/m^3
    fuel_sys = 2.49 * (gal**0.6 * (1 / 1.5) ** 0.3 * 2**0.2 * 1**0.13) ** 1.21
    main = 20 + 0.10 * w**0.75 + 0.019 * w
    nose = 25 + 0.0024 * w
    controls = 0.23 * w ** (2 / 3)
    dry = r["engine_power_kW"] * 0.9 / lb  # 0.9 kg/kW dry
    engine = 2.575 * dry**0.922
    for column, value_lb in (("horizontal_tail_mass_kg", ht), ("vertical_tail_mass_kg", vt),
                             ("fuselage_mass_kg", fus), ("fuel_system_mass_kg", fuel_sys),
                             ("main_gear_mass_kg", main), ("nose_gear_mass_kg", nose),
                             ("flight_controls_mass_kg", controls),
                             ("engine_mass_kg", engine)):
        # rel 1e-6: the cruise EAS here uses rho0 1.225 rounded and knots for m/s
        assert r[column] == pytest.approx(value_lb * lb, rel=1e-5), column
    assert r["fixed_equipment_mass_kg"] == 150.0  # components default, piston
    assert sum(r[c] for c in MASS_GROUP_COLUMNS) == pytest.approx(r["empty_mass_kg"],
                                                                   rel=1e-9)


def test_fraction_method_is_the_class_i_share():
    """mass_method = "fraction": the structure-and-systems share and the installed engine
    by specific mass (spec.FAMILY_DEFAULTS: 0.27 m_TO, 60 kg fixed, 1.35 kg/kW; common
    practice), every component group zero."""
    text = (PROBLEMS / "high_strip_utility.toml").read_text(encoding="utf-8").replace(
        "[weights]\n", '[weights]\nmass_method = "fraction"\n')
    study = parse_study(text)
    r = optimiser.evaluate(study, pd.DataFrame({"wing_loading_N_m2": [900.0], "power_loading_N_kW": [73.0],
                                      "aspect_ratio": [8.0], "flap": ["none"]})).iloc[0]
    m_to = r["takeoff_mass_kg"]
    assert r["structure_systems_mass_kg"] == pytest.approx(0.27 * m_to, rel=1e-9)
    assert r["fixed_equipment_mass_kg"] == 60.0
    assert r["engine_mass_kg"] == pytest.approx(1.35 * m_to * G0 / 73.0, rel=1e-9)
    for c in ("horizontal_tail_mass_kg", "vertical_tail_mass_kg", "fuselage_mass_kg",
              "main_gear_mass_kg", "nose_gear_mass_kg", "fuel_system_mass_kg",
              "flight_controls_mass_kg"):
        assert r[c] == 0.0
    assert sum(r[c] for c in MASS_GROUP_COLUMNS) == pytest.approx(r["empty_mass_kg"],
                                                                   rel=1e-9)
