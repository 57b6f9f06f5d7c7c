"""Tests of optimiser.physics.highlift: catalogue data, airplane increments, maintenance index.

The section increments are published (Franchini et al. via Arnedo, Table 3.1). The
airplane-level default increments of METHODS sec. 2.6 are computed ([D], printed to 2 digits),
the maintenance index is common practice (METHODS sec. 7).
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from optimiser.physics import highlift as hl

FLAPPED_SPAN = 0.6  # S_flapped / S assumed by METHODS sec. 2.6 for its default increments
SLAT_SPAN = 0.8     # slat span fraction assumed by METHODS sec. 2.6


def _config(name, flapped=FLAPPED_SPAN, slat=SLAT_SPAN, sweep=0.0, actuator=3.0):
    return hl.high_lift_config(name, hl.FLAP_CATALOGUE, hl.SLAT_ENTRY, flapped, slat, sweep,
                               actuator)


# --- published checks -----------------------------------------------------------------------

@pytest.mark.parametrize("name, dcl, multiplies_chord", [
    ("plain", 0.9, False),            # Franchini et al., in Arnedo, Fund. Aerosp. Eng., Table 3.1
    ("split", 0.9, False),            # Franchini et al., in Arnedo, Fund. Aerosp. Eng., Table 3.1
    ("single_slotted", 1.3, False),   # Franchini et al., in Arnedo, Fund. Aerosp. Eng., Table 3.1
    ("fowler", 1.3, True),            # 1.3 c'/c: Franchini et al., in Arnedo, Table 3.1
    ("double_slotted", 1.6, True),    # 1.6 c'/c: Franchini et al., in Arnedo, Table 3.1
])
def test_section_increments_table_3_1(name, dcl, multiplies_chord):
    entry = hl.FLAP_CATALOGUE[name]
    assert entry["section_cl_increment"] == pytest.approx(dcl, abs=0.05)  # 1 decimal printed
    if not multiplies_chord:
        # the table gives these without a c'/c factor: no chord extension may be applied
        assert entry["chord_extension"] == 1.0
    else:
        # extending devices: c'/c > 1 (values 1.25 / 1.30 are common practice)
        assert entry["chord_extension"] > 1.0


def test_slat_increment_table_3_1():
    # slat 0.4 c'/c: Franchini et al., in Arnedo, Fund. Aerosp. Eng., Table 3.1
    assert hl.SLAT_ENTRY["section_cl_increment"] == pytest.approx(0.4, abs=0.05)
    assert hl.SLAT_ENTRY["chord_extension"] > 1.0


def test_none_has_no_increment():
    assert hl.FLAP_CATALOGUE["none"]["section_cl_increment"] == 0.0
    out = _config("none")
    assert out["cl_increment_landing"] == 0.0
    assert out["cl_increment_takeoff"] == 0.0
    assert out["flap_area_ratio"] == 0.0


# --- [D] values printed to 2 digits (METHODS sec. 2.6) ------------------------------------
# METHODS sec. 2.6 default airplane increments, computed there from Table 3.1 with
# S_flapped/S = 0.6, c'/c 1.25-1.3 and slat span 0.8 ([D], "tune per project"), printed to two
# decimals: tolerance half a unit of the last digit, 0.005 (+1e-9 for round-off).
TOL_2DIGITS = 0.005 + 1e-9


@pytest.mark.parametrize("name, landing", [
    ("plain", 0.49),           # METHODS sec. 2.6 [D]; ours 0.9*0.9*0.6 = 0.486
    ("split", 0.49),           # METHODS sec. 2.6 [D]; ours 0.486
    ("single_slotted", 0.70),  # METHODS sec. 2.6 [D]; ours 0.9*1.3*0.6 = 0.702
    ("fowler", 0.88),          # METHODS sec. 2.6 [D]; ours 0.9*1.3*1.25*0.6 = 0.8775
    ("double_slotted", 1.12),  # METHODS sec. 2.6 [D]; ours 0.9*1.6*1.3*0.6 = 1.1232
])
def test_methods_default_landing_increments(name, landing):
    assert _config(name)["cl_increment_landing"] == pytest.approx(landing, abs=TOL_2DIGITS)


@pytest.mark.parametrize("name, takeoff", [
    ("plain", 0.30),           # METHODS sec. 2.6 [D]; ours 0.62*0.486 = 0.301
    ("split", 0.30),           # METHODS sec. 2.6 [D]; ours 0.301
    ("double_slotted", 0.70),  # METHODS sec. 2.6 [D]; ours 0.62*1.1232 = 0.696
])
def test_methods_default_takeoff_increments(name, takeoff):
    assert _config(name)["cl_increment_takeoff"] == pytest.approx(takeoff, abs=TOL_2DIGITS)


@pytest.mark.parametrize("name", ["plain", "split", "single_slotted", "fowler",
                                  "double_slotted"])
def test_takeoff_share_is_60_to_70_percent(name):
    # common practice (METHODS sec. 2.6): takeoff setting 60-70 % of the landing increment.
    # METHODS prints 0.45 (single-slotted) and 0.55 (Fowler) for takeoff, i.e. 64 % and 63 %;
    # the code uses one share, 0.62, and gives 0.435 and 0.544 -- inside the band but not the
    # 2-digit METHODS numbers (reported, not changed).
    out = _config(name)
    share = out["cl_increment_takeoff"] / out["cl_increment_landing"]
    assert 0.60 <= share <= 0.70


def test_regression_pin_takeoff_single_slotted_and_fowler():
    # regression pins (computed by us: 0.62 x landing increment): 0.43524 and 0.54405
    assert _config("single_slotted")["cl_increment_takeoff"] == pytest.approx(0.43524, abs=5e-6)
    assert _config("fowler")["cl_increment_takeoff"] == pytest.approx(0.54405, abs=5e-6)


def test_methods_default_slat_increment():
    # METHODS sec. 2.6 [D]: + slats 0.32 landing / 0.32 takeoff; ours 0.9*0.4*1.1*0.8 = 0.3168
    base_l = _config("fowler")["cl_increment_landing"]
    base_t = _config("fowler")["cl_increment_takeoff"]
    with_slats = _config("fowler+slats")
    assert with_slats["cl_increment_landing"] - base_l == pytest.approx(0.32, abs=TOL_2DIGITS)
    assert with_slats["cl_increment_takeoff"] - base_t == pytest.approx(0.32, abs=TOL_2DIGITS)


def test_airplane_increment_formula_and_sweep():
    # common practice form (module docstring): 0.9 dc_lmax (c'/c) (S_f/S) cos(Lambda_hinge)
    sweep = np.radians(20.0)
    got = hl.clmax_increment_landing(1.3, 1.25, 0.6, sweep)
    assert got == pytest.approx(0.9 * 1.3 * 1.25 * 0.6 * np.cos(sweep), rel=1e-12)
    assert _config("fowler", sweep=sweep)["cl_increment_landing"] == pytest.approx(got, rel=1e-12)


@pytest.mark.parametrize("name, to_factor, l_factor", [
    ("plain", 1.0, 0.9),            # common practice multipliers, METHODS sec. 2.7
    ("split", 1.3, 1.1),            # common practice multipliers, METHODS sec. 2.7
    ("single_slotted", 0.8, 0.9),   # common practice multipliers, METHODS sec. 2.7
    ("fowler", 0.6, 0.8),           # common practice multipliers, METHODS sec. 2.7
    ("double_slotted", 0.8, 1.0),   # common practice multipliers, METHODS sec. 2.7
])
def test_drag_increments(name, to_factor, l_factor):
    # mid values of Roskam, Airplane Design Part I, Table 3.6 (from memory): takeoff flaps
    # 0.010-0.020 -> 0.015, landing flaps 0.055-0.075 -> 0.065
    assert hl.FLAP_CD0_MID_TAKEOFF == pytest.approx(0.015, abs=1e-12)
    assert hl.FLAP_CD0_MID_LANDING == pytest.approx(0.065, abs=1e-12)
    out = _config(name)
    assert out["cd0_increment_takeoff"] == pytest.approx(0.015 * to_factor, abs=1e-12)
    assert out["cd0_increment_landing"] == pytest.approx(0.065 * l_factor, abs=1e-12)


def test_slat_drag_increments():
    # slats add 0.002 / 0.005 absolute (common practice, METHODS sec. 2.7)
    out = _config("plain")
    s = _config("plain+slats")
    assert s["cd0_increment_takeoff"] - out["cd0_increment_takeoff"] == pytest.approx(0.002,
                                                                                   abs=1e-12)
    assert s["cd0_increment_landing"] - out["cd0_increment_landing"] == pytest.approx(0.005,
                                                                                   abs=1e-12)


def test_actuator_mass_both_sides():
    # regression pin (arithmetic by us): 2 sides x actuators per side x unit mass;
    # Fowler 2 per side -> 2 x 2 x 3 = 12 kg, with slats 4 more -> 2 x 6 x 3 = 36 kg
    assert _config("fowler", actuator=3.0)["actuator_mass_kg"] == pytest.approx(12.0)
    assert _config("fowler+slats", actuator=3.0)["actuator_mass_kg"] == pytest.approx(36.0)


# --- maintenance index (common practice, METHODS sec. 7) -----------------------------------

def _mci(name, span):
    c = _config(name)
    return hl.maintenance_index(span, c["flap_items"], c["flap_supports_min"],
                                c["flap_support_spacing_m"], c["flapped_span_fraction"],
                                c["slat_items"], c["slat_supports_min"],
                                c["slat_support_spacing_m"], c["slat_span_fraction"],
                                c["support_weight"])


SMALL_SPAN = 6.0  # m: device span per side below spacing x table minimum, the minimum governs


@pytest.mark.parametrize("name, mci", [
    ("plain", 3.0),           # common practice, METHODS sec. 7 table
    ("split", 3.0),           # common practice, METHODS sec. 7 table
    ("single_slotted", 3.5),  # common practice, METHODS sec. 7 table
    ("fowler", 5.0),          # common practice, METHODS sec. 7 table
    ("double_slotted", 6.5),  # common practice, METHODS sec. 7 table
    ("none+slats", 14.0),     # common practice, METHODS sec. 7 table (slats, 4 segments)
    ("none", 0.0),            # common practice, METHODS sec. 7 table
])
def test_maintenance_index_table_minimum(name, mci):
    assert float(_mci(name, SMALL_SPAN)) == pytest.approx(mci, abs=1e-12)


def test_maintenance_index_adds_devices():
    assert float(_mci("fowler+slats", SMALL_SPAN)) == pytest.approx(5.0 + 14.0, abs=1e-12)


def test_maintenance_index_grows_with_span():
    # plain flap: 0.6 x 10 m per side / 1.5 m spacing = 4 hinges > 2 -> 2 + 0.5 x 4 = 4.0
    # (regression pin of the support rule, computed by us)
    assert float(_mci("plain", 20.0)) == pytest.approx(4.0, abs=1e-12)
    spans = np.array([6.0, 10.0, 14.0, 20.0, 30.0, 40.0])
    mci = _mci("fowler+slats", spans)
    assert np.all(np.diff(mci) >= 0.0)
    assert mci[-1] > mci[0]
    # never below the table value
    assert np.all(mci >= 19.0 - 1e-12)


@settings(deadline=None, max_examples=100)
@given(span=st.floats(2.0, 60.0), dspan=st.floats(0.0, 20.0),
       name=st.sampled_from(["plain", "single_slotted", "fowler", "double_slotted",
                             "plain+slats", "fowler+slats"]))
def test_maintenance_index_monotonic_in_span(span, dspan, name):
    assert _mci(name, span + dspan) >= _mci(name, span)


# --- name parsing ---------------------------------------------------------------------------

@pytest.mark.parametrize("name, expected", [
    ("fowler", ("fowler", False)),
    ("fowler+slats", ("fowler", True)),
    ("none+slats", ("none", True)),
    ("double_slotted", ("double_slotted", False)),
])
def test_parse_high_lift_name(name, expected):
    assert hl.parse_high_lift_name(name, hl.FLAP_CATALOGUE) == expected


@pytest.mark.parametrize("bad", ["flaperon", "fowler+krueger", "Fowler", "", "+slats",
                                 "plain+"])
def test_parse_rejects_unknown_names(bad):
    with pytest.raises(ValueError) as err:
        hl.parse_high_lift_name(bad, hl.FLAP_CATALOGUE)
    msg = str(err.value)
    for key in hl.FLAP_CATALOGUE:
        assert key in msg
    assert "+slats" in msg
    with pytest.raises(ValueError):
        _config(bad)


# --- hinge-line sweep against the exact geometry of a trapezoidal wing ------------------------

def _line_sweep_from_geometry(sweep_c4, aspect_ratio, taper, x):
    """Independent check: build the planform (span 10 m) and measure the line at x/c."""
    b = 10.0
    area = b**2 / aspect_ratio
    c_root = 2.0 * area / (b * (1.0 + taper))
    c_tip = taper * c_root
    # quarter-chord points at root and tip, root leading edge at 0
    x_c4_tip = 0.25 * c_root + 0.5 * b * np.tan(sweep_c4)
    x_le_tip = x_c4_tip - 0.25 * c_tip
    x_root, x_tip = x * c_root, x_le_tip + x * c_tip
    return np.arctan((x_tip - x_root) / (0.5 * b))


@pytest.mark.parametrize("sweep_deg, aspect_ratio, taper, flap_chord", [
    (0.0, 7.0, 0.5, 0.30),
    (25.0, 9.5, 0.25, 0.30),
    (35.0, 8.0, 0.3, 0.25),
    (10.0, 6.0, 1.0, 0.30),  # untapered: every line has the quarter-chord sweep
    (0.0, 12.0, 0.1, 0.35),
])
def test_hinge_line_sweep_matches_trapezoidal_geometry(sweep_deg, aspect_ratio, taper, flap_chord):
    sweep = np.radians(sweep_deg)
    got = hl.hinge_line_sweep(sweep, aspect_ratio, taper, flap_chord)
    assert float(got) == pytest.approx(
        _line_sweep_from_geometry(sweep, aspect_ratio, taper, 1.0 - flap_chord), abs=1e-12)


def test_sweep_at_chord_fraction_quarter_chord_and_leading_edge():
    # x = 0.25 returns the quarter-chord sweep (definition); the leading edge of an unswept
    # wing of A 7, taper 0.5: tan = 4/7 x 0.25 x 0.5/1.5 = 0.047619 (from the relation)
    assert float(hl.sweep_at_chord_fraction(0.3, 7.0, 0.5, 0.25)) == pytest.approx(0.3, abs=1e-15)
    assert np.tan(float(hl.sweep_at_chord_fraction(0.0, 7.0, 0.5, 0.0))) == pytest.approx(
        1.0 / 21.0, rel=1e-12)


def test_hinge_line_sweep_is_vectorised_over_designs():
    ar = np.array([6.0, 8.0, 10.0])
    got = hl.hinge_line_sweep(0.0, ar, 0.5)
    assert got.shape == (3,)
    # unswept tapered wing: the hinge line (x/c 0.7) sweeps forward, less so at high A
    assert np.all(got < 0.0) and np.all(np.diff(got) > 0.0)
