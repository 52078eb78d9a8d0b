"""Fractional flow of water, its saturation derivative, and the surface water cut.

Horizontal flow, no capillary pressure (the Buckley-Leverett assumptions), with an optional gravity
term for dipping beds in field units.

References
----------
Buckley, S.E. & Leverett, M.C., 1942. Mechanism of fluid displacement in sands. Trans. AIME 146,
107-116. Fanchi, J.R., Principles of Applied Reservoir Simulation, 2nd ed., Eq. 3.24 (field units).
"""

from __future__ import annotations

import numpy as np

from .units import DARCY_FIELD, PSI_PER_FT_WATER


def gravity_number(permeability_md, area_ft2, rate_rb_d, delta_specific_gravity, dip_deg):
    """Gravity term G of the field-unit fractional-flow equation [cp].

    Parameters
    ----------
    permeability_md : array_like
        Absolute permeability k [md].
    area_ft2 : array_like
        Cross-section open to flow A [ft²].
    rate_rb_d : array_like
        Total reservoir flow rate qt [rb/d], > 0.
    delta_specific_gravity : array_like
        Water minus oil specific gravity γw - γo [dimensionless, water = 1].
    dip_deg : array_like
        Dip of the flow direction α [degrees]; positive when water flows updip.

    Returns
    -------
    numpy.ndarray
        G = 0.001127 k A 0.433 (γw - γo) sin α / qt [cp]; fw = (1 - G kro/μo)/(1 + kro μw/(krw μo)).

    Notes
    -----
    Fanchi's Eq. 3.24 with dPc/dx = 0:
    fw = [1 + 0.001127 (k kro A/(μo qt)) (dPc/dx - 0.433 Δγ sin α)] / [1 + (kro/krw)(μw/μo)].
    G > 0 (water moving updip, water heavier) lowers fw and favours displacement.

    References
    ----------
    Fanchi, J.R., Principles of Applied Reservoir Simulation, 2nd ed., Eq. 3.24.

    Examples
    --------
    >>> round(float(gravity_number(100.0, 1000.0, 100.0, 0.2, 30.0)), 6)
    0.048799
    """
    return (DARCY_FIELD * np.asarray(permeability_md, dtype=float) * area_ft2 * PSI_PER_FT_WATER
            * delta_specific_gravity * np.sin(np.radians(dip_deg)) / rate_rb_d)


def fractional_flow_from_kr(krw, kro, mu_w, mu_o, gravity=0.0):
    """Water fractional flow fw from relative permeabilities.

    Parameters
    ----------
    krw, kro : array_like
        Relative permeabilities [fraction].
    mu_w, mu_o : array_like
        Water and oil viscosity [cp].
    gravity : array_like
        Gravity term G [cp] from :func:`gravity_number`; 0 for horizontal flow.

    Returns
    -------
    numpy.ndarray
        fw [fraction of the reservoir flow stream]: (krw/μw)(1 - G kro/μo)/(krw/μw + kro/μo).

    References
    ----------
    Buckley & Leverett, 1942; Fanchi, Eq. 3.24.
    """
    lw = np.asarray(krw, dtype=float) / mu_w
    lo = np.asarray(kro, dtype=float) / mu_o
    lt = lw + lo
    with np.errstate(invalid="ignore", divide="ignore"):
        fw = lw * (1.0 - gravity * lo) / lt
    return np.where(lt > 0.0, fw, 1.0)


def fractional_flow(relperm, sw, mu_w, mu_o, gravity=0.0):
    """Water fractional flow fw(Sw) [fraction] for a relative-permeability model.

    Parameters
    ----------
    relperm : Corey or LabTable
        Relative-permeability model (see :mod:`flood.relative_permeability`).
    sw : array_like
        Water saturation [fraction].
    mu_w, mu_o : array_like
        Viscosities [cp].
    gravity : array_like
        Gravity term G [cp]; 0 for horizontal flow.

    Returns
    -------
    numpy.ndarray
        fw = (1 - G kro/μo) / (1 + kro μw / (krw μo)).

    References
    ----------
    Buckley & Leverett, 1942, Trans. AIME 146; Fanchi, Eq. 3.24.

    Examples
    --------
    >>> from flood.relative_permeability import Corey
    >>> round(float(fractional_flow(Corey(0, 0, 1, 1, 1, 1), 0.5, 1.0, 1.0)), 6)
    0.5
    """
    krw, kro = relperm.kr(sw)
    return fractional_flow_from_kr(krw, kro, mu_w, mu_o, gravity)


def fractional_flow_derivative(relperm, sw, mu_w, mu_o, gravity=0.0):
    """Saturation derivative dfw/dSw [1/fraction] (analytic chain rule on the kr model).

    Parameters
    ----------
    relperm, sw, mu_w, mu_o, gravity
        As for :func:`fractional_flow`.

    Returns
    -------
    numpy.ndarray
        dfw/dSw, with fw = lw (1 - G lo)/(lw + lo), lw = krw/μw, lo = kro/μo:
        dfw/dSw = [lw' (1 - G lo) - lw G lo'] / lt - lw (1 - G lo)(lw' + lo') / lt².

    References
    ----------
    Buckley & Leverett, 1942; Welge, H.J., 1952, Trans. AIME 195, 91-98.
    """
    krw, kro = relperm.kr(sw)
    dkrw, dkro = relperm.dkr(sw)
    lw, lo = krw / mu_w, kro / mu_o
    dlw, dlo = dkrw / mu_w, dkro / mu_o
    lt = lw + lo
    num = lw * (1.0 - gravity * lo)
    dnum = dlw * (1.0 - gravity * lo) - lw * gravity * dlo
    with np.errstate(invalid="ignore", divide="ignore"):
        d = dnum / lt - num * (dlw + dlo) / lt**2
    return np.where(lt > 0.0, d, 0.0)


def surface_water_cut(fw, bo, bw):
    """Surface (stock-tank) water cut from the reservoir fractional flow.

    Parameters
    ----------
    fw : array_like
        Reservoir water fractional flow [fraction].
    bo, bw : array_like
        Oil and water formation volume factors [rb/STB].

    Returns
    -------
    numpy.ndarray
        fws = (fw/Bw) / (fw/Bw + (1 - fw)/Bo) [fraction].

    Notes
    -----
    Common practice: divide each phase's reservoir rate by its formation volume factor.

    Examples
    --------
    >>> round(float(surface_water_cut(0.5, 1.2, 1.0)), 6)
    0.545455
    """
    fw = np.asarray(fw, dtype=float)
    qw = fw / bw
    qo = (1.0 - fw) / bo
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(qw + qo > 0, qw / (qw + qo), 0.0)


def reservoir_fw_from_surface_cut(water_cut, bo, bw):
    """Invert :func:`surface_water_cut`: reservoir fw giving a surface water cut [fraction].

    Notes
    -----
    fw = fws Bw / (fws Bw + (1 - fws) Bo) (common practice, algebraic inverse).
    """
    wc = np.asarray(water_cut, dtype=float)
    return wc * bw / (wc * bw + (1.0 - wc) * bo)


def surface_water_oil_ratio(fw, bo, bw):
    """Surface water-oil ratio WOR = (fw/Bw) / ((1 - fw)/Bo) [STB/STB]; inf when fw = 1."""
    fw = np.asarray(fw, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(fw < 1.0, fw * bo / (np.maximum(1.0 - fw, 0.0) * bw), np.inf)
