"""Units of the reader's choice (optimiser.display_units, ``--units si|us``).

Sources of the exact factors: NIST Special Publication 811 (2008), "Guide for the Use of the
International System of Units", Appendix B, and the international yard and pound agreement of
1959 (1 ft = 0.3048 m, 1 lb = 0.45359237 kg, standard gravity 9.80665 m/s^2, 1 nmi = 1852 m,
1 hp = 550 ft lbf/s, 1 US gal = 231 in^3); from memory."""

from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest

from optimiser import display_units as du
from optimiser.columns import COLUMNS
from optimiser.study import bundled_study_path

FT = 0.3048                  # m, 1959 agreement
LB = 0.45359237              # kg, 1959 agreement
LBF = 0.45359237 * 9.80665   # N, NIST SP 811 Appendix B
LBF_FT2 = 4.4482216152605 / 0.09290304   # N/m^2 in one lbf/ft^2 = 47.88025898033584


@pytest.mark.parametrize("unit,us_unit,factor", [
    ("m", "ft", FT),
    ("kg", "lb", LB),
    ("N", "lbf", LBF),
    ("kN", "lbf", LBF / 1000),
    ("m/s", "kn", 1852 / 3600),
    ("m/s^2", "ft/s^2", FT),
    ("m^2", "ft^2", FT * FT),
    ("m^3", "US gal", 231 * 0.0254 ** 3),
    ("kg/m^3", "lb/ft^3", LB / FT ** 3),
    ("kW", "hp", 550 * FT * LBF / 1000),
    ("N/m^2", "lbf/ft^2", LBF / FT ** 2),
    ("N/kW", "lbf/hp", LBF / (550 * FT * LBF / 1000)),
])
def test_every_factor_against_its_exact_definition(unit, us_unit, factor):
    shown, shown_unit = du.to_display(1.0, unit, "us")
    assert shown_unit == us_unit
    assert shown == pytest.approx(1.0 / factor, rel=1e-15)


def test_named_constants():
    # NIST SP 811 Appendix B: 1 hp = 745.69987158227022 W; 1 lbf = 4.4482216152605 N
    assert du.HORSEPOWER_W == pytest.approx(745.69987158227022, rel=1e-15)
    assert du.POUND_FORCE_N == pytest.approx(4.4482216152605, rel=1e-15)
    assert du.US_GALLON_M3 == pytest.approx(3.785411784e-3, rel=1e-15)
    assert du.NAUTICAL_MILE_M == 1852.0
    assert du.POUND_FORCE_N / du.FOOT_M ** 2 == pytest.approx(47.88025898033584, rel=1e-15)


def test_climb_rate_in_feet_per_minute_and_range_in_nautical_miles():
    # 1 ft/min = 0.3048 / 60 m/s; 1 nmi = 1852 m (exact definitions)
    rate, unit = du.to_display(5.08, "m/s", "us", column="climb_rate_m_s")
    assert unit == "ft/min" and rate == pytest.approx(1000.0, rel=1e-14)
    dist, unit = du.to_display(1852e3, "m", "us", quantity="range")
    assert unit == "nmi" and dist == pytest.approx(1000.0, rel=1e-15)
    assert du.display_label("climb_rate_m_s", "us") == "climb rate [ft/min]"


def test_absolute_temperature_with_offset_and_differences_unchanged():
    # degF = K x 9/5 - 459.67: the ice point 273.15 K is 32 degF
    t, unit = du.to_display(273.15, "K abs", "us")
    assert unit == "degF" and t == pytest.approx(32.0, abs=1e-12)
    assert du.from_display(212.0, "K abs", "us") == pytest.approx(373.15, abs=1e-12)
    assert du.to_display(15.0, "K", "us") == (15.0, "K")


def test_every_column_unit_has_a_display_and_round_trips():
    values = np.array([0.5, 1234.5678, 9.87e6])
    for c in COLUMNS:
        shown, unit = du.to_display(values, c.unit, "us", c.name)
        back = du.from_display(shown, c.unit, "us", c.name)
        np.testing.assert_allclose(back, values, rtol=1e-14)
        if c.unit not in du.UNCHANGED:
            assert unit != c.unit


def test_si_passes_values_through_untouched():
    values = np.array([1100.0, 2.5])
    shown, unit = du.to_display(values, "N/m^2", "si")
    assert shown is values and unit == "N/m^2"
    assert du.display_label("wing_loading_N_m2", "si") == "wing loading [N/m²]"
    assert du.display_label("wing_loading_N_m2", "us") == "wing loading [lbf/ft²]"
    assert du.display_label("engine_power_kW", "us") == "installed engine power, all engines [hp]"
    assert du.display_label("aspect_ratio", "us") == "aspect ratio [-]"
    assert du.display_label("not_a_column", "us") == "not_a_column"


def test_system_choice_option_beats_environment():
    assert du.system_from(None, {}) == "si"
    assert du.system_from(None, {"OPTIMISER_UNITS": "US"}) == "us"
    assert du.system_from("si", {"OPTIMISER_UNITS": "us"}) == "si"
    with pytest.raises(du.UsageError, match=r"^OPTIMISER_UNITS: got 'metric'; expected si or us$"):
        du.system_from(None, {"OPTIMISER_UNITS": "metric"})
    with du.using("us"):
        assert du.current_system() == "us"
    assert du.current_system() == "si"


def _cli(*args, env_units=None, cwd):
    import os
    env = {k: v for k, v in os.environ.items() if k != "OPTIMISER_UNITS"}
    env["MPLBACKEND"] = "Agg"
    if env_units is not None:
        env["OPTIMISER_UNITS"] = env_units
    return subprocess.run([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                          env=env, capture_output=True, text=True)


@pytest.mark.parametrize("args,env_units,message", [
    (["--units", "metric"], None, "error: --units: got 'metric'; expected si or us\n"),
    ([], "imperial", "error: OPTIMISER_UNITS: got 'imperial'; expected si or us\n"),
])
def test_a_bad_unit_system_is_one_line_exit_2(tmp_path, args, env_units, message):
    done = _cli(*args, "check", bundled_study_path(), env_units=env_units, cwd=tmp_path)
    assert done.returncode == 2 and done.stderr == message


DESIGN = "wing_loading_N_m2=1100 power_loading_N_kW=75 aspect_ratio=8 flap=plain"


def test_evaluate_csv_bytes_identical_with_and_without_us_units(tmp_path):
    si = _cli("evaluate", bundled_study_path(), "--design", DESIGN, "--out", "si.csv",
              cwd=tmp_path)
    us = _cli("--units", "us", "evaluate", bundled_study_path(), "--design", DESIGN, "--out",
              "us.csv", cwd=tmp_path)
    assert si.returncode == 0 and us.returncode == 0, si.stderr + us.stderr
    assert (tmp_path / "si.csv").read_bytes() == (tmp_path / "us.csv").read_bytes()
    assert "wing_loading_N_m2" in si.stdout and "wing loading [lbf/ft²]" not in si.stdout
    assert "wing loading [lbf/ft²]" in us.stdout and "takeoff mass [lb]" in us.stdout
    # 1100 N/m^2 / 47.88025898033584 = 22.974 lbf/ft^2 (NIST SP 811 factors)
    assert f"{1100 / LBF_FT2:.2f}" == "22.97" and " 22.97 " in us.stdout


def test_option_beats_environment_on_the_command_line(tmp_path):
    by_env = _cli("evaluate", bundled_study_path(), "--design", DESIGN, env_units="us",
                  cwd=tmp_path)
    by_option = _cli("--units", "si", "evaluate", bundled_study_path(), "--design", DESIGN,
                     env_units="us", cwd=tmp_path)
    assert by_env.returncode == 0 and by_option.returncode == 0
    assert "wing loading [lbf/ft²]" in by_env.stdout
    assert "wing_loading_N_m2" in by_option.stdout and "lbf" not in by_option.stdout


@pytest.fixture(scope="module")
def tiny_run(tmp_path_factory):
    import optimiser
    from optimiser.study import load_study
    study = load_study(bundled_study_path())
    out = tmp_path_factory.mktemp("units") / "run"
    result = optimiser.optimise(study, out=out, population=24, generations=4, plots=False)
    return study, result


def test_pick_summary_in_us_units(tiny_run, capsys, monkeypatch):
    import re
    from optimiser.cli import main
    from optimiser.runfolder import load_run
    study, result = tiny_run
    monkeypatch.delenv("OPTIMISER_UNITS", raising=False)
    assert main(["--units", "us", "pick", str(result.run_dir), "--force"]) == 0
    text = capsys.readouterr().out
    picked = json_choice(result.run_dir)
    design = load_run(result.run_dir).front.iloc[picked]
    si_value = float(design["wing_loading_N_m2"])
    shown = float(re.search(r"wing loading ([0-9.]+) lbf/ft²", text).group(1))
    # the value behind the text: SI / 47.88025898033584 (lbf/ft^2 in N/m^2) within 1e-9
    value, unit = du.column_display("wing_loading_N_m2", si_value, "us")
    assert unit == "lbf/ft²" and math.isclose(value, si_value / 47.88025898033584, rel_tol=1e-9)
    assert shown == pytest.approx(si_value / 47.88025898033584, abs=0.005)   # printed .2f
    mass = float(re.search(r"takeoff mass ([0-9]+) lb", text).group(1))
    assert mass == pytest.approx(float(design["takeoff_mass_kg"]) / LB, abs=0.5)
    assert "N/m2" not in text and " kg" not in text
    # the pick's CSV files stay SI
    assert "wing_loading_N_m2" in (result.run_dir / "pick-knee" / "design_input.csv").read_text()


def json_choice(run_dir):
    import json
    return json.loads((run_dir / "pick-knee" / "choice.json").read_text())["front_row"]


def test_run_summary_in_us_units(tiny_run):
    from optimiser.runs import summary_text
    study, result = tiny_run
    si_text = summary_text(study, result, units="si")
    us_text = summary_text(study, result, units="us")
    best_fuel = float(result.front["trip_fuel_kg"].min())
    assert f"best trip_fuel_kg: {best_fuel:.6g}" in si_text
    # 1 lb = 0.45359237 kg (1959 agreement)
    assert f"best trip fuel: {best_fuel / LB:.6g} lb" in us_text
    assert us_text.splitlines()[-1] == si_text.splitlines()[-1]   # the caution, unchanged


def test_design_sheet_markdown_in_us_units_and_csv_in_si(tiny_run):
    import re
    from optimiser.report import sheet
    from optimiser.runfolder import load_run
    study, result = tiny_run
    design = load_run(result.run_dir).front.iloc[0]
    si_md = sheet.sheet_markdown(study, design, title="t", units="si")
    us_md = sheet.sheet_markdown(study, design, title="t", units="us")
    assert "lbf/ft²" not in si_md and "| wing loading |" in si_md
    shown = float(re.search(r"\| wing loading \| ([0-9.,]+) \| lbf/ft² \|", us_md).group(1))
    # 1 lbf/ft^2 = 47.88025898033584 N/m^2; the sheet shows one decimal from 10 up (_fmt)
    assert shown == pytest.approx(float(design["wing_loading_N_m2"]) / LBF_FT2, abs=0.05)
    span = float(re.search(r"\| `span_m` \| ([0-9.,]+) \| ft \|", us_md).group(1))
    assert span == pytest.approx(float(design["span_m"]) / FT, abs=0.05)   # 1 ft = 0.3048 m
    assert sheet.design_sheet(study, design)["unit"].tolist().count("lbf/ft²") == 0


def test_constraint_diagram_axes_in_us_units(tiny_run):
    from optimiser.report.figures import pyplot
    from optimiser.report.plots import constraint_grid, design_constraint_diagram
    from optimiser.runfolder import load_run
    study, result = tiny_run
    design = load_run(result.run_dir).front.iloc[0]
    ws, ld, _ = constraint_grid(study, design, 12)
    plt = pyplot()
    fig_us = design_constraint_diagram(study, design, n=12, units="us")
    fig_si = design_constraint_diagram(study, design, n=12, units="si")
    try:
        ax_us, ax_si = fig_us.axes[0], fig_si.axes[0]
        assert ax_us.get_xlabel() == "wing loading [lbf/ft²]"
        assert ax_si.get_xlabel() == "wing loading [N/m²]"
        # power loading N/kW -> lbf/hp: 1 lbf/hp = 4.4482216152605 N / 0.74569987158227022 kW
        assert ax_us.get_ylabel() == "power loading [lbf/hp]"
        lbf_hp = LBF / (550 * FT * LBF / 1000)
        np.testing.assert_allclose(ax_us.get_xlim(), (ws[0] / LBF_FT2, ws[-1] / LBF_FT2),
                                   rtol=1e-12)
        np.testing.assert_allclose(ax_us.get_ylim(), (ld[0] / lbf_hp, ld[-1] / lbf_hp),
                                   rtol=1e-12)
        np.testing.assert_allclose(ax_si.get_xlim(), (ws[0], ws[-1]), rtol=1e-15)
        # the star marks the design at its converted point
        star = [l for l in ax_us.lines if l.get_marker() == "*"][0]
        assert star.get_xdata()[0] == pytest.approx(design["wing_loading_N_m2"] / LBF_FT2,
                                                    rel=1e-12)
    finally:
        plt.close(fig_us)
        plt.close(fig_si)


def test_front_view_and_objective_scatter_in_us_units(tiny_run):
    from optimiser.report.figures import pyplot
    from optimiser.report.plots import _front_limits, front_view, objective_scatter
    study, result = tiny_run
    front = result.front
    plt = pyplot()
    fig = front_view(study, front, units="us")
    scatter = objective_scatter(study, front, np.empty((0, 3)), units="us")
    try:
        ax = fig.axes[0]
        assert ax.get_xlabel() == "installed engine power, all engines [hp]"
        assert ax.get_ylabel() == "trip fuel [lb]"
        # 1 hp = 0.74569987158227022 kW, 1 lb = 0.45359237 kg (NIST SP 811 Appendix B)
        hp_kw = 550 * FT * LBF / 1000
        np.testing.assert_allclose(ax.get_xlim(), _front_limits(front["engine_power_kW"] / hp_kw,
                                                                above=0.05), rtol=1e-12)
        np.testing.assert_allclose(ax.get_ylim(), _front_limits(front["trip_fuel_kg"] / LB,
                                                                above=0.05), rtol=1e-12)
        first = scatter.axes[0]
        assert first.get_xlabel() == "trip fuel [lb]"
        assert first.get_ylabel() == "installed engine power, all engines [hp]"
        assert front["trip_fuel_kg"].min() / LB >= first.get_xlim()[0]
    finally:
        plt.close(fig)
        plt.close(scatter)


def test_run_and_pick_csv_files_identical_with_and_without_us_units(tmp_path, monkeypatch,
                                                                    capsys):
    # machines read the CSV files unchanged: same seed, same bytes in either unit system
    from optimiser.cli import main
    monkeypatch.delenv("OPTIMISER_UNITS", raising=False)
    for system in ("si", "us"):
        out = tmp_path / system
        assert main(["--units", system, "run", str(bundled_study_path()), "--pop", "12",
                     "--gens", "2", "--seed", "7", "--out", str(out)]) == 0
        assert main(["--units", system, "pick", str(out)]) == 0
    text = capsys.readouterr().out
    assert "lbf/ft²" in text and "N/m2" in text   # both summaries were printed
    files = ["front.csv", "evaluations.csv", "pick-knee/design.csv",
             "pick-knee/runners_up.csv", "pick-knee/design_input.csv"]
    for name in files:
        assert (tmp_path / "si" / name).read_bytes() == (tmp_path / "us" / name).read_bytes()
    assert "lbf/ft²" in (tmp_path / "us" / "pick-knee" / "design.md").read_text()
    assert "lbf/ft²" not in (tmp_path / "si" / "pick-knee" / "design.md").read_text()


def test_a_range_in_km_is_shown_in_nautical_miles():
    # 1 nmi = 1852 m exactly (NIST SP 811 (2008), Appendix B, from memory)
    shown, unit = du.to_display(np.array([1852.0]), "km", "us", "range_km")
    assert unit == "nmi" and shown[0] == pytest.approx(1000.0, rel=1e-15)


def test_analyse_and_payload_range_tables_in_us_units(tmp_path, capsys):
    """1 kn = 1852/3600 m/s and 1 nmi = 1852 m exactly (NIST SP 811 (2008), Appendix B,
    from memory): the US console tables of analyse and payload-range against the SI ones."""
    from optimiser.cli import main
    designs = str(bundled_study_path().parent / "high_strip_utility_designs.csv")
    assert main(["analyse", "--designs", designs]) == 0
    si = capsys.readouterr().out.splitlines()
    assert main(["--units", "us", "analyse", "--designs", designs]) == 0
    us = capsys.readouterr().out.splitlines()
    col_si = si[1].split().index("stall_speed_m_s")
    assert "stall speed [kn]" in us[1]
    # first design row: the stall speed is the 5th number after the flap name in both
    v_si = float(si[2].split()[1 + col_si - 1])
    v_us = float(us[2].split()[1 + col_si - 1])
    assert v_us == pytest.approx(v_si / (1852 / 3600), abs=0.1)
    assert main(["payload-range", designs, "--out", str(tmp_path / "a")]) == 0
    si = capsys.readouterr().out.splitlines()
    assert main(["--units", "us", "payload-range", designs, "--out", str(tmp_path / "b")]) == 0
    us = capsys.readouterr().out.splitlines()
    assert "range [nmi]" in us[1] and "payload [lb]" in us[1]
    km, nmi = float(si[3].split()[3]), float(us[3].split()[3])   # design 1, corner B
    assert nmi == pytest.approx(km / 1.852, abs=0.1)
