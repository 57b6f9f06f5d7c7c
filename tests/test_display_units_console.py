"""``--units us`` on the console of ``check``, ``flaps``, ``compare`` and ``sweep`` and on the
HTML report (optimiser.display_units); SI output is unchanged.

Sources of the exact factors: NIST Special Publication 811 (2008), "Guide for the Use of the
International System of Units", Appendix B, and the international yard and pound agreement of
1959 (1 ft = 0.3048 m, 1 lb = 0.45359237 kg, standard gravity 9.80665 m/s^2, 1 nmi = 1852 m,
1 kn = 1852/3600 m/s, 1 hp = 550 ft lbf/s); from memory."""

from __future__ import annotations

import re

import pytest

from optimiser.cli import main
from optimiser.study import bundled_study_path
from test_display_units import tiny_run  # noqa: F401  (the same small run, a fixture)

FT = 0.3048                       # m, 1959 agreement
LB = 0.45359237                   # kg, 1959 agreement
LBF = 0.45359237 * 9.80665        # N, NIST SP 811 Appendix B
HP_KW = 550 * FT * LBF / 1000     # kW in one hp (550 ft lbf/s)
LBF_FT2 = LBF / FT ** 2           # N/m^2 in one lbf/ft^2
LBF_HP = LBF / HP_KW              # N/kW in one lbf/hp


@pytest.fixture(autouse=True)
def _no_units_env(monkeypatch):
    monkeypatch.delenv("OPTIMISER_UNITS", raising=False)


def _check(capsys, *args):
    assert main([*args]) == 0
    return capsys.readouterr().out


def test_check_shows_us_values_beside_the_study_text(capsys):
    si = _check(capsys, "check")
    us = _check(capsys, "--units", "us", "check")
    # the bundled study gives field_length = "750 m": 750 / 0.3048 = 2460.63 ft (6 digits)
    assert '[departure] field_length = "750 m"\n' in si
    assert f'[departure] field_length = "750 m" -> {750 / FT:.6g} ft\n' in us
    assert "2460.63 ft" in us
    # a value given in US units is not repeated: "61 kn" is 61 kn again
    assert '[requirements] stall_speed = "61 kn"\n' in us
    assert "as given (the study's units -> US customary):" in us
    assert "defaults applied (US customary):" in us and "defaults applied (SI):" in si
    # the bounds of wing loading: SI N/m^2 / 47.880... = lbf/ft^2
    from optimiser.study import load_study
    v = load_study(bundled_study_path()).variables[0]
    assert v.column == "wing_loading_N_m2"
    shown = re.search(r"wing loading \[lbf/ft²\]: ([0-9.]+) to ([0-9.]+)", us)
    assert float(shown.group(1)) == pytest.approx(v.lower / LBF_FT2, rel=1e-5)
    assert float(shown.group(2)) == pytest.approx(v.upper / LBF_FT2, rel=1e-5)
    # the piston default engine specific mass in lb/hp: kg/kW x 0.7457 kW/hp / 0.4536 kg/lb
    spec = float(re.search(r"engine_specific_mass = ([0-9.]+) lb/hp", us).group(1))
    si_spec = float(re.search(r"engine_specific_mass = ([0-9.]+) kg/kW", si).group(1))
    assert spec == pytest.approx(si_spec * HP_KW / LB, rel=1e-5)
    assert us.splitlines()[-1] == si.splitlines()[-1]   # the caution


def test_check_warning_names_the_us_value(tmp_path, capsys):
    text = bundled_study_path().read_text(encoding="utf-8")
    short = tmp_path / "short.toml"
    short.write_text(text.replace('field_length = "750 m"', 'field_length = "100 m"', 1),
                     encoding="utf-8")
    us = _check(capsys, "--units", "us", "check", str(short))
    # 100 m = 328.084 ft (1 ft = 0.3048 m)
    assert f'warning: [departure] field_length = "100 m" (= {100 / FT:.6g} ft)' in us
    si = _check(capsys, "check", str(short))
    assert 'warning: [departure] field_length = "100 m" (= 100 m)' in si


def test_study_entry_texts_in_us_units():
    from optimiser.study import load_study
    from optimiser.study_table import resolved_entries, shown_text
    study = load_study(bundled_study_path().with_name("light_twin_jet.toml"))
    by_key = {(e.section, e.key): e for e in resolved_entries(study)}
    rng = by_key[("mission", "range")]
    assert shown_text(rng, "si") == rng.value_text
    assert shown_text(rng, "us") == f"{rng.value / 1852:.6g} nmi" == "1300 nmi"
    climb = by_key[("requirements", "climb_rate")]   # 3000 ft/min, 1 ft/min = 0.00508 m/s
    assert shown_text(climb, "us") == "3000 ft/min"
    tsfc = by_key[("propulsion", "tsfc_cruise")]      # 0.72 lb/lbf/h given
    assert shown_text(tsfc, "us") == "0.72 lb/lbf/h"
    assert float(shown_text(tsfc, "us").split()[0]) == pytest.approx(
        tsfc.value * LBF * 3600 / LB, rel=1e-6)


def _row_numbers(text, flap):
    """The numbers of a flap's row of the printed flap comparison."""
    line = next(l for l in text.splitlines() if l.startswith(flap + " "))
    return [float(x.replace(",", "")) for x in line.split()[2:9]]


def test_flaps_console_and_sheet_in_us_units(tiny_run, capsys):
    import pandas as pd
    study, result = tiny_run
    run = str(result.run_dir)
    si = _check(capsys, "flaps", run)
    table = pd.read_csv(result.run_dir / "flaps" / "flaps.csv")
    us = _check(capsys, "--units", "us", "flaps", run, "--force")
    assert "best fuel kg" in si and "best eng kW" in si
    head = us.splitlines()[1]
    assert "best fuel lb" in head and "best eng hp" in head and "+eng @fuel hp" in head
    # flaps.csv is SI either way (same search, same bytes)
    assert pd.read_csv(result.run_dir / "flaps" / "flaps.csv").equals(table)
    r = table.iloc[0]
    fuel, engine, _mi, _share, _hv, extra_fuel, extra_engine = _row_numbers(us, r["flap"])
    # 1 lb = 0.45359237 kg; 1 hp = 0.74569987158227022 kW; the table shows 4 digits (_fmt)
    assert fuel == pytest.approx(r["best_trip_fuel_kg"] / LB, abs=0.05)
    assert engine == pytest.approx(r["best_engine_power_kW"] / HP_KW, abs=0.05)
    assert extra_fuel == pytest.approx(r["extra_trip_fuel_at_equal_engine_kg"] / LB,
                                       rel=1e-3, abs=0.05)
    assert extra_engine == pytest.approx(r["extra_engine_at_equal_trip_fuel_kW"] / HP_KW,
                                         rel=1e-3, abs=0.05)
    md = (result.run_dir / "flaps" / "flaps.md").read_text(encoding="utf-8")
    assert "best trip fuel [lb]" in md and "Numbers in US customary units" in md
    assert us.splitlines()[-1] == si.splitlines()[-1]   # the caution


def test_compare_console_in_us_units_and_files_in_si(tiny_run, tmp_path, capsys):
    import optimiser
    from optimiser.study import load_study
    study, result = tiny_run
    text = bundled_study_path().read_text(encoding="utf-8")
    other = tmp_path / "longer_strip.toml"
    other.write_text(text.replace('field_length = "750 m"', 'field_length = "800 m"', 1),
                     encoding="utf-8")
    second = optimiser.optimise(load_study(other), out=tmp_path / "second", population=12,
                                generations=2, plots=False)
    runs = [str(result.run_dir), str(second.run_dir)]
    si = _check(capsys, "compare", *runs, "--out", str(tmp_path / "cmp_si"))
    us = _check(capsys, "--units", "us", "compare", *runs, "--out", str(tmp_path / "cmp_us"))
    # 750 m = 2460.63 ft and 800 m = 2624.67 ft (1 ft = 0.3048 m, six digits)
    assert "[departure] field_length: 750 m | 800 m" in si
    assert (f"[departure] field_length: {750 / FT:.6g} ft | {800 / FT:.6g} ft" in us
            and "2624.67 ft" in us)
    best = float(re.search(r"best trip fuel ([0-9.]+) lb", us).group(1))
    assert best == pytest.approx(result.front["trip_fuel_kg"].min() / LB, rel=5e-4)   # .4g
    for name in ("compare.csv", "study_changes.csv"):   # the files stay SI
        assert (tmp_path / "cmp_si" / name).read_bytes() == \
            (tmp_path / "cmp_us" / name).read_bytes(), name
    from optimiser.evaluation import CAUTION
    assert CAUTION in us


SWEEP = """name = "strip-price"
base_study = "{base}"
[budget]
population = 12
generations = 2
seed = 3
[[axis]]
key = "departure.field_length"
values = ["600 m", "900 m"]
tighter = "smaller"
also = ["destination.field_length"]
"""


def test_sweep_console_in_us_units_and_summary_file_in_si(tmp_path, capsys):
    import pandas as pd
    campaign = tmp_path / "strip.campaign.toml"
    campaign.write_text(SWEEP.format(base=bundled_study_path().as_posix()), encoding="utf-8")
    out = tmp_path / "sweep"
    us = _check(capsys, "--units", "us", "sweep", str(campaign), "--out", str(out), "--serial",
                "--no-plots")
    summary = pd.read_csv(out / "summary.csv")
    price = pd.read_csv(out / "price.csv")
    assert "trip lb" in us and "engine hp" in us
    first = summary.iloc[0]
    line = next(l for l in us.splitlines() if l.strip().startswith(first["combination"][:43]))
    fuel, engine = (float(x) for x in line.split()[-3:-1])
    # 1 lb = 0.45359237 kg; 1 hp = 0.74569987158227022 kW (printed with one decimal)
    assert fuel == pytest.approx(first["picked_trip_fuel_kg"] / LB, abs=0.05)
    assert engine == pytest.approx(first["picked_engine_power_kW"] / HP_KW, abs=0.05)
    # the price per m of field becomes a price per ft: x kg/m = x / 0.45359237 x 0.3048 lb/ft
    shown = re.search(r"departure\.field_length: ([-+0-9.e]+) lb trip fuel and ([-+0-9.e]+) hp "
                      r"engine per ft tighter", us)
    per_m = price["price_picked_trip_fuel_kg_per_unit"].mean()
    assert float(shown.group(1)) == pytest.approx(per_m / LB * FT, rel=5e-4)   # .4g
    per_m_kw = price["price_picked_engine_power_kW_per_unit"].mean()
    assert float(shown.group(2)) == pytest.approx(per_m_kw / HP_KW * FT, rel=5e-4)
    text = (out / "summary.txt").read_text(encoding="utf-8")   # the file stays SI
    assert "trip kg" in text and "kg trip fuel and" in text and "per m tighter" in text
    assert "lb" not in text


def _page_data(page):
    import json
    raw = re.search(r'<script id="page-data" type="application/json">(.*?)</script>', page,
                    re.S).group(1)
    return json.loads(raw.replace("<\\/", "</"))


def _section(page, sid):
    return re.search(rf"<section id='{sid}'>(.*?)</section>", page, re.S).group(1)


def test_html_report_in_us_units(tiny_run, capsys, monkeypatch):
    import numpy as np
    from optimiser import display_units as du
    from optimiser.report import plots
    from optimiser.runfolder import load_run
    study, result = tiny_run
    run = str(result.run_dir)
    page_path = result.run_dir / "report.html"
    si_out = _check(capsys, "report", run, "--force")
    si = page_path.read_text(encoding="utf-8")
    seen = []
    drawn = plots.objective_scatter

    def recording(*args, **kw):   # the unit system the report's figure is drawn in
        seen.append(du.current_system())
        return drawn(*args, **kw)

    monkeypatch.setattr(plots, "objective_scatter", recording)
    us_out = _check(capsys, "--units", "us", "report", run, "--force")
    us = page_path.read_text(encoding="utf-8")
    assert seen == ["us"]   # one unit system per page: its figures too
    assert "SI units" not in us_out and us_out.splitlines()[-1] == si_out.splitlines()[-1]
    assert "lbf/ft" not in si and "used (SI)" in si
    # the explorer's data: converted in Python, 6 significant digits as the SI page has them
    front = load_run(result.run_dir).front
    data = _page_data(us)
    cols = [c["col"] for c in data["sheet_columns"]]
    k = cols.index("takeoff_mass_kg")
    for d, mass in zip(data["designs"], front["takeoff_mass_kg"]):
        assert d["values"][k] == float(f"{mass / LB:.6g}")   # 1 lb = 0.45359237 kg
        assert d["values"][k] == pytest.approx(mass / LB, rel=1e-5)
    w = cols.index("wing_loading_N_m2")
    assert data["designs"][0]["values"][w] == pytest.approx(
        front["wing_loading_N_m2"].iloc[0] / LBF_FT2, rel=1e-5)
    assert data["sheet_columns"][k]["unit"] == "lb"
    assert data["labels"]["wing_loading_N_m2"] == "wing loading [lbf/ft²]"
    assert data["labels"]["trip_fuel_kg"] == "trip fuel [lb]"
    assert data["labels"][study.loading_column] == "power loading [lbf/hp]"
    # the constraint diagram of the explorer: axis ranges and lines in lbf/ft^2 and lbf/hp
    si_diagrams = _page_data(si)["diagrams"]
    for key, g in data["diagrams"].items():
        s = si_diagrams[key]
        np.testing.assert_allclose(g["x"], np.array(s["x"]) / LBF_FT2, rtol=1e-4)
        np.testing.assert_allclose(g["y"], np.array(s["y"]) / LBF_HP, rtol=1e-4)
        np.testing.assert_allclose(g["lines"][0]["pts"][0],
                                   np.array(s["lines"][0]["pts"][0]) / [LBF_FT2, LBF_HP],
                                   rtol=1e-4)
    assert "takeoff mass ${fmt(val(d, 'takeoff_mass_kg'))} lb `" in us
    assert "__MASS_UNIT__" not in us and "takeoff mass ${fmt(val(d, 'takeoff_mass_kg'))} kg `" in si
    # the tables: the study's own text beside the US value (750 m = 2460.63 ft), the
    # certification's screen height (15.24 m = 50 ft), the flap comparison in lb and hp
    req = _section(us, "requirements")
    assert "<td>field_length</td><td>&quot;750 m&quot;</td><td>2460.63 ft</td>" in req
    assert "used (US customary)" in req and "used (SI)" not in req
    assert "screen height at departure</td><td>50 ft" in _section(us, "certification")
    flaps = _section(us, "flaps")
    assert "best trip fuel [lb]" in flaps and "extra engine size at equal trip fuel [hp]" in flaps
    assert "Numbers in US customary units" in us
    choice = _section(us, "choice")
    chosen = front.iloc[data["chosen"]]
    shown = float(re.search(r"<td>takeoff mass</td><td>([0-9.,]+)</td><td>lb</td>",
                            choice).group(1).replace(",", ""))
    assert shown == pytest.approx(chosen["takeoff_mass_kg"] / LB, abs=0.05)   # _fmt: 1 decimal
    # the SI page has none of it
    assert "US customary" not in si and "<td>2460.63 ft</td>" not in si


def test_every_study_unit_has_a_us_display():
    # a study value in a unit with no US display would stop `--units us check` with a
    # traceback: every unit of the spec's fields and of the certification numbers has one
    from dataclasses import fields
    from optimiser import display_units as du
    from optimiser.study import _SECTIONS, load_study
    from optimiser.study_table import CERTIFICATION_DOCS
    spec = load_study(bundled_study_path()).spec
    units = {f.metadata.get("unit") for s in _SECTIONS for f in fields(type(getattr(spec, s)))}
    units |= {unit for _, unit in CERTIFICATION_DOCS.values()}
    units.discard(None)
    assert {"m", "kg", "m/s", "kg/J", "kg/N/s", "kg/kW", "s"} <= units
    for unit in units:
        du.to_display(1.0, unit, "us")   # raises ValueError for a unit with no display
    # the engine figures against their definitions: 1 lb/(hp h) = 0.45359237 kg / (745.7 W x
    # 3600 s); 1 lb/(lbf h) = 0.45359237 kg / (4.448 N x 3600 s); 1 lb/hp = 0.4536 / 0.7457 kg/kW
    for si_value, unit, us_unit in ((LB / (HP_KW * 1000 * 3600), "kg/J", "lb/hp/h"),
                                    (LB / (LBF * 3600), "kg/N/s", "lb/lbf/h"),
                                    (LB / HP_KW, "kg/kW", "lb/hp")):
        shown, shown_unit = du.to_display(si_value, unit, "us")
        assert shown_unit == us_unit and shown == pytest.approx(1.0, rel=1e-14)
