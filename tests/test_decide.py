"""Decision support: the picking methods against hand-worked values and pymoo, hard limits,
the pick and flaps commands, the design sheet and the HTML report file.

Sources: pseudo-weights, Deb, "Multi-Objective Optimization Using Evolutionary Algorithms",
Wiley, 2001 (from memory); the trade-off/knee measure, Deb & Gupta (2011) (from memory); the
achievement scalarising function, Wierzbicki (1980) (from memory); each is also cross-checked
against pymoo's implementation. The 1 % binding threshold is this tool's own convention
(common practice)."""

from __future__ import annotations

import json
import math
import warnings

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser import decide, flaps
from optimiser.runfolder import load_run
from optimiser.cli import main
from optimiser.report import sheet
from optimiser.search import nondominated_mask
from optimiser.sizing import active_constraints
from optimiser.study import bundled_study_path, load_study, parse_study

TINY = dict(population=24, generations=5, plots=False)


@pytest.fixture(scope="module")
def run_dir(study, tmp_path_factory):
    out = tmp_path_factory.mktemp("decide") / "run"
    optimiser.optimise(study, out=out, **TINY)
    return out


@pytest.fixture(scope="module")
def run(run_dir):
    return load_run(run_dir)


def _random_front(seed, n=60, m=3):
    rng = np.random.default_rng(seed)
    P = rng.random((n * 4, m))
    P = P / np.linalg.norm(P, axis=1, keepdims=True)  # points near a sphere: a spread front
    return P[nondominated_mask(P)]


# ----------------------------------------------------------------------------- methods

def test_pseudo_weights_hand_worked():
    # Deb 2001, pseudo-weight vector: w_i = (1 - nf_i) / sum_j (1 - nf_j) on normalised rows
    nF = np.array([[0.0, 1.0], [1.0, 0.0], [0.5, 0.5], [0.2, 0.6]])
    W = decide.pseudo_weights(nF)
    np.testing.assert_allclose(W, [[1, 0], [0, 1], [0.5, 0.5], [0.8 / 1.2, 0.4 / 1.2]],
                               rtol=1e-12)
    assert decide.weights_distance(nF, [0.5, 0.5]).argmin() == 2


@pytest.mark.parametrize("w", [(0.5, 0.3, 0.2), (0.1, 0.1, 0.8), (1 / 3, 1 / 3, 1 / 3)])
def test_pseudo_weights_pick_matches_pymoo(w):
    from pymoo.mcdm.pseudo_weights import PseudoWeights
    F = _random_front(3)
    nF = decide.normalise(F)
    assert decide.weights_distance(nF, w).argmin() == PseudoWeights(np.array(w)).do(F)


@pytest.mark.parametrize("seed", [1, 2])
def test_asf_matches_pymoo(seed):
    from pymoo.decomposition.asf import ASF
    F = _random_front(seed)
    nF = decide.normalise(F)
    z = np.array([0.1, 0.2, 0.05])
    w = np.array([0.5, 0.3, 0.2])
    # pymoo's ASF divides by its weights (PYMOO-NOTES): pass 1/w for "w multiplies"
    theirs = ASF().do(nF, 1.0 / w, utopian_point=z).ravel()
    mine = decide.asf(nF, z, w, rho=0.0)
    np.testing.assert_allclose(mine, theirs, rtol=1e-12)
    assert decide.asf(nF, z, w).argmin() == theirs.argmin()


def test_tradeoff_hand_worked_and_knee():
    # Deb & Gupta 2011 trade-off: corner (0.2, 0.2) of (0,1), (0.2,0.2), (1,0): each move
    # away sacrifices 0.8 for a gain of 0.2 -> 4; from an end to the corner 0.2/0.8 = 0.25
    nF = np.array([[0.0, 1.0], [0.2, 0.2], [1.0, 0.0]])
    np.testing.assert_allclose(decide.tradeoff(nF), [0.25, 4.0, 0.25], rtol=1e-12)


def test_knee_agrees_with_pymoo_on_a_sharp_corner():
    from pymoo.mcdm.high_tradeoff import HighTradeoffPoints
    x = np.linspace(0.0, 1.0, 41)
    y = np.where(x <= 0.2, 1.0 - 4.0 * x, 0.2 - 0.25 * (x - 0.2))   # corner at x = 0.2
    F = np.column_stack([x, y])
    mine = int(decide.tradeoff(decide.normalise(F)).argmax())
    assert x[mine] == pytest.approx(0.2)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        theirs = HighTradeoffPoints().do(decide.normalise(F))
    assert theirs is not None and mine in np.atleast_1d(theirs)


# ----------------------------------------------------------------------------- limits, choose

def test_parse_limit_and_errors(run):
    cols = list(run.front.columns)
    lim = decide.parse_limit("engine_power_kW<=260", cols)
    assert (lim.column, lim.op, lim.value) == ("engine_power_kW", "<=", 260.0)
    with pytest.raises(decide.DecideError, match=r"--limit: unknown column 'engine_powr_kW' "
                       r"\(did you mean 'engine_power_kW'\?\)"):
        decide.parse_limit("engine_powr_kW<=260", cols)
    with pytest.raises(decide.DecideError, match=r"--limit: got 'engine_power_kW=<260'; "
                       "expected COLUMN<=VALUE"):
        decide.parse_limit("engine_power_kW=<260", cols)
    with pytest.raises(decide.DecideError, match="no front design meets every limit"):
        decide.apply_limits(run.front, [decide.parse_limit("engine_power_kW<=1", cols)])


@pytest.mark.parametrize("method, kw", [
    ("knee", {}), ("weights", {"weights": (0.5, 0.3, 0.2)}),
    ("aspiration", {"aspiration": {"trip_fuel_kg": 180.0, "engine_power_kW": 240.0,
                                   "maintenance_index": 3.0}})])
def test_choice_respects_limits_and_is_the_best_score(study, run, method, kw):
    cols = list(run.front.columns)
    cap = float(run.front["engine_power_kW"].median())
    limits = [decide.parse_limit(f"engine_power_kW<={cap}", cols)]
    ch = decide.choose(study, run.front, method, limits=limits, **kw)
    assert ch.design["engine_power_kW"] <= cap
    assert len(ch.ranking) == int((run.front["engine_power_kW"] <= cap).sum())
    s = ch.ranking["score"].to_numpy()
    assert s[0] == (s.max() if method == "knee" else s.min())
    # the chosen row is a row of the front, unchanged
    row = run.front.loc[int(ch.design["front_row"])]
    assert row["trip_fuel_kg"] == ch.design["trip_fuel_kg"]


def test_weights_pick_follows_the_weights(study, run):
    # weights (1, 0, 0): the L1 distance to the pseudo-weights is 2 (1 - p_fuel), so the pick
    # is the design with the largest fuel pseudo-weight (Deb 2001, from memory) -- the design
    # nearest the fuel ideal and farthest toward the nadir of the others, which need not be
    # the least-fuel design itself (it was on an earlier front; the class II masses changed
    # the front and it no longer is)
    cols = list(study.objective_columns())
    nF = decide.normalise(run.front[cols].to_numpy(float))
    p = decide.pseudo_weights(nF)
    fuel = decide.choose(study, run.front, "weights", weights=(1.0, 0.0, 0.0))
    # L1 distance to (1, 0, 0) is 2 (1 - w_fuel): the pick has the largest pseudo-weight of
    # trip fuel, w = (1 - nf) / sum (1 - nf) (Deb 2001), which lies at or near the least fuel
    F = run.front[list(study.objective_columns())].to_numpy(float)
    nF = (F - F.min(axis=0)) / (F.max(axis=0) - F.min(axis=0))
    w_fuel = (1.0 - nF[:, 0]) / (1.0 - nF).sum(axis=1)
    assert fuel.design["trip_fuel_kg"] == pytest.approx(
        run.front["trip_fuel_kg"].iloc[int(np.argmax(w_fuel))])
    assert fuel.design["trip_fuel_kg"] <= 1.01 * run.front["trip_fuel_kg"].min()
    mi = decide.choose(study, run.front, "weights", weights=(0.0, 0.0, 1.0))
    row = run.front.index.get_loc(mi.design["front_row"])
    assert p[row, 2] == pytest.approx(p[:, 2].max(), rel=1e-12)
    assert mi.design["maintenance_index"] <= run.front["maintenance_index"].median()


def test_option_parsing_errors(study):
    cols = study.objective_columns()
    with pytest.raises(decide.DecideError, match=r"--weights: got '1,2'; expected 3 non-negative"):
        decide.parse_weights("1,2", cols)
    with pytest.raises(decide.DecideError, match="--aspiration: unknown objective 'fuel'"):
        decide.parse_aspiration("fuel=3", cols)
    np.testing.assert_allclose(decide.parse_weights("2,1,1", cols), [0.5, 0.25, 0.25])


def test_runners_up_changes_are_differences(study, run):
    ch = decide.choose(study, run.front, "knee")
    ru = decide.runners_up(study, ch, 3)
    assert len(ru) == min(3, len(run.front) - 1)
    for _, r in ru.iterrows():
        for c in study.objective_columns():
            assert r[f"change_{c}"] == pytest.approx(r[c] - ch.design[c], abs=1e-9)


# ----------------------------------------------------------------------------- the sheet

def test_design_sheet_has_every_margin_and_binding_flags(study, run):
    d = run.front.iloc[0]
    t = sheet.design_sheet(study, d)
    mar = t[t["section"] == "margin"].set_index("quantity")
    assert set(mar.index) == {f"margin_{c}" for c in active_constraints(study.spec)}
    for c in active_constraints(study.spec):
        m = float(d[f"margin_{c}"])
        assert mar.loc[f"margin_{c}", "value"] == m
        assert mar.loc[f"margin_{c}", "status"].startswith(
            "binding" if 0 <= m < sheet.BINDING_MARGIN else "met")
    sized = t[t["section"] == "sized"].set_index("quantity")
    assert sized.loc["takeoff_mass_kg", "value"] == d["takeoff_mass_kg"]
    assert sized.loc["wing_area_m2", "unit"] == "m²"


def test_pick_command_writes_files_and_refuses_overwrite(run_dir, capsys):
    rc = main(["pick", str(run_dir), "--limit", "maintenance_index<=4", "--limit",
               "engine_power_kW<=300"])
    assert rc == 0
    (out,) = run_dir.glob("pick-knee-limited-*")      # a limited pick has its own folder
    for name in ("design.csv", "design.md", "constraint_diagram.png", "constraint_diagram.svg",
                 "runners_up.csv", "choice.json", "design_input.csv", "payload_range.csv",
                 "payload_range.png", "payload_range.svg"):
        assert (out / name).is_file(), name
    d = pd.read_csv(out / "design.csv")
    mi = float(d.loc[d["quantity"] == "maintenance_index", "value"].iloc[0])
    assert mi <= 4
    md = (out / "design.md").read_text()
    assert optimiser.CAUTION in md and "## Constraint margins" in md and "## Runners-up" in md
    info = json.loads((out / "choice.json").read_text())
    assert info["limits"] == ["maintenance_index<=4", "engine_power_kW<=300"]
    before = (out / "design.csv").read_bytes()
    capsys.readouterr()
    assert main(["pick", str(run_dir), "--method", "weights", "--weights", "1,1,1"]) == 0
    assert main(["pick", str(run_dir), "--limit", "maintenance_index<=4", "--limit",
                 "engine_power_kW<=300"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and f"{out.name}: exists" in err[0] and "--force" in err[0]
    assert (out / "design.csv").read_bytes() == before
    assert main(["pick", str(run_dir), "--limit", "nope<=3"]) == 2
    assert "--limit: unknown column 'nope'" in capsys.readouterr().err


# ----------------------------------------------------------------------------- flaps

def test_mean_gap_worked_example():
    a = flaps.lower_envelope([0.0, 2.0], [2.0, 0.0])
    b = flaps.lower_envelope([0.0, 2.0], [1.0, 0.0])
    gap, rng = flaps.mean_gap(a, b)
    # y_a - y_b = (2 - x) - (1 - x/2) = 1 - x/2, mean over [0, 2] = 0.5
    assert gap == pytest.approx(0.5, abs=1e-12) and rng == (0.0, 2.0)
    # beyond its last point an envelope stays flat (an engine no larger than E), below: NaN
    y = flaps.best_within(b, [-1.0, 1.0, 5.0])
    assert math.isnan(y[0]) and y[1] == pytest.approx(0.5) and y[2] == 0.0


def test_flap_comparison_of_a_run(study, run):
    table, fronts = flaps.compare_flaps(run)
    assert list(table["flap"]) == list(study.flaps)
    assert table["share_of_combined_front"].sum() == pytest.approx(1.0)
    final_hv = run.info["hypervolume"]["final"]
    assert (table["hypervolume"] <= final_hv + 1e-12).all()
    ref = table[table["reference_option"]]
    # the reference is the best trip fuel vs engine size trade (largest 2-objective
    # hypervolume in that plane), whatever its maintenance index
    assert len(ref) == 1
    assert ref["fuel_engine_hypervolume"].iloc[0] == table["fuel_engine_hypervolume"].max()
    assert (table["fuel_engine_hypervolume"] <= 1.21 + 1e-12).all()  # 1.1 x 1.1 box
    assert ref["extra_trip_fuel_at_equal_engine_kg"].iloc[0] == 0.0
    ev = pd.read_csv(run.evaluations_path)
    for _, r in table.iterrows():
        mine = ev[(ev["flap"] == r["flap"]) & ev["feasible"]]
        assert r["best_trip_fuel_kg"] == pytest.approx(mine["trip_fuel_kg"].min())
        assert r["evaluated"] == (ev["flap"] == r["flap"]).sum()


def test_flaps_from_a_study_reports_an_option_that_cannot_meet_stall(tmp_path, capsys):
    text = load_study(bundled_study_path()).text.replace('stall_speed = "61 kn"',
                                                         'stall_speed = "40 kn"')
    path = tmp_path / "strict_stall.toml"
    path.write_text(text)
    rc = main(["flaps", str(path), "--out", str(tmp_path / "run"), "--pop", "12", "--gens", "2"])
    assert rc == 0
    table = pd.read_csv(tmp_path / "run" / "flaps" / "flaps.csv", keep_default_na=False)
    none = table[table["flap"] == "none"].iloc[0]
    assert str(none["feasible_found"]) == "False"
    assert none["failing_constraint"] == "stall_speed"
    # independent check: stall margin at the lowest wing loading, 1 - Vs / V_limit with
    # Vs = sqrt(2 (W/S) / (rho0 CLmax)) (definition of stall speed), rho0 = 1.225 kg/m^3
    st = parse_study(text, str(path))
    ws = st.variable("wing_loading_N_m2").lower
    e = optimiser.evaluate(st, {"wing_loading_N_m2": [ws], "power_loading_N_kW": [80.0],
                                "aspect_ratio": [8.0], "flap": ["none"]})
    vs = math.sqrt(2 * ws / (1.225 * e["cl_max_landing"].iloc[0]))
    expected = 1 - vs / (40 * 1852 / 3600)
    assert float(none["best_stall_margin_in_bounds"]) == pytest.approx(expected, rel=1e-3)
    assert expected < 0
    assert "cannot meet the stall limit anywhere within the wing-loading bounds" in none["note"]
    assert f"{expected:+.1%}" in none["note"]
    assert (tmp_path / "run" / "flaps" / "flaps.png").is_file()
    out = capsys.readouterr().out
    assert optimiser.CAUTION in out
    assert main(["flaps", str(tmp_path / "run")]) == 2      # flaps/ exists: needs --force
    assert main(["flaps", str(tmp_path / "nothing.toml")]) == 2


# ----------------------------------------------------------------------------- report file

def test_report_is_one_self_contained_file(run, run_dir, capsys):
    assert main(["report", str(run_dir), "--force"]) == 0
    page = (run_dir / "report.html").read_text("utf-8")
    assert page.count(optimiser.CAUTION) >= 2
    for bad in ("<link", "src=\"http", "src='http", "@import", "fetch("):
        assert bad not in page
    start = page.index('<script id="page-data" type="application/json">') + 47
    data = json.loads(page[start:page.index("</script>", start)])
    assert len(data["designs"]) == len(run.front)
    for sec in ("requirements", "fronts", "explore", "choice", "flaps"):
        assert f"id='{sec}'" in page
    assert main(["report", str(run_dir)]) == 2     # exists: needs --force
