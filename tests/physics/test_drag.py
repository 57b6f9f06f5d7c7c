"""Component drag build-up laws: flat-plate skin friction, compressibility, form factors.

Published values: the flat-plate numbers of /work/shared/METHODS.md section 2.3 (Prandtl-
Schlichting 0.455/(log10 Re)^2.58 and Blasius 1.328/sqrt(Re), computed there from the
published formulas, [D]); Sutherland's law against U.S. Standard Atmosphere 1976, Table I, is
in test_atmosphere.py. Form factors (Hoerner 1965, Torenbeek 1982; from memory) and the
compressibility factor are checked against their formulas evaluated by hand (labelled [D]:
regression values of the formula as written, not independent truth)."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from optimiser.physics import drag

# METHODS.md 2.3 [D], 5 significant figures printed
FLAT_PLATE = [  # Re, law, C_f
    (1e7, "turbulent", 0.0030037),
    (1e6, "turbulent", 0.0044708),
    (1e5, "laminar", 0.0041996),
]


@pytest.mark.parametrize("re, law, cf", FLAT_PLATE)
def test_flat_plate_friction_at_tabulated_reynolds_numbers(re, law, cf):
    f = (drag.skin_friction_turbulent_prandtl_schlichting if law == "turbulent"
         else drag.skin_friction_laminar_blasius)
    assert_allclose(f(re), cf, rtol=5e-5)


def test_mixed_friction_weights_the_two_laws_by_area():
    re = np.array([3e5, 3e6, 3e7])
    turb = drag.skin_friction_turbulent_prandtl_schlichting(re)
    lam = drag.skin_friction_laminar_blasius(re)
    assert_allclose(drag.skin_friction_mixed(re, 0.0), turb, rtol=1e-15)
    assert_allclose(drag.skin_friction_mixed(re, 1.0), lam, rtol=1e-15)
    assert_allclose(drag.skin_friction_mixed(re, 0.3), 0.3 * lam + 0.7 * turb, rtol=1e-14)
    assert (drag.skin_friction_mixed(re, 0.3) < turb).all()   # laminar flow saves friction
    # a vanishing component stays finite (Reynolds number floored)
    assert np.isfinite(drag.skin_friction_mixed(0.0, 0.5))


def test_compressibility_factor():
    # (1 + 0.144 M^2)^-0.65 [D]: 1 at rest, 0.996274 at M 0.2, 0.956649 at M 0.7
    assert_allclose(drag.skin_friction_compressibility_factor([0.0, 0.2, 0.7]),
                    [1.0, 0.996274, 0.956649], rtol=2e-6)


def test_body_form_factor_hoerner():
    # 1 + 1.5/(l/d)^1.5 + 7/(l/d)^3 [D]: l/d 3 -> 1.547934, 6 -> 1.134469, 10 -> 1.054434
    assert_allclose(drag.form_factor_body_hoerner1965([3.0, 6.0, 10.0]),
                    [1.547934, 1.134469, 1.054434], rtol=1e-6)


def test_wing_form_factor_torenbeek():
    # 1 + 2.7 t/c + 100 (t/c)^4 [D]: 12 % -> 1.344736, 15 % -> 1.455625
    assert_allclose(drag.form_factor_wing_torenbeek1982([0.12, 0.15]), [1.344736, 1.455625],
                    rtol=1e-12)


def test_reynolds_number_and_drag_area():
    # sea level, 50 m/s, 2 m chord: 1.225 x 50 x 2 / 1.7894e-5 = 6.8459e6 (definition)
    assert_allclose(drag.reynolds_number(1.225, 50.0, 2.0, 1.7894e-5), 6.8459e6, rtol=1e-4)
    assert_allclose(drag.drag_area(0.003, 1.3, 1.05, 40.0), 0.003 * 1.3 * 1.05 * 40.0)
