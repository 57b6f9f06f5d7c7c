"""Geometry: trapezoidal wing, cylinder-with-cones fuselage, tails, nacelles, fuel volume.

Sources: the exact geometry of the shapes (numerical integration here, independent of the
closed forms under test); Torenbeek, "Synthesis of Subsonic Airplane Design", 1982 (wetted
area and fuel-volume forms, from memory) checked against that exact geometry."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from optimiser.physics import geometry as geo

ETA = np.linspace(0.0, 1.0, 200001)  # spanwise stations for the exact integrals


def _integral(f, x):
    return float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(x)))


def test_wing_planform_against_its_exact_geometry():
    s, a, lam, sweep = 16.0, 8.0, 0.5, np.radians(10.0)
    w = geo.wing_geometry(s, a, lam, sweep, 0.15, 1.2)
    b = np.sqrt(a * s)
    y = ETA * b / 2
    c_r = float(w.root_chord_m)
    c = c_r * (1 - (1 - lam) * ETA)
    assert_allclose(2 * _integral(c, y), s, rtol=1e-9)            # the area is S
    assert_allclose(w.span_m, b, rtol=1e-12)
    assert_allclose(w.tip_chord_m, lam * c_r, rtol=1e-12)
    mac = 2 / s * _integral(c**2, y)                               # (2/S) int c^2 dy
    assert_allclose(w.mean_aerodynamic_chord_m, mac, rtol=1e-8)
    y_mac = 2 / s * _integral(c * y, y)                             # area centroid of a half
    assert_allclose(w.mac_spanwise_position_m, y_mac, rtol=1e-8)
    outside = y >= 0.6
    assert_allclose(w.exposed_area_m2, 2 * _integral(c[outside], y[outside]), rtol=1e-4)
    assert_allclose(w.exposed_root_chord_m, c_r * (1 - (1 - lam) * 1.2 / b), rtol=1e-12)
    # leading edge: x_LE(y) = x_c/4(y) - c(y)/4 with the quarter-chord line at tan(sweep) y
    x_le_tip = np.tan(sweep) * b / 2 + c_r / 4 - lam * c_r / 4
    assert_allclose(np.tan(w.sweep_leading_edge_rad), x_le_tip / (b / 2), rtol=1e-12)


def test_exposed_area_never_negative_and_whole_without_fuselage():
    w = geo.wing_geometry(np.array([10.0, 10.0]), 8.0, 0.6, 0.0, 0.12, np.array([0.0, 50.0]))
    assert_allclose(w.exposed_area_m2, [10.0, 0.0], atol=1e-12)


def test_wing_panel_wetted_area():
    # thin limit: both faces of the planform; a 12 % panel of taper 0.5, tau 1: factor
    # 1 + 0.25 x 0.12 = 1.03 (the form of Torenbeek 1982 App. F, evaluated)
    assert_allclose(geo.wing_wetted_area_torenbeek1982(10.0, 1e-9, 0.5), 20.0, rtol=1e-9)
    assert_allclose(geo.wing_wetted_area_torenbeek1982(10.0, 0.12, 0.5), 20.6, rtol=1e-12)


def test_cylinder_with_cones_against_the_surface_of_revolution():
    length, d, ln, lt = 9.0, 1.4, 2.0, 3.5
    x = np.linspace(0.0, length, 400001)
    r = np.minimum.reduce([d / 2 * x / ln, np.full_like(x, d / 2), d / 2 * (length - x) / lt])
    exact = _integral(2 * np.pi * r * np.sqrt(1 + np.gradient(r, x) ** 2), x)
    assert_allclose(geo.body_wetted_area_cones(length, d, ln, lt), exact, rtol=1e-4)
    f = geo.fuselage_geometry(length, d, ln / d, lt / d)
    assert_allclose([f.nose_length_m, f.tailcone_length_m, f.cylinder_length_m],
                    [ln, lt, length - ln - lt], rtol=1e-12)
    assert_allclose(f.fineness_ratio, length / d)
    # a cone pair longer than the body is scaled to fit (no negative cylinder)
    short = geo.fuselage_geometry(3.0, 1.0, 2.0, 2.0)
    assert_allclose(short.nose_length_m + short.tailcone_length_m, 3.0)


def test_tail_areas_return_their_volume_coefficients():
    s, c, b, arm = 18.0, 1.5, 12.0, 4.0
    sh, sv = geo.tail_areas(s, c, b, 0.7, 0.05, arm)
    assert_allclose([sh * arm / (s * c), sv * arm / (s * b)], [0.7, 0.05], rtol=1e-12)
    t = geo.tail_geometry(sh, geo.HORIZONTAL_TAIL_ASPECT_RATIO, 0.1)
    assert_allclose(t.span_m**2 / t.area_m2, geo.HORIZONTAL_TAIL_ASPECT_RATIO, rtol=1e-12)
    assert_allclose(t.exposed_area_m2, sh, rtol=1e-12)


def test_nacelle_scales_with_the_square_root_of_the_rating():
    for family, (ref, d_ref, fineness) in geo.NACELLE_SIZING.items():
        d, length = geo.nacelle_size(family, np.array([ref, 4 * ref]))
        assert_allclose(d, [d_ref, 2 * d_ref], rtol=1e-12)
        assert_allclose(length, fineness * d, rtol=1e-12)
    with pytest.raises(ValueError, match="choose one of"):
        geo.nacelle_size("rocket", 1.0)
    # open cylinder plus a cone of one diameter (exact shape)
    d, length = 1.0, 3.0
    assert_allclose(geo.nacelle_wetted_area(d, length),
                    np.pi * d * 2.0 + np.pi * 0.5 * np.sqrt(0.25 + 1.0), rtol=1e-12)


def _box_volume_by_quadrature(s, b, tc_root, lam, tau, k):
    c_r = 2 * s / (b * (1 + lam))
    c = c_r * ((1 - ETA) + lam * ETA)
    t = tc_root * c_r * ((1 - ETA) + tau * lam * ETA)   # absolute thickness linear in span
    return 2 * _integral(k * c * t, ETA * b / 2)


@pytest.mark.parametrize("lam, tau", [(1.0, 1.0), (0.5, 1.0), (0.3, 0.8), (0.2, 0.6),
                                      (1.0, 0.6)])
def test_fuel_volume_against_the_exact_integral(lam, tau):
    s, b, tc = 20.0, 12.0, 0.15
    exact = _box_volume_by_quadrature(s, b, tc, lam, tau, geo.WING_BOX_AREA_RATIO)
    assert_allclose(geo.wing_box_volume_exact(s, b, tc, lam, tau), exact, rtol=1e-9)
    estimate = geo.wing_fuel_volume_torenbeek1982(s, b, tc, lam, tau)
    # the frustum form is exact for a constant t/c and within 1.1 % otherwise (tau >= 0.6)
    assert_allclose(estimate, exact, rtol=1e-9 if tau == 1.0 else 0.011)
