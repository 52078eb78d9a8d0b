"""Layered reservoirs: permeability variation, Dykstra-Parsons and layered fractional flow.

The reservoir is a stack of non-communicating layers (no crossflow) between the same injector and
producer, so every layer sees the same pressure drop Δp. Layer i has thickness h_i, permeability
k_i and porosity φ_i; all layers share the pattern area, the relative permeability, the fluids and
the initial saturation (so the same ΔS = 1 - Sor - Swi is displaced in each).

Darcy's law in layer i gives q_i = C k_i h_i Δp / I(Q_i), where Q_i is the layer's own pore volumes
injected and I(Q) = ∫₀¹ dxD / λt(Sw(xD, Q)) [cp] is the integral of the inverse total mobility
λt = krw/μw + kro/μo along the layer's saturation profile. With Q_i = W_i/Vp_i and Vp_i ∝ h_i φ_i,

    dQ_i/dτ = c_i / I(Q_i),   c_i = (k_i/φ_i) / max(k/φ),   dτ ∝ Δp dt,

so with J(Q) = ∫₀^Q I(q) dq every layer follows the same curve J(Q_i) = c_i τ, and the common Δp (the
common "time" τ) is fixed by the field injection, Σ Vp_i Q_i(τ) = W(t). Two layer displacements are
provided:

* Dykstra-Parsons (piston-like): water at krw(1 - Sor) behind a sharp front at xD = x, oil at
  kro(Swc) ahead, I = x/λw + (1 - x)/λo; this gives the closed forms of Dykstra & Parsons (1950).
* Layered fractional flow: each layer runs the Buckley-Leverett/Welge solution of
  :mod:`flood.displacement` in its own PVI, and I(Q) is integrated along that solution's profile.

Permeability variation V = (k50 - k84.1)/k50 is read from a log-probability fit (Lyons 1996, Fig.
5-163); for log-normal k it equals 1 - exp(-σ_ln k).

References
----------
Dykstra, H. & Parsons, R.L., 1950. The prediction of oil recovery by waterflood. In Secondary
Recovery of Oil in the United States, 2nd ed., API, 160-174.
Lyons, W.C. (ed.), 1996. Standard Handbook of Petroleum & Natural Gas Engineering, Vol. 2, Gulf,
Ch. 5 (Fig. 5-163 permeability variation; Table 5-42 layer counts after Craig).
Tiab, D. & Donaldson, E.C., Petrophysics, 2nd ed., Eqs. 3.113-3.115 (V and σ).
Buckley & Leverett, 1942; Welge, 1952 (each layer's displacement).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.special import ndtri

from .displacement import FrontSolution, buckley_leverett
from .errors import FloodInputError
from .forecast import FORECAST_COLUMNS, endpoint_mobility_ratio, original_oil_in_place, pore_volume
from .fractional_flow import reservoir_fw_from_surface_cut, surface_water_cut, surface_water_oil_ratio

#: Layer methods accepted in a scenario's ``layers.method``.
LAYER_METHODS = ("dykstra_parsons", "layered_fractional_flow")

#: Columns of :attr:`LayeredResult.breakthrough_table`, with units.
BREAKTHROUGH_COLUMNS = {
    "layer": "layer that breaks through (1 = first row of the layer input) [-]",
    "permeability_md": "its permeability [md]",
    "layers_broken_through": "layers producing water after this breakthrough [-]",
    "vertical_coverage": "pore-volume fraction of the layers behind the water front [fraction]",
    "fw_reservoir": "producing reservoir fractional flow of water [fraction]",
    "wor_reservoir": "producing water-oil ratio at reservoir conditions [rb/rb]",
    "wor_surface": "producing water-oil ratio at the surface [STB/STB]",
    "water_cut": "surface water cut [fraction]",
    "pvi": "pore volumes injected, whole stack [total PV]",
    "days": "time since injection start [day]",
    "cum_oil_stb": "cumulative oil [STB]",
    "recovery_factor": "cumulative oil / OOIP [fraction]",
}

#: Probability of the one-standard-deviation point of the log-probability plot, Φ(1) (the "84.1 %").
P84 = 0.841344746068543

_POST_BT_SPAN = 1e6       # post-breakthrough J(Q) table reaches Q = 1e6 Q_bt; linear beyond
_POST_BT_POINTS = 4000
_TAU_GRID_POINTS = 128
_NEWTON_STEPS = 2
_EVENT_NUDGE = 1e-12      # evaluate "just after" a breakthrough


# ----------------------------------------------------------------------------------------------
# Permeability variation


def generate_layers(v, count, median_md, thickness_ft):
    """Equal-thickness layers from a log-normal permeability distribution of variation V.

    Parameters
    ----------
    v : float
        Dykstra-Parsons permeability variation V, 0 <= V < 1 [fraction].
    count : int
        Number of layers, >= 1.
    median_md : float
        Median permeability k50 [md], > 0.
    thickness_ft : float
        Total net thickness shared equally among the layers [ft], > 0.

    Returns
    -------
    thickness_ft, permeability_md : numpy.ndarray
        Layer thicknesses [ft] and permeabilities [md], permeability decreasing.

    Raises
    ------
    FloodInputError
        V outside [0, 1), count < 1, non-positive median or thickness.

    Notes
    -----
    σ_ln k = -ln(1 - V), so that V = (k50 - k84.1)/k50 = 1 - exp(-σ) holds exactly. Layer i of n
    (i = 1..n, most permeable first) sits at the middle of its probability band, p_i = (i - 1/2)/n
    of the thickness having greater permeability: k_i = k50 exp(-σ Φ⁻¹(p_i)). No random draws.

    References
    ----------
    Lyons (ed.), 1996, Fig. 5-163; Tiab & Donaldson, Eqs. 3.113-3.115.

    Examples
    --------
    >>> h, k = generate_layers(0.5, 2, 100.0, 20.0)
    >>> h.tolist(), [round(float(x), 3) for x in k]
    ([10.0, 10.0], [159.603, 62.655])
    """
    if not (np.isfinite(v) and 0.0 <= v < 1.0):
        raise FloodInputError("layers.variation.v", v, "0 <= V < 1")
    if isinstance(count, bool) or not isinstance(count, (int, np.integer)) or count < 1:
        raise FloodInputError("layers.variation.count", count, "an integer count >= 1")
    if not (np.isfinite(median_md) and median_md > 0):
        raise FloodInputError("reservoir.permeability_md", median_md, "a median permeability > 0 md")
    if not (np.isfinite(thickness_ft) and thickness_ft > 0):
        raise FloodInputError("reservoir.thickness_ft", thickness_ft, "a thickness > 0 ft")
    sigma = -np.log1p(-float(v))
    p = (np.arange(count) + 0.5) / count
    k = float(median_md) * np.exp(-sigma * ndtri(p))
    return np.full(count, float(thickness_ft) / count), k


@dataclass(frozen=True)
class VariationFit:
    """Log-probability fit of a permeability sample (see :func:`estimate_variation`).

    Attributes
    ----------
    v : float
        Dykstra-Parsons permeability variation (k50 - k84.1)/k50 [fraction].
    k50, k84_1 : float
        Permeability on the fitted line at 50 % and 84.1 % of thickness with greater k [md].
    sigma_ln : float
        Standard deviation of ln k from the fitted slope [-].
    r_squared : float
        Coefficient of determination of the fit (NaN with fewer than two distinct values) [-].
    probability, permeability_md : numpy.ndarray
        The plotted points: fraction of thickness with greater k, and k [md] (k decreasing).
    """

    v: float
    k50: float
    k84_1: float
    sigma_ln: float
    r_squared: float
    probability: np.ndarray
    permeability_md: np.ndarray


def estimate_variation(permeability_md, thickness_ft=None) -> VariationFit:
    """Dykstra-Parsons permeability variation V by the log-probability method.

    Parameters
    ----------
    permeability_md : array_like
        Permeability of each sample or layer [md], > 0.
    thickness_ft : array_like, optional
        Thickness each sample represents [ft], > 0; default equal.

    Returns
    -------
    VariationFit

    Raises
    ------
    FloodInputError
        Empty sample, non-positive or non-finite values.

    Notes
    -----
    Samples are sorted by decreasing k and each is plotted at the middle of its thickness band,
    p_i = (Σ_{j<i} h_j + h_i/2) / Σ h (fraction of the thickness with greater k). The line
    ln k = a + b z, z = Φ⁻¹(p), is fitted by thickness-weighted least squares; then k50 = exp(a),
    k84.1 = exp(a + b) (z = 1 at p = Φ(1) = 84.13 %), V = (k50 - k84.1)/k50 = 1 - exp(b),
    σ_ln = -b. One sample (or identical values) gives V = 0.

    References
    ----------
    Dykstra & Parsons, 1950; Lyons (ed.), 1996, Fig. 5-163; Tiab & Donaldson, Eqs. 3.113-3.115.

    Examples
    --------
    >>> fit = estimate_variation([400.0, 100.0, 25.0])
    >>> round(fit.k50, 3), round(fit.r_squared, 6)
    (100.0, 1.0)
    """
    k = np.atleast_1d(np.asarray(permeability_md, dtype=float))
    h = np.ones_like(k) if thickness_ft is None else np.atleast_1d(np.asarray(thickness_ft, dtype=float))
    _check_positive("permeability_md", k, "a permeability > 0 md")
    _check_positive("thickness_ft", h, "a thickness > 0 ft")
    if h.shape != k.shape:
        raise FloodInputError("thickness_ft", f"{h.size} values", f"one thickness per permeability ({k.size})")
    order = np.argsort(-k, kind="stable")
    k, h = k[order], h[order]
    w = h / h.sum()
    p = np.cumsum(w) - 0.5 * w
    y = np.log(k)
    if k.size < 2 or np.ptp(y) == 0.0:
        k50 = float(np.exp(np.sum(w * y)))
        return VariationFit(0.0, k50, k50, 0.0, float("nan"), p, k)
    z = ndtri(p)
    zm, ym = np.sum(w * z), np.sum(w * y)
    b = np.sum(w * (z - zm) * (y - ym)) / np.sum(w * (z - zm) ** 2)
    a = ym - b * zm
    ss_res = np.sum(w * (y - a - b * z) ** 2)
    ss_tot = np.sum(w * (y - ym) ** 2)
    k50, k84 = float(np.exp(a)), float(np.exp(a + b))
    return VariationFit(v=(k50 - k84) / k50, k50=k50, k84_1=k84, sigma_ln=float(-b),
                        r_squared=float(1.0 - ss_res / ss_tot), probability=p, permeability_md=k)


# ----------------------------------------------------------------------------------------------
# Dykstra-Parsons closed forms


def dykstra_parsons_front_positions(permeability_md, mobility_ratio, j, porosity=None):
    """Front positions of every layer when layer ``j`` breaks through (piston-like, common Δp).

    Parameters
    ----------
    permeability_md : array_like
        Layer permeabilities k_i [md] (any order).
    mobility_ratio : float
        Endpoint mobility ratio M = (krw(1-Sor)/μw)/(kro(Swc)/μo) [-], > 0.
    j : int
        Index (into ``permeability_md``) of the layer that is breaking through.
    porosity : array_like, optional
        Layer porosities [fraction]; the front speed scales with k/φ. Default equal.

    Returns
    -------
    numpy.ndarray
        Dimensionless front position xD of each layer [fraction of the length], capped at 1
        (layers faster than layer j have broken through).

    Notes
    -----
    x_i = [M - sqrt(M² + r (1 - M²))]/(M - 1) with r = (k_i/φ_i)/(k_j/φ_j); x_i = r at M = 1.
    From dx/dt ∝ (k/φ)/(x/M + 1 - x) integrated from x = 0 (Dykstra & Parsons 1950).

    References
    ----------
    Dykstra & Parsons, 1950; Lyons (ed.), 1996, Ch. 5.

    Examples
    --------
    >>> dykstra_parsons_front_positions([100.0, 50.0, 25.0], 1.0, 0).tolist()
    [1.0, 0.5, 0.25]
    """
    r = np.minimum(_speed_ratio(permeability_md, porosity, j), 1.0)
    m = float(mobility_ratio)
    if abs(m - 1.0) < 1e-12:
        x = r
    else:
        x = (m - np.sqrt(m * m + r * (1.0 - m * m))) / (m - 1.0)
    return np.minimum(x, 1.0)


def dykstra_parsons_water_oil_ratio(permeability_md, mobility_ratio, j, thickness_ft=None, porosity=None):
    """Producing reservoir water-oil ratio just after layer ``j`` breaks through (piston-like).

    Parameters
    ----------
    permeability_md : array_like
        Layer permeabilities [md].
    mobility_ratio : float
        Endpoint mobility ratio M [-].
    j : int
        Index of the layer breaking through.
    thickness_ft, porosity : array_like, optional
        Layer thicknesses [ft] and porosities [fraction]; default equal.

    Returns
    -------
    float
        WOR at reservoir conditions [rb/rb]; inf when every layer produces water.

    Notes
    -----
    WOR = Σ_{broken} k_i h_i / Σ_{others} k_i h_i / sqrt(M² + r_i (1 - M²)), r_i as in
    :func:`dykstra_parsons_front_positions` (Dykstra & Parsons 1950; equal h reduces to their form).

    References
    ----------
    Dykstra & Parsons, 1950; Lyons (ed.), 1996, Ch. 5.
    """
    k = np.asarray(permeability_md, dtype=float)
    h = np.ones_like(k) if thickness_ft is None else np.asarray(thickness_ft, dtype=float)
    r = _speed_ratio(k, porosity, j)
    m = float(mobility_ratio)
    broken = r >= 1.0
    water = np.sum(k * h * broken)
    oil = np.sum(np.where(broken, 0.0, k * h / np.sqrt(m * m + np.minimum(r, 1.0) * (1.0 - m * m))))
    return float(water / oil) if oil > 0 else float("inf")


def _speed_ratio(permeability_md, porosity, j):
    k = np.asarray(permeability_md, dtype=float)
    c = k if porosity is None else k / np.asarray(porosity, dtype=float)
    return c / c[j]


# ----------------------------------------------------------------------------------------------
# A layer set (the input) and its validation


@dataclass(frozen=True)
class LayerSet:
    """The layers of a scenario and the method used to forecast them.

    Attributes
    ----------
    method : str
        ``"dykstra_parsons"`` or ``"layered_fractional_flow"``.
    thickness_ft, permeability_md, porosity : numpy.ndarray
        Per layer, in input order [ft], [md], [fraction].
    source : str
        ``"table"``, ``"file"`` or ``"variation"``.
    """

    method: str
    thickness_ft: np.ndarray
    permeability_md: np.ndarray
    porosity: np.ndarray
    source: str = "table"

    @property
    def count(self) -> int:
        """Number of layers."""
        return int(self.permeability_md.size)


def layer_set(method, thickness_ft, permeability_md, porosity, field_name="layers.table", source="table"):
    """Validate layer columns and return a :class:`LayerSet`.

    Parameters
    ----------
    method : str
        One of :data:`LAYER_METHODS`.
    thickness_ft, permeability_md : array_like
        Per layer [ft], [md], > 0.
    porosity : array_like or float
        Per layer or for all [fraction], 0 < φ <= 1.
    field_name : str
        Used in error messages, e.g. ``layers.file``.

    Raises
    ------
    FloodInputError
        Empty table, unequal column lengths, non-positive or non-finite values.
    """
    if method not in LAYER_METHODS:
        raise FloodInputError("layers.method", method, " or ".join(repr(m) for m in LAYER_METHODS))
    k = np.atleast_1d(np.asarray(permeability_md, dtype=float))
    h = np.atleast_1d(np.asarray(thickness_ft, dtype=float))
    if k.size == 0:
        raise FloodInputError(field_name, "(no rows)", "at least one layer (thickness_ft, permeability_md)")
    phi = np.broadcast_to(np.asarray(porosity, dtype=float), k.shape).copy()
    if h.shape != k.shape:
        raise FloodInputError(field_name, f"{h.size} thicknesses", f"one per layer ({k.size})")
    _check_positive(f"{field_name}[{{i}}].thickness_ft", h, "a thickness > 0 ft")
    _check_positive(f"{field_name}[{{i}}].permeability_md", k, "a permeability > 0 md")
    _check_positive(f"{field_name}[{{i}}].porosity", phi, "0 < porosity <= 1", upper=1.0)
    return LayerSet(method, h, k, phi, source)


def _check_positive(name, arr, expected, upper=np.inf):
    bad = ~(np.isfinite(arr) & (arr > 0) & (arr <= upper))
    if bad.any():
        i = int(np.argmax(bad))
        raise FloodInputError(name.format(i=i) if "{i}" in name else name, float(arr[i]), expected)


# ----------------------------------------------------------------------------------------------
# One layer's displacement in its own PVI: resistance I(Q), J(Q) = ∫ I dQ, outlet


@dataclass(frozen=True)
class LayerDisplacement:
    """One layer's displacement versus its own pore volumes injected Q [total PV of the layer].

    Build with :func:`piston_displacement` (Dykstra-Parsons) or :func:`fractional_flow_displacement`.
    All methods are vectorised over arrays of any shape.

    Attributes
    ----------
    breakthrough_pvi : float
        Q at which the front reaches the outlet [PV].
    front_saturation : float
        Saturation behind the front [fraction].
    swi, sw_injected, fw_initial : float
        Initial and injected-state (1 - Sor) saturation, initial fw [fraction].
    j_breakthrough : float
        J(Q_bt) [cp PV].

    Notes
    -----
    Before breakthrough everything is closed-form (J is quadratic in Q). After it, Q, I(Q), the
    outlet saturation, fw and the Welge average are tabulated at 4000 values of J spaced evenly in
    ln J up to 10⁶ J_bt (relative interpolation error ~1e-7), so one O(1) index serves them all;
    beyond the table J grows linearly with slope I at its end.
    """

    breakthrough_pvi: float
    front_saturation: float
    swi: float
    sw_injected: float
    fw_initial: float
    g_initial: float        # 1/λt(Swi) [cp]
    k_front: float          # K(v_f) [cp]
    speeds: np.ndarray      # wave speed table (increasing) for K(v) = ∫ dv/λt(S(v))
    k_table: np.ndarray     # K at ``speeds`` [cp]
    g_injected: float       # 1/λt(1 - Sor) [cp]
    j_breakthrough: float = 0.0
    log_step: float = 1.0
    nodes: tuple = field(default=(), repr=False)  # J nodes, and columns (Q, I, Sw2, fw2, Swbar) there
    solution: FrontSolution | None = field(default=None, repr=False)

    def _k(self, v):
        return np.where(v <= self.speeds[0], v * self.g_injected, np.interp(v, self.speeds, self.k_table))

    def _quadratic(self):
        v_f = 1.0 / self.breakthrough_pvi
        return 0.5 * (self.k_front - v_f * self.g_initial), self.g_initial

    def resistance(self, q):
        """I(Q) = ∫₀¹ dxD / λt(Sw(xD, Q)) [cp], from the wave table (exact for piston-like).

        Notes
        -----
        With xD = Q v along the wave (v = dfw/dSw) and K(v) = ∫₀^v dv'/λt(S(v')):
        I = Q K(v_f) + (1 - Q v_f)/λt(Swi) before breakthrough (v_f = 1/Q_bt), I = Q K(1/Q) after.
        """
        q = np.asarray(q, dtype=float)
        before = q < self.breakthrough_pvi
        with np.errstate(divide="ignore"):
            v = np.where(before, 0.0, 1.0 / np.maximum(q, 1e-300))
        v_f = 1.0 / self.breakthrough_pvi
        return np.where(before, q * self.k_front + (1.0 - q * v_f) * self.g_initial, q * self._k(v))

    def cumulative_resistance(self, q):
        """J(Q) = ∫₀^Q I(q) dq [cp PV] (closed form before breakthrough, tabulated after)."""
        q = np.asarray(q, dtype=float)
        a, b = self._quadratic()
        jn, qn, i_n = self.nodes[0], self.nodes[1][0], self.nodes[1][1]
        after = np.where(q > qn[-1], jn[-1] + (q - qn[-1]) * i_n[-1], np.interp(q, qn, jn))
        return np.where(q < self.breakthrough_pvi, q * (a * q + b), after)

    def at_j(self, j, columns=5, exact=False):
        """Layer state where J(Q) = ``j``: Q, I, outlet Sw, outlet fw, average Sw (tuple of arrays).

        ``columns`` = 2 returns only (Q, I) (used inside Newton iterations). ``exact`` takes the
        outlet values from the Buckley-Leverett solution itself instead of the table.
        """
        j = np.asarray(j, dtype=float)
        a, b = self._quadratic()
        jn, table = self.nodes
        u = np.log(np.maximum(j, self.j_breakthrough) * (1.0 / self.j_breakthrough)) * (1.0 / self.log_step)
        i = np.minimum(u.astype(np.intp), jn.size - 2)
        w = np.minimum(u - i, 1.0)
        cols = []
        for c in range(columns):
            lo = np.take(table[c], i)
            cols.append(lo + w * (np.take(table[c], i + 1) - lo))
        beyond = j > jn[-1]
        if beyond.any():
            cols[0] = np.where(beyond, table[0, -1] + (j - jn[-1]) / table[1, -1], cols[0])
        before = j < self.j_breakthrough
        if before.any():
            jb = np.where(before, j, 0.0)
            q_pre = 2.0 * jb / (b + np.sqrt(np.maximum(b * b + 4.0 * a * jb, 0.0)))
            cols[0] = q = np.where(before, q_pre, cols[0])
            pre = (q * self.k_front + (1.0 - q / self.breakthrough_pvi) * self.g_initial,
                   self.swi, self.fw_initial, self.swi + q * (1.0 - self.fw_initial))
            for c in range(1, columns):
                cols[c] = np.where(before, pre[c - 1], cols[c])
        if exact and columns == 5 and self.solution is not None:
            cols[2:] = self.solution.outlet(cols[0])
        return tuple(cols)

    def pvi_at(self, j):
        """Inverse of :meth:`cumulative_resistance`: Q at which J(Q) = ``j`` [PV]."""
        return self.at_j(j)[0]

    def outlet(self, q):
        """Outlet saturation, outlet reservoir fw and average saturation of the layer at Q.

        Returns
        -------
        sw_outlet, fw_outlet, sw_average : numpy.ndarray
            [fraction] each (Welge relations; piston-like: 0/1 fw and Swi + Q).
        """
        q = np.asarray(q, dtype=float)
        if self.solution is not None:
            return self.solution.outlet(q)
        after = q >= self.breakthrough_pvi
        return (np.where(after, self.sw_injected, self.swi), after.astype(float),
                self.swi + np.minimum(q, self.sw_injected - self.swi))


def _build_displacement(q_bt, swf, swi, s_inj, fwi, g_i, g_inj, speeds, k_table, solution=None):
    v_f = 1.0 / q_bt
    k_front = float(np.where(v_f <= speeds[0], v_f * g_inj, np.interp(v_f, speeds, k_table)))
    base = LayerDisplacement(q_bt, swf, swi, s_inj, fwi, g_i, k_front, speeds, k_table, g_inj,
                             solution=solution)
    a, b = base._quadratic()
    j_bt = q_bt * (a * q_bt + b)  # J(Q_bt) = Q_bt² K_f/2 + Q_bt/(2 λt(Swi))
    q = q_bt * np.geomspace(1.0, _POST_BT_SPAN, _POST_BT_POINTS)
    i_q = base.resistance(q)
    j = j_bt + np.concatenate(([0.0], np.cumsum(0.5 * (i_q[1:] + i_q[:-1]) * np.diff(q))))
    j_nodes = j_bt * np.geomspace(1.0, j[-1] / j_bt, _POST_BT_POINTS)
    j_nodes[-1] = j[-1]
    q_nodes = np.interp(j_nodes, j, q)
    q_nodes[0] = q_bt
    s2, fw2, sbar = base.outlet(q_nodes)
    nodes = (j_nodes, np.vstack((q_nodes, base.resistance(q_nodes), s2, fw2, sbar)))
    return LayerDisplacement(q_bt, swf, swi, s_inj, fwi, g_i, k_front, speeds, k_table, g_inj,
                             j_bt, float(np.log(j[-1] / j_bt) / (_POST_BT_POINTS - 1)), nodes, solution)


def piston_displacement(relperm, mu_w, mu_o, swi):
    """Piston-like layer displacement (Dykstra-Parsons): water at 1 - Sor behind, oil at Swi ahead.

    Parameters
    ----------
    relperm : Corey or LabTable
        Only its end points are used: krw(1 - Sor) and kro(Swc).
    mu_w, mu_o : float
        Viscosities [cp].
    swi : float
        Initial water saturation [fraction] (immobile: Swi = Swc).

    Returns
    -------
    LayerDisplacement

    Notes
    -----
    With x = Q/ΔS, ΔS = 1 - Sor - Swi: I = x μw/krw(1-Sor) + (1 - x) μo/kro(Swc) before
    breakthrough and μw/krw(1-Sor) after (Dykstra & Parsons 1950).

    References
    ----------
    Dykstra & Parsons, 1950.
    """
    s_inj = 1.0 - float(relperm.sor)
    dS = s_inj - float(swi)
    g_w = float(mu_w / relperm.krw_end)
    g_o = float(mu_o / relperm.kro_end)
    v_f = 1.0 / dS
    return _build_displacement(dS, s_inj, float(swi), s_inj, 0.0, g_o, g_w, np.array([v_f]),
                               np.array([v_f * g_w]))


def fractional_flow_displacement(solution: FrontSolution):
    """Layer displacement from a Buckley-Leverett/Welge solution (layered fractional flow).

    Parameters
    ----------
    solution : FrontSolution
        From :func:`flood.displacement.buckley_leverett` (horizontal, no gravity).

    Returns
    -------
    LayerDisplacement

    Notes
    -----
    K(v) = ∫₀^v dv'/λt(S(v')) by the trapezoid rule on the solution's wave table (S = 1 - Sor
    below its slowest speed); J(Q) after breakthrough by the trapezoid rule on 4000 geometric Q
    points up to 10⁶ Q_bt, extended linearly beyond (where I(Q) is within ~1e-6 of μ/kr at 1 - Sor).

    References
    ----------
    Buckley & Leverett, 1942; Welge, 1952; Dykstra & Parsons, 1950 (common-Δp layers).
    """
    sol = solution
    rp, mu_w, mu_o = sol.relperm, sol.mu_w, sol.mu_o

    def inv_total_mobility(s):
        krw, kro = rp.kr(s)
        return 1.0 / (krw / mu_w + kro / mu_o)

    speeds = np.asarray(sol.wave_speed, dtype=float)
    g = inv_total_mobility(np.asarray(sol.wave_saturation, dtype=float))
    g_inj = float(inv_total_mobility(sol.sw_injected))
    k_table = speeds[0] * g_inj + np.concatenate(([0.0], np.cumsum(0.5 * (g[1:] + g[:-1]) * np.diff(speeds))))
    return _build_displacement(sol.breakthrough_pvi, sol.front_saturation, sol.swi, sol.sw_injected,
                               sol.fw_initial, float(inv_total_mobility(sol.swi)), g_inj, speeds, k_table,
                               solution=sol)


# ----------------------------------------------------------------------------------------------
# The stack of layers under a common pressure drop


@dataclass(frozen=True)
class LayerStack:
    """Non-communicating layers sharing one pressure drop (see the module docstring).

    Attributes
    ----------
    displacement : LayerDisplacement
        The displacement every layer follows in its own PVI.
    speed : numpy.ndarray
        c_i = (k_i/φ_i) / max(k/φ) [-].
    pore_fraction : numpy.ndarray
        Vp_i / Σ Vp [-].
    conductance : numpy.ndarray
        k_i h_i / Σ k h [-] (share of the flow at equal resistance).
    """

    displacement: LayerDisplacement
    speed: np.ndarray
    pore_fraction: np.ndarray
    conductance: np.ndarray

    @property
    def breakthrough_tau(self) -> np.ndarray:
        """Common time τ at which each layer breaks through, J(Q_bt)/c_i."""
        return self.displacement.j_breakthrough / self.speed

    def _at(self, tau, columns=5, exact=False):
        tau = np.asarray(tau, dtype=float)
        return self.displacement.at_j(tau[..., None] * self.speed, columns, exact)

    def layer_pvi(self, tau):
        """Each layer's own PVI at common time(s) ``tau``: shape ``tau.shape + (n_layers,)``."""
        return self._at(tau, 1)[0]

    def field_pvi(self, tau):
        """Pore volumes injected into the whole stack at ``tau`` [total PV]."""
        return self.layer_pvi(tau) @ self.pore_fraction

    def time_grid(self, tau_top, points=_TAU_GRID_POINTS):
        """Common times 0, then ``points`` geometric values up to ``tau_top``, plus each breakthrough.

        The breakthrough times are nudged just after the jump, so the state there counts the layer
        as producing water.
        """
        return np.unique(np.concatenate((
            [0.0], np.geomspace(1e-4 * self.displacement.j_breakthrough, tau_top, points),
            self.breakthrough_tau[self.breakthrough_tau < tau_top] * (1.0 + _EVENT_NUDGE))))

    def tau_at_pvi(self, pvi, tau_grid, pvi_grid=None):
        """Invert :meth:`field_pvi` (vectorised): interpolated start on a grid, then Newton steps.

        Parameters
        ----------
        pvi : array_like
            Field pore volumes injected [total PV], within the grid's range.
        tau_grid : numpy.ndarray
            Increasing common times starting at 0 (e.g. :meth:`time_grid`).
        pvi_grid : numpy.ndarray, optional
            :meth:`field_pvi` at ``tau_grid`` if already known.

        Notes
        -----
        d(PVI)/dτ = Σ (Vp_i/Vp) c_i / I(Q_i). PVI(τ) is continuous, increasing and once
        differentiable, so Newton's method from the interpolated start converges quadratically;
        each step is kept inside its grid bracket.
        """
        pvi = np.asarray(pvi, dtype=float)
        p_g = self.field_pvi(tau_grid) if pvi_grid is None else pvi_grid
        idx = np.clip(np.searchsorted(p_g, pvi), 1, tau_grid.size - 1)
        lo, hi = tau_grid[idx - 1], tau_grid[idx]
        tau = np.interp(pvi, p_g, tau_grid)
        for _ in range(_NEWTON_STEPS):
            q, res = self._at(tau, 2)
            f = q @ self.pore_fraction - pvi
            d = (self.speed / res) @ self.pore_fraction
            tau = np.clip(tau - f / d, lo, hi)
        return np.where(pvi <= 0, 0.0, tau)

    def state(self, tau, exact=False):
        """Field state at common time(s) ``tau``: dict of arrays (layer arrays have a last axis).

        Keys ``q`` (layer PVI), ``front`` (layer front xD), ``share`` (fraction of the injection
        entering each layer), ``fw_layer``, ``sw_outlet_layer``, ``sbar_layer``, and field values
        ``pvi``, ``fw`` (reservoir fw of the produced stream), ``sw_outlet`` (flow-weighted outlet
        saturation), ``sbar`` (pore-volume-weighted average saturation), ``coverage``.
        """
        q, res, s_out, fw, sbar = self._at(tau, 5, exact)
        flow = self.conductance / res
        share = flow / flow.sum(axis=-1, keepdims=True)
        water, oil = np.sum(share * fw, axis=-1), np.sum(share * (1.0 - fw), axis=-1)
        front = np.minimum(q / self.displacement.breakthrough_pvi, 1.0)
        return {"q": q, "front": front, "share": share, "fw_layer": fw, "sw_outlet_layer": s_out,
                "sbar_layer": sbar, "pvi": q @ self.pore_fraction, "fw": water / (water + oil),
                "sw_outlet": np.sum(share * s_out, axis=-1), "sbar": sbar @ self.pore_fraction,
                "coverage": front @ self.pore_fraction, "pore_fraction": self.pore_fraction}

    def first_tau_reaching(self, fw_target, tau_grid, fw_grid=None, m=16):
        """Earliest τ at which the field reservoir fw reaches ``fw_target`` (nested grid search).

        Returns ``inf`` if it is not reached on ``tau_grid``. The field fw jumps up at each
        breakthrough and varies smoothly between them. The first grid cell where the tabulated fw
        reaches the target, widened by one cell each side, is refined three times on ``m``
        sub-intervals with the tabulated outlets, then (around that, widened again) three times
        with the exact layer outlets; a breakthrough jump inside the last bracket is taken exactly.
        """
        fw = self.state(tau_grid)["fw"] if fw_grid is None else fw_grid
        hit = np.nonzero(fw >= fw_target)[0]
        if hit.size == 0:
            return float("inf")
        k = int(hit[0])
        bracket = (float(tau_grid[max(k - 2, 0)]), float(tau_grid[min(k + 1, tau_grid.size - 1)]))
        coarse = self._refine(fw_target, *bracket, m, 3, exact=False)
        if coarse is not None:
            width = coarse[1] - coarse[0]
            lo, hi = max(coarse[0] - 8 * width, bracket[0]), min(coarse[1] + 8 * width, bracket[1])
            fine = self._refine(fw_target, lo, hi, m, 3, exact=True)
            if fine is None or fine[0] == lo > bracket[0]:
                fine = self._refine(fw_target, *bracket, m, 6, exact=True)
        else:
            fine = self._refine(fw_target, *bracket, m, 6, exact=True)
        if fine is None:
            return float(tau_grid[k])
        jumps = self.breakthrough_tau * (1.0 + _EVENT_NUDGE)
        at_jump = jumps[(jumps > fine[0]) & (jumps <= fine[1])]
        return float(at_jump.min()) if at_jump.size else fine[1]   # reached at a breakthrough jump

    def _refine(self, fw_target, lo, hi, m, levels, exact):
        """Shrink [lo, hi] to the first sub-interval whose right end reaches the target (None if none)."""
        for _ in range(levels):
            t = np.linspace(lo, hi, m + 1)
            reached = self.state(t, exact=exact)["fw"] >= fw_target
            if not reached.any():
                return None
            i = int(np.argmax(reached))
            if i == 0:
                return t[0], t[0]
            lo, hi = float(t[i - 1]), float(t[i])
        return lo, hi


def layer_stack(layers: LayerSet, displacement: LayerDisplacement, area_acres: float = 1.0) -> LayerStack:
    """Assemble a :class:`LayerStack` from a :class:`LayerSet` and a layer displacement."""
    c = layers.permeability_md / layers.porosity
    vp = pore_volume(area_acres, layers.thickness_ft, layers.porosity)
    kh = layers.permeability_md * layers.thickness_ft
    return LayerStack(displacement, c / c.max(), vp / vp.sum(), kh / kh.sum())


# ----------------------------------------------------------------------------------------------
# Result and the layered study


@dataclass(frozen=True)
class LayeredResult:
    """Layered forecast of one case (see :func:`layered_study`).

    Attributes
    ----------
    method : str
        ``"dykstra_parsons"`` or ``"layered_fractional_flow"``.
    layers : LayerSet
        The layers, in input order.
    mobility_ratio : float
        Endpoint mobility ratio M [-].
    variation : VariationFit
        Log-probability fit of the layers' permeabilities (V, k50, k84.1, R²).
    summary : dict
        Same keys as :func:`flood.forecast.summarize` plus ``dykstra_parsons_v`` and a few layer keys.
    forecast : pandas.DataFrame
        Columns :data:`flood.forecast.FORECAST_COLUMNS`.
    breakthrough_table : pandas.DataFrame
        One row per layer breakthrough, columns :data:`BREAKTHROUGH_COLUMNS`.
    layer_table : pandas.DataFrame
        Per layer: ``layer, thickness_ft, permeability_md, porosity, pore_volume_rb,
        breakthrough_order, breakthrough_pvi, breakthrough_days``.
    coverage_table : pandas.DataFrame
        Rows of the forecast: ``pvi, days, vertical_coverage, fw_reservoir, wor_reservoir,
        wor_surface, water_cut`` (for coverage-versus-WOR plots).
    """

    method: str
    layers: LayerSet
    mobility_ratio: float
    variation: VariationFit
    summary: dict
    forecast: pd.DataFrame
    breakthrough_table: pd.DataFrame
    layer_table: pd.DataFrame
    coverage_table: pd.DataFrame
    stack: LayerStack = field(repr=False)
    _pore_volume_rb: float = field(repr=False)
    _injection: object = field(repr=False)
    _bw: float = field(repr=False)
    _tau_grid: np.ndarray = field(repr=False)
    _pvi_grid: np.ndarray = field(repr=False)

    def _tau_at_days(self, days):
        days = np.asarray(days, dtype=float)
        if np.any(~np.isfinite(days) | (days < 0)):
            raise FloodInputError("days", days.tolist() if days.size < 8 else "(array)", "finite days >= 0")
        pvi = self._injection.cumulative(days) * self._bw / self._pore_volume_rb
        if np.any(pvi > self._pvi_grid[-1]):
            grid = self.stack.time_grid(self._tau_grid[-1] * float(np.max(pvi) / self._pvi_grid[-1]) * 2.0)
            return self.stack.tau_at_pvi(pvi, grid)
        return self.stack.tau_at_pvi(pvi, self._tau_grid, self._pvi_grid)

    def layer_pvi(self, days):
        """Each layer's own pore volumes injected at ``days`` [PV of the layer], shape ``(len(days), n)``."""
        return self.stack.state(self._tau_at_days(np.atleast_1d(days)))["q"]

    def front_positions(self, days):
        """Water-front position xD of each layer at ``days`` [fraction of the length].

        Returns an array of shape ``(len(days), n_layers)`` (layers in input order), capped at 1.
        """
        return self.stack.state(self._tau_at_days(np.atleast_1d(days)))["front"]

    def injection_shares(self, days):
        """Fraction of the injected water entering each layer at ``days``, shape ``(len(days), n)``."""
        return self.stack.state(self._tau_at_days(np.atleast_1d(days)))["share"]


def _check_case_for_layers(case, layers):
    if case.sgi > 0:
        raise FloodInputError("saturations.sgi", case.sgi, "0 with layers",
                              "the layered methods assume no initial free gas")
    if case.gravity != 0.0:
        raise FloodInputError("reservoir.dip_deg", "not 0", "0 with layers",
                              "the layered methods assume horizontal layers")
    if layers.method == "dykstra_parsons" and case.swi > case.swc + 1e-12:
        raise FloodInputError("saturations.swi", case.swi, f"swi = swc = {case.swc:g} for dykstra_parsons",
                              "the piston-like method assumes immobile initial water")


def layered_study(case, points: int = 400, solution: FrontSolution | None = None) -> LayeredResult:
    """Layered forecast of a case whose ``case.layers`` is set: summary, dated table, breakthroughs.

    Parameters
    ----------
    case : flood.scenario.FloodCase
        With ``layers`` a :class:`LayerSet`.
    points : int
        Evenly spaced PVI rows of the forecast; every layer breakthrough inside the forecast is added.
    solution : FrontSolution, optional
        A precomputed Buckley-Leverett solution of the case (used by layered fractional flow).

    Returns
    -------
    LayeredResult

    Raises
    ------
    FloodInputError
        Initial gas, dip, or (Dykstra-Parsons) mobile initial water; invalid ``points``.

    Notes
    -----
    The common time τ at each PVI row is found by Newton's method on Σ Vp_i Q_i(τ) = Vp PVI;
    each layer's PVI follows J(Q_i) = c_i τ. Produced reservoir volume equals injected; the field
    fw is the injection-share-weighted layer outlet fw; oil produced (rb) = Σ Vp_i (Swbar_i - Swi).
    The economic limit is the first τ at which the surface water cut reaches its limit.

    References
    ----------
    Dykstra & Parsons, 1950; Buckley & Leverett, 1942; Welge, 1952.
    """
    layers = case.layers
    _check_case_for_layers(case, layers)
    if not (isinstance(points, (int, np.integer)) and 2 <= points <= 100_000):
        raise FloodInputError("points", points, "an integer 2 <= points <= 100000")
    sol = solution or buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    if layers.method == "dykstra_parsons":
        disp = piston_displacement(case.relperm, case.mu_w, case.mu_o, case.swi)
    else:
        disp = fractional_flow_displacement(sol)
    stack = layer_stack(layers, disp, case.area_acres)
    vp_layers = pore_volume(case.area_acres, layers.thickness_ft, layers.porosity)
    vp = float(vp_layers.sum())
    ooip = float(original_oil_in_place(vp, case.swi, case.bo))
    oil_pv = 1.0 - case.swi
    to_days = lambda pvi: case.injection.days_at_cumulative(np.asarray(pvi) * vp / case.bw)  # noqa: E731

    # Breakthrough events (just after each), in breakthrough order.
    tau_bt = stack.breakthrough_tau
    order = np.argsort(tau_bt, kind="stable")
    tau_ev = tau_bt[order] * (1.0 + _EVENT_NUDGE)

    # Economic limit: search up to where the field PVI passes max_pvi and the limit is reached.
    fwe = float(reservoir_fw_from_surface_cut(case.economic_water_cut, case.bo, case.bw))
    tau_top = 1.5 * float(tau_ev[-1])
    for _ in range(200):
        top = stack.state(np.array([tau_top]))
        if top["pvi"][0] >= case.max_pvi and top["fw"][0] >= fwe:
            break
        tau_top *= 2.0
    tau_grid = stack.time_grid(tau_top)
    grid = stack.state(tau_grid)
    ev = {key: val[np.searchsorted(tau_grid, tau_ev)] for key, val in grid.items() if key != "pore_fraction"}
    tau_e = stack.first_tau_reaching(fwe, tau_grid, grid["fw"])
    at_e = stack.state(np.array([tau_e]), exact=True)
    pvi_e = float(at_e["pvi"][0])
    end_pvi = min(pvi_e, case.max_pvi)

    # Forecast rows: evenly spaced PVI plus each breakthrough inside the forecast.
    pvi_rows = np.linspace(0.0, end_pvi, points)
    tau_rows = stack.tau_at_pvi(pvi_rows, tau_grid, grid["pvi"])
    if pvi_e <= case.max_pvi:
        tau_rows[-1] = tau_e   # the last row is the economic-limit state itself
    inside = (ev["pvi"] > 0.0) & (ev["pvi"] < end_pvi * (1.0 - 1e-9))
    tau_all = np.concatenate((tau_rows, tau_ev[inside]))
    tau_all = tau_all[np.argsort(np.concatenate((pvi_rows, ev["pvi"][inside])), kind="stable")]
    st = stack.state(tau_all)
    pvi = st["pvi"]
    pvi[0] = 0.0 if tau_all[0] == 0.0 else pvi[0]
    table = _forecast_frame(case, st, pvi, vp, ooip, to_days)

    fit = estimate_variation(layers.permeability_md, layers.thickness_ft)
    m = float(endpoint_mobility_ratio(case.relperm.krw_end, case.relperm.kro_end, case.mu_w, case.mu_o))
    bt_table = _breakthrough_frame(case, layers, order, ev, vp, ooip, to_days)
    bt_pvi = np.empty(layers.count)
    bt_pvi[order] = ev["pvi"]
    layer_table = pd.DataFrame({
        "layer": np.arange(1, layers.count + 1),
        "thickness_ft": layers.thickness_ft,
        "permeability_md": layers.permeability_md,
        "porosity": layers.porosity,
        "pore_volume_rb": vp_layers,
        "breakthrough_order": np.argsort(order, kind="stable") + 1,
        "breakthrough_pvi": bt_pvi,
        "breakthrough_days": to_days(bt_pvi),
    })
    coverage = pd.DataFrame({
        "pvi": table["pvi"].to_numpy(), "days": table["days"].to_numpy(),
        "vertical_coverage": st["coverage"], "fw_reservoir": table["fw_reservoir"].to_numpy(),
        "wor_reservoir": _ratio(st["fw"]), "wor_surface": table["wor"].to_numpy(),
        "water_cut": table["water_cut"].to_numpy()})

    first = {key: val[0] for key, val in ev.items()}
    pvi_bt = float(first["pvi"])
    summary = {
        "name": case.name,
        "pore_volume_rb": vp,
        "ooip_stb": ooip,
        "endpoint_mobility_ratio": m,
        "front_saturation": float(disp.front_saturation),
        "front_water_cut": float(first["fw"]),
        "front_surface_water_cut": float(surface_water_cut(first["fw"], case.bo, case.bw)),
        "breakthrough_pvi": pvi_bt,
        "breakthrough_days": float(to_days(pvi_bt)),
        "average_saturation_at_breakthrough": float(first["sbar"]),
        "recovery_factor_at_breakthrough": float(first["sbar"] - case.swi) / oil_pv,
        "economic_limit_pvi": pvi_e,
        "economic_limit_days": float(to_days(pvi_e)),
        "average_saturation_at_economic_limit": float(at_e["sbar"][0]),
        "recovery_factor_at_economic_limit": float(at_e["sbar"][0] - case.swi) / oil_pv,
        "fill_up_pvi": 0.0,
        "fill_up_days": 0.0,
        "movable_oil_fraction": (1.0 - case.sor - case.swi) / oil_pv,
        "forecast_end_pvi": end_pvi,
        "forecast_end_days": float(to_days(end_pvi)),
        "forecast_end_reason": "economic water cut" if pvi_e <= case.max_pvi else "max_pvi",
        "dykstra_parsons_v": fit.v,
        "dykstra_parsons_v_r_squared": fit.r_squared,
        "k50_md": fit.k50,
        "k84_1_md": fit.k84_1,
        "layers_method": layers.method,
        "layer_count": layers.count,
        "layered_thickness_ft": float(layers.thickness_ft.sum()),
        "vertical_coverage_at_economic_limit": float(at_e["coverage"][0]),
    }
    return LayeredResult(method=layers.method, layers=layers, mobility_ratio=m, variation=fit,
                         summary=summary, forecast=table, breakthrough_table=bt_table,
                         layer_table=layer_table, coverage_table=coverage, stack=stack,
                         _pore_volume_rb=vp, _injection=case.injection, _bw=case.bw, _tau_grid=tau_grid,
                         _pvi_grid=grid["pvi"])


def _ratio(fw):
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(fw < 1.0, fw / np.maximum(1.0 - fw, 0.0), np.inf)


def _forecast_frame(case, st, pvi, vp, ooip, to_days):
    oil_rb = vp * np.maximum(st["sbar"] - case.swi, 0.0)
    dry = (st["front"] < 1.0) & (st["fw_layer"] == 0.0)   # no water produced yet (exactly 0)
    water_layer = np.where(dry, 0.0, st["q"] - (st["sbar_layer"] - case.swi))
    water_rb = vp * np.maximum(water_layer @ st["pore_fraction"], 0.0)
    injected_bbl = pvi * vp / case.bw
    days = to_days(pvi)
    q_inj = case.injection.rate(days)
    q_res = q_inj * case.bw
    fw = st["fw"]
    table = pd.DataFrame({
        "pvi": pvi,
        "days": days,
        "oil_rate_stb_d": q_res * (1.0 - fw) / case.bo,
        "water_rate_stb_d": q_res * fw / case.bw,
        "injection_rate_bwpd": q_inj,
        "water_cut": surface_water_cut(fw, case.bo, case.bw),
        "wor": surface_water_oil_ratio(fw, case.bo, case.bw),
        "cum_oil_stb": oil_rb / case.bo,
        "cum_water_stb": water_rb / case.bw,
        "cum_injected_stb": injected_bbl,
        "recovery_factor": oil_rb / case.bo / ooip,
        "avg_water_saturation": st["sbar"],
        "outlet_water_saturation": st["sw_outlet"],
        "fw_reservoir": fw,
    })
    return table[list(FORECAST_COLUMNS)]


def _breakthrough_frame(case, layers, order, ev, vp, ooip, to_days):
    fw = ev["fw"]
    oil_stb = vp * (ev["sbar"] - case.swi) / case.bo
    broken = np.sum(ev["front"] >= 1.0, axis=-1)
    table = pd.DataFrame({
        "layer": order + 1,
        "permeability_md": layers.permeability_md[order],
        "layers_broken_through": broken,
        "vertical_coverage": ev["coverage"],
        "fw_reservoir": fw,
        "wor_reservoir": _ratio(fw),
        "wor_surface": surface_water_oil_ratio(fw, case.bo, case.bw),
        "water_cut": surface_water_cut(fw, case.bo, case.bw),
        "pvi": ev["pvi"],
        "days": to_days(ev["pvi"]),
        "cum_oil_stb": oil_stb,
        "recovery_factor": oil_stb / ooip,
    })
    return table[list(BREAKTHROUGH_COLUMNS)]

