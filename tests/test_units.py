"""Field-unit constants checked with the pint units library (independent of flood.units).

[SH] Lyons (ed.), 1996, Standard Handbook ..., Ch. 5 (7,758 bbl/acre-ft); [FANCHI] Fanchi,
Principles of Applied Reservoir Simulation, 2nd ed., Eq. 3.24 (0.001127 and 0.433).
"""

import math

import pint
import pytest

from flood import units

U = pint.UnitRegistry()


def test_barrels_per_acre_foot():
    """1 acre-ft (43,560 ft² × 1 ft) in oil barrels = 7758.37; the trade rounds to 7,758 [SH].
    pint's ``acre`` is the US survey acre (43,560.17 ft²): 7,758 holds for it to 1e-4 as well."""
    exact = (43560 * U.foot**3).to(U.oil_barrel).magnitude
    assert exact == pytest.approx(7758.37, abs=0.01)
    assert units.BBL_PER_ACRE_FT == pytest.approx(exact, rel=1e-4)
    survey = (1 * U.acre * U.foot).to(U.oil_barrel).magnitude
    assert units.BBL_PER_ACRE_FT == pytest.approx(survey, rel=1e-4)


def test_ft2_per_acre():
    """43,560 ft² per acre: 66 ft × 660 ft (one chain by one furlong, common practice); pint's
    survey acre agrees to 4e-6."""
    assert units.FT2_PER_ACRE == 66 * 660
    assert units.FT2_PER_ACRE == pytest.approx((1 * U.acre).to(U.foot**2).magnitude, rel=5e-6)


def test_darcy_constant_field_units():
    """q = C k A Δp/(μ L): with k md, A ft², Δp psi, μ cp, L ft and q in rb/d, C = 0.001127 [FANCHI]."""
    q = (1 * U.millidarcy * U.foot**2 * U.psi / (U.centipoise * U.foot)).to(U.oil_barrel / U.day)
    assert units.DARCY_FIELD == pytest.approx(q.magnitude, rel=1e-3)


def test_water_gradient():
    """Fresh-water gradient 62.4 lbm/ft³ × g = 0.433 psi/ft [FANCHI]."""
    grad = (62.4 * U.pound / U.foot**3 * U.standard_gravity).to(U.psi / U.foot)
    assert units.PSI_PER_FT_WATER == pytest.approx(grad.magnitude, rel=1e-3)
    # and from density of water at 60 °F (999.0 kg/m³, common practice) the same to 0.1 %
    grad2 = (999.0 * U.kg / U.m**3 * U.standard_gravity).to(U.psi / U.foot)
    assert math.isclose(units.PSI_PER_FT_WATER, grad2.magnitude, rel_tol=2e-3)
