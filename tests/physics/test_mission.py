"""Tests of optimiser.physics.mission: segment fractions, Breguet range and endurance.

Published check: the segment fractions of Roskam, Airplane Design Part I, Table 2.1. The
Breguet numbers of METHODS sec. 6 are computed from the equations ([D]): regression pins
here, recomputed by us.
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from optimiser.physics import G0
from optimiser.physics import mission as ms

# --- published check: Roskam Part I Table 2.1 ------------------------------------------------
ROSKAM_TABLE_2_1 = {
    # start/warm-up, taxi, takeoff, climb, descent, landing/taxi
    "single_engine_prop": (0.995, 0.997, 0.998, 0.992, 0.993, 0.993),  # Roskam Pt I Tbl 2.1
    "twin_engine_prop": (0.992, 0.996, 0.996, 0.990, 0.992, 0.992),    # Roskam Pt I Tbl 2.1
    "regional_turboprop": (0.990, 0.995, 0.995, 0.985, 0.985, 0.995),  # Roskam Pt I Tbl 2.1
    "business_jet": (0.990, 0.995, 0.995, 0.980, 0.990, 0.992),        # Roskam Pt I Tbl 2.1
    "homebuilt": (0.998, 0.998, 0.998, 0.995, 0.995, 0.995),           # Roskam Pt I Tbl 2.1
    "transport_jet": (0.990, 0.990, 0.995, 0.980, 0.990, 0.992),       # Roskam Pt I Tbl 2.1
}
# (METHODS sec. 6: takeoff/climb/descent/landing checked in a public reproduction [V],
#  start-up and taxi from memory.) Printed to 3 decimals.


@pytest.mark.parametrize("cls", sorted(ms.SEGMENT_FRACTIONS))
def test_segment_fractions_roskam_table_2_1(cls):
    assert cls in ROSKAM_TABLE_2_1
    got = ms.SEGMENT_FRACTIONS[cls]
    assert len(got) == 6
    np.testing.assert_allclose(got, ROSKAM_TABLE_2_1[cls], atol=5e-4)


def test_segment_fraction_classes_present():
    for cls in ("single_engine_prop", "twin_engine_prop", "regional_turboprop", "business_jet"):
        assert cls in ms.SEGMENT_FRACTIONS


# --- Breguet range (regression pins, METHODS sec. 6 [D]) ------------------------------------

BSFC = 0.27 / 3.6e6   # 0.27 kg/kWh in kg/J = 7.5e-8
CT = 16e-6            # 16 mg/(N s) in kg/(N s)


def test_bsfc_unit():
    assert BSFC == pytest.approx(7.5e-8, rel=1e-12)


def test_regression_pin_breguet_propeller():
    # regression pin: eta 0.8, 7.5e-8 kg/J, L/D 11, W_f/W_i 0.9 -> 1260.60 km
    # (METHODS sec. 6 [D]; ours 1260.6038 km). Breguet range equation, Anderson, APD 1999, ch. 5 (from memory)
    r = ms.breguet_range_propeller(0.8, BSFC, 11.0, 1.0 / 0.9)
    assert r / 1e3 == pytest.approx(1260.60, abs=0.005)


def test_regression_pin_breguet_jet():
    # regression pin: V 230, c_T 16 mg/(N s), L/D 16, W_i/W_f 1.25 -> 5233.49 km
    # (METHODS sec. 6 [D]; ours 5233.4912 km)
    r = ms.breguet_range_jet(230.0, CT, 16.0, 1.25)
    assert r / 1e3 == pytest.approx(5233.49, abs=0.005)


def test_cruise_weight_ratio_inverts_breguet():
    # propeller and jet, mixed in one batch
    r_prop = ms.breguet_range_propeller(0.8, BSFC, 11.0, 1.0 / 0.9)
    r_jet = ms.breguet_range_jet(230.0, CT, 16.0, 1.25)
    ratio = ms.cruise_weight_ratio(np.array([r_prop, r_jet]), np.array([80.0, 230.0]),
                                   np.array([11.0, 16.0]), 0.8, BSFC, CT,
                                   np.array([False, True]))
    np.testing.assert_allclose(ratio, [1.0 / 0.9, 1.25], rtol=1e-12)


@settings(deadline=None, max_examples=100)
@given(dist=st.floats(1e4, 1e7), ld=st.floats(5.0, 25.0), eta=st.floats(0.5, 0.9),
       v=st.floats(30.0, 280.0), jet=st.booleans())
def test_breguet_round_trip(dist, ld, eta, v, jet):
    ratio = ms.cruise_weight_ratio(dist, v, ld, eta, BSFC, CT, jet)
    assert ratio > 1.0
    if jet:
        back = ms.breguet_range_jet(v, CT, ld, ratio)
    else:
        back = ms.breguet_range_propeller(eta, BSFC, ld, ratio)
    assert back == pytest.approx(dist, rel=1e-9)


def test_longer_range_more_fuel():
    d = np.array([200e3, 500e3, 1000e3, 2000e3])
    r = ms.cruise_weight_ratio(d, 70.0, 11.0, 0.8, BSFC, CT, False)
    assert np.all(np.diff(r) > 0.0)


# --- Breguet endurance (regression pins, METHODS sec. 6 [D]) ------------------------------

def test_regression_pin_endurance_jet():
    # regression pin: jet E = (L/D) / (g c_T) ln(W_i/W_f); L/D 16, c_T 16 mg/(N s),
    # ratio 1.05 -> 1.3820 h (METHODS sec. 6 [D]; ours 1.382003 h). Speed cancels for jets.
    hours = 16.0 / (G0 * CT) * np.log(1.05) / 3600.0
    assert hours == pytest.approx(1.3820, abs=5e-5)
    for v in (150.0, 230.0):
        ratio = ms.endurance_weight_ratio(1.3820 * 3600.0, v, 16.0, 0.8, BSFC, CT, True)
        # 1.3820 h printed to 5 digits: ln(ratio) within 5e-5 / 1.382 relative
        assert np.log(ratio) == pytest.approx(np.log(1.05), rel=5e-5 / 1.382)


def test_regression_pin_endurance_propeller():
    # regression pin: prop E = eta / (g c_P V) (L/D) ln(W_i/W_f); V 60, L/D 12, eta 0.8,
    # 7.5e-8 kg/J, W_f/W_i 0.97 -> 1.8406 h (METHODS sec. 6 [D]; ours 1.840578 h)
    hours = 0.8 / (G0 * BSFC * 60.0) * 12.0 * np.log(1.0 / 0.97) / 3600.0
    assert hours == pytest.approx(1.8406, abs=5e-5)
    ratio = ms.endurance_weight_ratio(1.8406 * 3600.0, 60.0, 12.0, 0.8, BSFC, CT, False)
    assert np.log(ratio) == pytest.approx(np.log(1.0 / 0.97), rel=5e-5 / 1.8406)


def test_endurance_ratio_vectorised():
    t = np.array([1800.0, 2700.0])
    r = ms.endurance_weight_ratio(t, np.array([60.0, 230.0]), np.array([12.0, 16.0]), 0.8,
                                  BSFC, CT, np.array([False, True]))
    assert r.shape == (2,)
    assert np.all(r > 1.0)
