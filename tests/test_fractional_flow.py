"""Fractional flow, its derivative, gravity term and surface water cut.

[BL1942] Buckley & Leverett, 1942. [FANCHI] Fanchi, Principles of Applied Reservoir Simulation,
2nd ed., Eq. 3.24.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.differentiate import derivative

from flood.fractional_flow import (fractional_flow, fractional_flow_derivative, gravity_number,
                                   reservoir_fw_from_surface_cut, surface_water_cut, surface_water_oil_ratio)
from flood.relative_permeability import Corey

RP = Corey(0.2, 0.25, 0.35, 0.9, 2.5, 2.0)


def test_fw_formula_by_hand():
    """fw = 1/(1 + kro μw/(krw μo)) at one point, computed by hand [BL1942]."""
    krw = 0.35 * 0.5**2.5
    kro = 0.9 * 0.5**2
    assert float(fractional_flow(RP, 0.475, 0.6, 3.0)) == pytest.approx(1 / (1 + kro * 0.6 / (krw * 3.0)))


@pytest.mark.parametrize("g", [0.0, 0.05, -0.05])
def test_derivative_against_scipy_differentiate(g):
    """Analytic dfw/dSw against scipy.differentiate.derivative (adaptive finite differences)."""
    sw = np.linspace(0.25, 0.7, 9)
    ref = derivative(lambda s: fractional_flow(RP, s, 0.6, 3.0, g), sw, initial_step=1e-3).df
    np.testing.assert_allclose(fractional_flow_derivative(RP, sw, 0.6, 3.0, g), ref, rtol=1e-7, atol=1e-9)


def test_gravity_term_field_units():
    """Fanchi Eq. 3.24 with dPc/dx = 0 evaluated by hand: fw = (1 - 0.001127 k kro A 0.433 Δγ sinα
    /(μo qt)) / (1 + kro μw/(krw μo))."""
    k, area, q, dg, dip = 150.0, 5000.0, 300.0, 0.25, 20.0
    g = float(gravity_number(k, area, q, dg, dip))
    krw, kro = (float(v) for v in RP.kr(0.5))
    expected = (1 - 0.001127 * k * kro * area * 0.433 * dg * np.sin(np.radians(dip)) / (3.0 * q)) / (
        1 + kro * 0.6 / (krw * 3.0))
    assert float(fractional_flow(RP, 0.5, 0.6, 3.0, g)) == pytest.approx(expected, rel=1e-12)


def test_gravity_updip_lowers_fw():
    """Water moving updip (dip > 0, water heavier) lowers fw; downdip raises it [FANCHI]."""
    s = np.linspace(0.25, 0.7, 20)
    up = gravity_number(150.0, 5000.0, 300.0, 0.25, 20.0)
    assert np.all(fractional_flow(RP, s, 0.6, 3.0, up) < fractional_flow(RP, s, 0.6, 3.0))
    assert np.all(fractional_flow(RP, s, 0.6, 3.0, -up) > fractional_flow(RP, s, 0.6, 3.0))


@settings(max_examples=100, deadline=None)
@given(fw=st.floats(0.0, 1.0), bo=st.floats(1.0, 2.5), bw=st.floats(0.95, 1.1))
def test_surface_cut_inverse_and_bounds(fw, bo, bw):
    """Surface water cut is in [0, 1], inverts exactly, and WOR = fws/(1 - fws) (common practice)."""
    fws = float(surface_water_cut(fw, bo, bw))
    assert 0.0 <= fws <= 1.0
    assert float(reservoir_fw_from_surface_cut(fws, bo, bw)) == pytest.approx(fw, abs=1e-12)
    if fw < 0.999:
        assert float(surface_water_oil_ratio(fw, bo, bw)) == pytest.approx(fws / (1 - fws), rel=1e-9)


@settings(max_examples=100, deadline=None)
@given(nw=st.floats(1, 8), no=st.floats(1, 8), mu_o=st.floats(0.1, 500), sw=st.floats(0, 1))
def test_fw_bounded(nw, no, mu_o, sw):
    """0 <= fw <= 1 for horizontal flow, any Corey curve and viscosity."""
    fw = float(fractional_flow(Corey(0.1, 0.1, 0.5, 0.9, nw, no), sw, 0.5, mu_o))
    assert 0.0 <= fw <= 1.0
