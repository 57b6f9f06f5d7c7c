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
