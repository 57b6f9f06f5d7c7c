"""Tests of optimiser.physics.atmosphere (ISA to 20 km with a constant temperature offset).

Published checks first (U.S. Standard Atmosphere 1976 table values, cross-check against the
independent ``ambiance`` implementation), then regression pins computed by us from the
formulas, then behaviour (range errors, scalar/array, monotonicity).
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from optimiser.physics import atmosphere as atm

# --- published checks: U.S. Standard Atmosphere 1976 ---------------------------------------
# Values of U.S. Standard Atmosphere 1976 (NOAA-S/T 76-1562), Table I, as listed in
# /work/shared/METHODS.md sec. 1 (the printed table is from memory there; the same numbers
# were reproduced by an independent implementation and by ambiance 1.3.1).
# The table prints 5 to 6 significant figures: relative tolerance 1e-5.
USSA76_GEOPOTENTIAL = [
    # H [m], T [K], p [Pa], rho [kg/m^3], a [m/s]
    (0.0, 288.15, 101325.0, 1.22500, 340.294),        # USSA 1976, Table I (from memory)
    (5000.0, 255.65, 54019.9, 0.736116, 320.529),     # USSA 1976, Table I (from memory)
    (11000.0, 216.65, 22632.0, 0.363918, 295.069),    # USSA 1976, Table I (from memory)
    (20000.0, 216.65, 5474.88, 0.0880348, 295.069),   # USSA 1976, Table I (from memory)
]
USSA76_GEOMETRIC = [
    # z [m], T [K], p [Pa], rho [kg/m^3], a [m/s]
    (5000.0, 255.676, 54048.3, 0.736429, 320.545),    # USSA 1976, Table I geometric (from memory)
    (11000.0, 216.774, 22699.9, 0.364801, 295.154),   # USSA 1976, Table I geometric (from memory)
    (20000.0, 216.65, 5529.29, 0.0889096, 295.069),   # USSA 1976, Table I geometric (from memory)
]
REL_TABLE = 1e-5  # the table prints 5-6 significant figures


def _state(h):
    t = atm.isa_temperature(h)
    return t, atm.isa_pressure(h), atm.isa_density(h), atm.speed_of_sound(t)


@pytest.mark.parametrize("h, t, p, rho, a", USSA76_GEOPOTENTIAL)
def test_ussa76_table_geopotential(h, t, p, rho, a):
    t_m, p_m, rho_m, a_m = _state(h)
    assert t_m == pytest.approx(t, rel=REL_TABLE)
    assert p_m == pytest.approx(p, rel=REL_TABLE)
    assert rho_m == pytest.approx(rho, rel=REL_TABLE)
    assert a_m == pytest.approx(a, rel=REL_TABLE)


@pytest.mark.parametrize("z, t, p, rho, a", USSA76_GEOMETRIC)
def test_ussa76_table_geometric(z, t, p, rho, a):
    h = atm.geometric_to_geopotential(z)
    t_m, p_m, rho_m, a_m = _state(h)
    assert t_m == pytest.approx(t, rel=REL_TABLE)
    assert p_m == pytest.approx(p, rel=REL_TABLE)
    assert rho_m == pytest.approx(rho, rel=REL_TABLE)
    assert a_m == pytest.approx(a, rel=REL_TABLE)


def test_geometric_to_geopotential_formula():
    # H = r0 z / (r0 + z), r0 = 6 356 766 m: USSA 1976, eq. for geopotential altitude
    # (from memory). 20 km geometric -> 19 937.27 m geopotential (computed by us, 7 digits).
    assert atm.EARTH_RADIUS == 6356766.0  # USSA 1976 effective earth radius (from memory)
    assert atm.geometric_to_geopotential(20000.0) == pytest.approx(19937.27, abs=0.005)
    assert atm.geometric_to_geopotential(0.0) == 0.0


def test_sea_level_constants():
    # USSA 1976: T0 288.15 K, p0 101325 Pa, rho0 1.2250 kg/m^3, R 287.05287 J/(kg K),
    # g0 9.80665 m/s^2 (from memory; rho0 printed to 5 digits)
    from optimiser.physics import G0
    assert atm.T0 == 288.15
    assert atm.P0 == 101325.0
    assert atm.R_AIR == 287.05287
    assert G0 == 9.80665
    assert atm.RHO0 == pytest.approx(1.2250, abs=5e-5)


def test_against_ambiance_dense_grid():
    """Independent implementation: ambiance (ICAO Doc 7488/3 tables), 0-20 km geopotential.

    ambiance.Atmosphere takes geometric altitude, so the geopotential grid is converted with
    ambiance's own geop2geom_height. ambiance uses the ICAO layer base pressures printed to 6
    significant figures (22632.0, 5474.87 Pa): relative tolerance 1e-5.
    """
    ambiance = pytest.importorskip("ambiance")
    h = np.linspace(0.0, 20000.0, 2001)
    z = ambiance.Atmosphere.geop2geom_height(h)
    ref = ambiance.Atmosphere(z)
    t, p, rho, a = _state(h)
    np.testing.assert_allclose(t, ref.temperature, rtol=1e-5)
    np.testing.assert_allclose(p, ref.pressure, rtol=1e-5)
    np.testing.assert_allclose(rho, ref.density, rtol=1e-5)
    np.testing.assert_allclose(a, ref.speed_of_sound, rtol=1e-5)
    # and our geometric -> geopotential conversion against ambiance's
    zz = np.linspace(0.0, 20000.0, 201)
    np.testing.assert_allclose(atm.geometric_to_geopotential(zz),
                               ambiance.Atmosphere.geom2geop_height(zz), rtol=1e-9, atol=1e-6)


# --- regression pins (computed by us from the formulas; METHODS sec. 1 [D]) ---------------
# Constant-offset hot day: p = p_ISA(Hp), T = T_ISA(Hp) + dT, rho = p / (R T)
# (METHODS sec. 1, constant-offset convention, common practice). Numbers computed by us with
# an independent few-line implementation; they agree with METHODS sec. 1 to every printed digit.

def test_regression_pin_hot_day_sea_level():
    # regression pin: Hp = 0, ISA+20 -> rho = 1.14549 (METHODS sec. 1 [D]; ours 1.1454933)
    assert atm.isa_density(0.0, 20.0) == pytest.approx(1.14549, abs=5e-6)
    # regression pin: sigma = 0.935097 (ours 0.9350966)
    assert atm.density_ratio(0.0, 20.0) == pytest.approx(0.935097, abs=5e-7)
    # the offset does not change pressure (pressure altitude)
    assert atm.isa_pressure(0.0) == 101325.0


def test_regression_pin_hot_day_1500m():
    # regression pin: Hp = 1500 m, ISA+15 -> p 84556.0 Pa, T 293.40 K, rho 1.00397
    # (METHODS sec. 1 [D]; ours 84555.994, 293.40, 1.0039738)
    assert atm.isa_pressure(1500.0) == pytest.approx(84556.0, abs=0.05)
    assert atm.isa_temperature(1500.0, 15.0) == pytest.approx(293.40, abs=0.005)
    assert atm.isa_density(1500.0, 15.0) == pytest.approx(1.00397, abs=5e-6)


def test_regression_pin_tropopause_pressure():
    # regression pin: p(11 km) = 101325 (216.65/288.15)^(g0/(0.0065 R)) = 22632.040 Pa (ours)
    assert atm.isa_pressure(11000.0) == pytest.approx(22632.040, abs=5e-4)


# --- behaviour ------------------------------------------------------------------------------

@pytest.mark.parametrize("func", [atm.isa_temperature, atm.isa_pressure, atm.isa_density,
                                  atm.density_ratio])
@pytest.mark.parametrize("h", [20000.5, -5000.5, 25000.0, -6000.0, np.nan,
                               [0.0, 1000.0, 20001.0]])
@pytest.mark.filterwarnings("ignore:All-NaN slice encountered")
def test_range_error(func, h):
    with pytest.raises(ValueError, match="outside the model"):
        func(h)


@pytest.mark.parametrize("h", [-5000.0, 20000.0])
def test_range_ends_accepted(h):
    assert np.isfinite(atm.isa_density(h))


def test_scalar_and_array_agree():
    hs = np.array([-5000.0, 0.0, 3000.0, 11000.0, 15000.0, 20000.0])
    dts = np.array([-10.0, 0.0, 15.0, 20.0, 5.0, -5.0])
    arr_t = atm.isa_temperature(hs, dts)
    arr_p = atm.isa_pressure(hs)
    arr_r = atm.isa_density(hs, dts)
    assert arr_t.shape == arr_p.shape == arr_r.shape == hs.shape
    for i, (h, dt) in enumerate(zip(hs, dts)):
        assert float(atm.isa_temperature(float(h), float(dt))) == arr_t[i]
        assert float(atm.isa_pressure(float(h))) == arr_p[i]
        assert float(atm.isa_density(float(h), float(dt))) == arr_r[i]
        assert np.ndim(atm.isa_density(float(h), float(dt))) == 0


def test_continuity_at_tropopause():
    eps = 1e-6
    for f in (atm.isa_temperature, atm.isa_pressure, atm.isa_density):
        assert f(11000.0 - eps) == pytest.approx(f(11000.0 + eps), rel=1e-9)


@settings(deadline=None, max_examples=200)
@given(h=st.floats(-5000.0, 19999.0), dh=st.floats(1.0, 5000.0),
       dt=st.floats(-30.0, 40.0))
def test_density_falls_with_altitude(h, dh, dt):
    h2 = min(h + dh, 20000.0)
    assert atm.isa_density(h2, dt) < atm.isa_density(h, dt)
    assert atm.isa_pressure(h2) < atm.isa_pressure(h)


@settings(deadline=None, max_examples=100)
@given(h=st.floats(-5000.0, 20000.0), dt=st.floats(0.5, 40.0))
def test_hotter_air_is_thinner(h, dt):
    assert atm.isa_density(h, dt) < atm.isa_density(h, 0.0)


def test_sutherland_viscosity_against_the_table():
    # U.S. Standard Atmosphere 1976, Table I (5 figures printed): mu at 0 m and 11 km
    np.testing.assert_allclose(atm.dynamic_viscosity([288.15, 216.65]), [1.7894e-5, 1.4216e-5],
                               rtol=5e-5)
