"""One-dimensional immiscible displacement: the Buckley-Leverett solution with Welge averaging.

The entropy solution of the Riemann problem ∂Sw/∂tD + ∂fw/∂xD = 0 from the initial state Swi
(which may hold mobile water, Swi > Swc) to the injected state 1 - Sor is built on the upper
concave envelope of fw over [Swi, 1 - Sor]: a shock from Swi to the Welge tangent point Swf,
followed by a spreading wave in which each saturation travels at dfw/dSw. Convex fw (piston-like,
Swf = 1 - Sor), concave fw (pure spreading, Swf = Swi) and S-shaped fw are all special cases.

Dimensionless time is pore volumes injected, PVI = Wi Bw / Vp (total pore volume), and distance is
xD = x / L.

References
----------
Buckley, S.E. & Leverett, M.C., 1942. Mechanism of fluid displacement in sands. Trans. AIME 146,
107-116. Welge, H.J., 1952. A simplified method for computing oil recovery by gas or water drive.
Trans. AIME 195, 91-98. Lake, L.W., 1989. Enhanced Oil Recovery, Prentice Hall, Ch. 5 (entropy
solution via the concave envelope).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from .errors import FloodInputError
from .fractional_flow import fractional_flow, fractional_flow_derivative

_BISECTION_STEPS = 48
_SCAN_POINTS = 64


def _h(relperm, s, swi, fwi, mu_w, mu_o, gravity):
    """Tangent residual h(S) = fw'(S)(S - Swi) - (fw(S) - fw(Swi)); > 0 before the tangent point."""
    fw = fractional_flow(relperm, s, mu_w, mu_o, gravity)
    dfw = fractional_flow_derivative(relperm, s, mu_w, mu_o, gravity)
    return dfw * (s - swi) - (fw - fwi)


def welge_tangent(relperm, mu_w, mu_o, swi, gravity=0.0):
    """Front (shock) saturation from the Welge tangent drawn from the initial state.

    Vectorised: every argument may be an array of cases (the batch shape ``P``).

    Parameters
    ----------
    relperm : Corey or LabTable
        Relative-permeability model (saturations Swc, Sor).
    mu_w, mu_o : array_like
        Water and oil viscosity [cp].
    swi : array_like
        Initial water saturation [fraction], Swc <= Swi < 1 - Sor.
    gravity : array_like
        Gravity term G [cp] (see :func:`flood.fractional_flow.gravity_number`).

    Returns
    -------
    swf, fwf : numpy.ndarray
        Front saturation [fraction] and reservoir fw just behind the front [fraction].

    Notes
    -----
    Swf maximises the chord slope (fw(S) - fw(Swi))/(S - Swi) over (Swi, 1 - Sor] (the first segment
    of the upper concave envelope). The maximiser is bracketed on a 64-point scan and refined by
    bisection on h(S) = fw'(S)(S - Swi) - (fw(S) - fw(Swi)), which changes sign from + to - there.
    If h >= 0 up to 1 - Sor the displacement is piston-like (Swf = 1 - Sor); if h < 0 immediately
    above Swi it is a pure spreading wave (Swf = Swi).

    References
    ----------
    Welge, H.J., 1952, Trans. AIME 195, 91-98.
    """
    swi = np.asarray(swi, dtype=float)
    s_inj = 1.0 - np.asarray(relperm.sor, dtype=float)
    batch = np.broadcast_shapes(np.shape(swi), np.shape(s_inj), np.shape(mu_w), np.shape(mu_o),
                                np.shape(gravity), *[np.shape(getattr(relperm, a, 0.0)) for a in
                                                     ("swc", "krw_max", "kro_max", "nw", "no")])
    swi = np.broadcast_to(swi, batch)
    s_inj = np.broadcast_to(s_inj, batch)
    span = s_inj - swi
    fwi = fractional_flow(relperm, swi, mu_w, mu_o, gravity)
    t = np.linspace(0.0, 1.0, _SCAN_POINTS + 1)[1:].reshape((-1,) + (1,) * len(batch))
    s = swi + t * span
    fw = fractional_flow(relperm, s, mu_w, mu_o, gravity)
    chord = (fw - fwi) / (s - swi)
    # Largest S whose chord slope ties the maximum (a linear fw is a contact: piston-like).
    near_max = chord >= np.max(chord, axis=0) - 1e-12 * np.abs(np.max(chord, axis=0))
    k = _SCAN_POINTS - 1 - np.argmax(near_max[::-1], axis=0)
    lo_t = np.where(k == 0, 1e-9, (k) / _SCAN_POINTS)  # t of point k-1 (t index k <-> (k+1)/n)
    hi_t = np.minimum((k + 2) / _SCAN_POINTS, 1.0)
    lo = swi + lo_t * span
    hi = swi + hi_t * span
    h_hi = _h(relperm, hi, swi, fwi, mu_w, mu_o, gravity)
    h_lo = _h(relperm, lo, swi, fwi, mu_w, mu_o, gravity)
    piston = (hi_t >= 1.0) & (h_hi >= -1e-12)
    spreading = (k == 0) & (h_lo <= 0.0)
    if batch == () and not (piston or spreading) and h_lo > 0.0 > h_hi:
        # One case: scipy's Brent method on the same bracket (fewer evaluations than bisection).
        root = brentq(lambda x: float(_h(relperm, x, swi, fwi, mu_w, mu_o, gravity)),
                      float(lo), float(hi), xtol=1e-15, rtol=4 * np.finfo(float).eps)
        lo = hi = np.asarray(root)
    else:
        for _ in range(_BISECTION_STEPS):
            mid = 0.5 * (lo + hi)
            pos = _h(relperm, mid, swi, fwi, mu_w, mu_o, gravity) > 0.0
            lo = np.where(pos, mid, lo)
            hi = np.where(pos, hi, mid)
    swf = np.where(piston, s_inj, np.where(spreading, swi, 0.5 * (lo + hi)))
    fwf = fractional_flow(relperm, swf, mu_w, mu_o, gravity)
    return swf, fwf


def saturation_at_speed(relperm, mu_w, mu_o, speed, s_lo, s_hi, gravity=0.0):
    """Saturation S in [s_lo, s_hi] where dfw/dSw = ``speed`` on a spreading (concave) branch.

    Parameters
    ----------
    relperm, mu_w, mu_o, gravity
        As for :func:`welge_tangent`.
    speed : array_like
        Characteristic speed dxD/dtD = dfw/dSw [dimensionless]; e.g. 1/PVI at the outlet.
    s_lo, s_hi : array_like
        Bracket [fraction]; dfw/dSw must fall from above ``speed`` at s_lo to below it at s_hi.

    Returns
    -------
    numpy.ndarray
        Saturation [fraction], clipped to the bracket.

    Notes
    -----
    Vectorised bisection (48 halvings, machine precision on the bracket).

    References
    ----------
    Buckley & Leverett, 1942 (xD = tD dfw/dSw).
    """
    speed = np.asarray(speed, dtype=float)
    lo = np.broadcast_to(np.asarray(s_lo, dtype=float), np.broadcast_shapes(speed.shape, np.shape(s_lo), np.shape(s_hi))).copy()
    hi = np.broadcast_to(np.asarray(s_hi, dtype=float), lo.shape).copy()
    for _ in range(_BISECTION_STEPS):
        mid = 0.5 * (lo + hi)
        fast = fractional_flow_derivative(relperm, mid, mu_w, mu_o, gravity) > speed
        lo = np.where(fast, mid, lo)
        hi = np.where(fast, hi, mid)
    return 0.5 * (lo + hi)


def saturation_at_fw(relperm, mu_w, mu_o, fw_target, s_lo, s_hi, gravity=0.0):
    """Saturation S in [s_lo, s_hi] where fw(S) = ``fw_target`` (fw increasing on the bracket).

    Parameters
    ----------
    relperm, mu_w, mu_o, gravity
        As for :func:`welge_tangent`.
    fw_target : array_like
        Reservoir fractional flow [fraction].
    s_lo, s_hi : array_like
        Bracket [fraction].

    Returns
    -------
    numpy.ndarray
        Saturation [fraction] (vectorised bisection).

    References
    ----------
    Buckley & Leverett, 1942.
    """
    fw_target = np.asarray(fw_target, dtype=float)
    lo = np.broadcast_to(np.asarray(s_lo, dtype=float), np.broadcast_shapes(fw_target.shape, np.shape(s_lo), np.shape(s_hi))).copy()
    hi = np.broadcast_to(np.asarray(s_hi, dtype=float), lo.shape).copy()
    for _ in range(_BISECTION_STEPS):
        mid = 0.5 * (lo + hi)
        below = fractional_flow(relperm, mid, mu_w, mu_o, gravity) < fw_target
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    return 0.5 * (lo + hi)


def _upper_concave_hull(x, y):
    """Indices of the upper concave hull of points sorted by x (monotone chain)."""
    hull: list[int] = []
    for i in range(len(x)):
        while len(hull) >= 2:
            a, b = hull[-2], hull[-1]
            cross = (x[b] - x[a]) * (y[i] - y[a]) - (y[b] - y[a]) * (x[i] - x[a])
            if cross >= 0.0:  # b lies on or below the chord a-i: not on the upper hull
                hull.pop()
            else:
                break
        hull.append(i)
    return np.asarray(hull)


@dataclass(frozen=True)
class FrontSolution:
    """Buckley-Leverett / Welge solution for one case (see :func:`buckley_leverett`).

    Attributes
    ----------
    swi : float
        Initial water saturation [fraction].
    sw_injected : float
        Injected-state saturation 1 - Sor [fraction].
    fw_initial : float
        Reservoir fw of the initial state (> 0 with mobile initial water) [fraction].
    front_saturation : float
        Saturation just behind the shock, Swf [fraction].
    front_fw : float
        Reservoir fw just behind the shock [fraction].
    breakthrough_pvi : float
        Pore volumes injected when the front reaches the outlet, 1/fw'(Swf) [total PV].
    average_saturation_at_breakthrough : float
        Welge average saturation at breakthrough [fraction].
    wave_speed, wave_saturation : numpy.ndarray
        The spreading wave as a table: saturation travelling at each speed dxD/dtD
        (speed increasing, saturation decreasing from 1 - Sor to Swf).
    concave_tail : bool
        True when fw' decreases monotonically over [Swf, 1 - Sor] (exact bisection is used);
        False when a second inflection required the discrete concave envelope.
    """

    relperm: object
    mu_w: float
    mu_o: float
    gravity: float
    swi: float
    sw_injected: float
    fw_initial: float
    front_saturation: float
    front_fw: float
    breakthrough_pvi: float
    average_saturation_at_breakthrough: float
    wave_speed: np.ndarray
    wave_saturation: np.ndarray
    concave_tail: bool

    @property
    def front_speed(self) -> float:
        """Shock speed dxD/dtD = (fw(Swf) - fw(Swi)) / (Swf - Swi) [dimensionless]."""
        return 1.0 / self.breakthrough_pvi

    def profile(self, xd, pvi):
        """Water saturation Sw(xD) at ``pvi`` pore volumes injected [fraction].

        Parameters
        ----------
        xd : array_like
            Dimensionless distance from the inlet, 0..1 [dimensionless].
        pvi : float or array_like
            Pore volumes injected [total PV]; broadcast against ``xd``.
        """
        xd = np.asarray(xd, dtype=float)
        pvi = np.asarray(pvi, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            speed = np.where(pvi > 0, xd / pvi, np.inf)
        sw = np.interp(speed, self.wave_speed, self.wave_saturation)
        return np.where(speed > self.front_speed, self.swi, sw)

    def outlet(self, pvi):
        """Outlet saturation, outlet reservoir fw and Welge average saturation versus PVI.

        Parameters
        ----------
        pvi : array_like
            Pore volumes injected [total PV].

        Returns
        -------
        sw_outlet, fw_outlet, sw_average : numpy.ndarray
            [fraction] each.

        Notes
        -----
        After breakthrough the outlet saturation Sw2 solves fw'(Sw2) = 1/PVI: interpolated on the
        wave table, then polished by two Newton steps (fw'' by central differences). The Welge
        average is Swbar = Sw2 + PVI (1 - fw(Sw2)) after breakthrough and
        Swi + PVI (1 - fw(Swi)) before it (Welge 1952); it is first-order insensitive to Sw2.
        """
        pvi = np.asarray(pvi, dtype=float)
        after = pvi >= self.breakthrough_pvi
        with np.errstate(divide="ignore"):
            speed = np.where(after, 1.0 / np.maximum(pvi, 1e-300), self.front_speed)
        s2 = np.interp(speed, self.wave_speed, self.wave_saturation)
        if self.concave_tail and self.front_saturation < self.sw_injected:
            lo, hi = self.front_saturation, self.sw_injected
            d = 1e-7 * (hi - lo)
            args = (self.relperm, None, self.mu_w, self.mu_o, self.gravity)
            for _ in range(2):
                g = fractional_flow_derivative(self.relperm, s2, self.mu_w, self.mu_o, self.gravity) - speed
                gp = (fractional_flow_derivative(self.relperm, np.minimum(s2 + d, hi), *args[2:])
                      - fractional_flow_derivative(self.relperm, np.maximum(s2 - d, lo), *args[2:])) / (
                          np.minimum(s2 + d, hi) - np.maximum(s2 - d, lo))
                with np.errstate(divide="ignore", invalid="ignore"):
                    step = np.where(gp < 0, g / gp, 0.0)
                s2 = np.clip(s2 - step, lo, hi)
            s2 = np.where(pvi <= self.breakthrough_pvi, self.front_saturation, s2)
        fw2 = fractional_flow(self.relperm, s2, self.mu_w, self.mu_o, self.gravity)
        s_out = np.where(after, s2, self.swi)
        fw_out = np.where(after, fw2, self.fw_initial)
        sbar = np.where(after, np.minimum(s2 + pvi * (1.0 - fw2), self.sw_injected),
                        self.swi + pvi * (1.0 - self.fw_initial))
        return s_out, fw_out, sbar

    def outlet_saturation(self, pvi):
        """Saturation at the outlet (xD = 1) versus pore volumes injected [fraction]."""
        return self.outlet(pvi)[0]

    def outlet_fw(self, pvi):
        """Reservoir fractional flow of water at the outlet versus PVI [fraction]."""
        return self.outlet(pvi)[1]

    def average_saturation(self, pvi):
        """Welge average water saturation of the whole length versus PVI [fraction] (see :meth:`outlet`)."""
        return self.outlet(pvi)[2]


def buckley_leverett(relperm, mu_w, mu_o, swi=None, gravity=0.0, wave_points=801) -> FrontSolution:
    """Solve the Buckley-Leverett displacement for one case.

    Parameters
    ----------
    relperm : Corey or LabTable
        Relative-permeability model (scalar parameters).
    mu_w, mu_o : float
        Water and oil viscosity [cp], > 0.
    swi : float, optional
        Initial water saturation [fraction], Swc <= Swi < 1 - Sor; default Swc.
    gravity : float
        Gravity term G [cp]; 0 for horizontal flow.
    wave_points : int
        Saturations tabulated on the spreading wave (for profiles).

    Returns
    -------
    FrontSolution

    Raises
    ------
    FloodInputError
        Non-positive viscosity, or Swi outside [Swc, 1 - Sor).

    Notes
    -----
    Welge (1952): breakthrough PVI = 1/fw'(Swf) = (Swf - Swi)/(fw(Swf) - fw(Swi)) and
    Swbar_bt = Swi + (1 - fw(Swi)) PVI_bt. When fw' is not monotone over [Swf, 1 - Sor]
    (a second inflection, e.g. an irregular lab table) the tail is replaced by the discrete
    upper concave envelope on ``wave_points`` saturations.

    References
    ----------
    Buckley & Leverett, 1942; Welge, 1952; Lake, 1989, Ch. 5.

    Examples
    --------
    >>> from flood.relative_permeability import Corey
    >>> sol = buckley_leverett(Corey(0.0, 0.0, 1.0, 1.0, 2.0, 2.0), 1.0, 1.0)
    >>> round(sol.front_saturation, 6), round(sol.breakthrough_pvi, 6)
    (0.707107, 0.828427)
    """
    swc, sor = float(relperm.swc), float(relperm.sor)
    swi = swc if swi is None else float(swi)
    for name, value in (("mu_w", mu_w), ("mu_o", mu_o)):
        if not (np.isfinite(value) and value > 0):
            raise FloodInputError(f"fluids.{name}_cp", value, "a viscosity > 0 cp")
    if not (swc - 1e-12 <= swi < 1.0 - sor):
        raise FloodInputError("saturations.swi", swi, f"swc = {swc:g} <= swi < 1 - sor = {1 - sor:g}")
    s_inj = 1.0 - sor
    swf, fwf = (float(v) for v in welge_tangent(relperm, mu_w, mu_o, swi, gravity))
    fwi = float(fractional_flow(relperm, swi, mu_w, mu_o, gravity))
    if swf > swi + 1e-12 and fwf > fwi:
        pvi_bt = (swf - swi) / (fwf - fwi)
    else:  # pure spreading wave: the fastest characteristic leaves from Swi
        pvi_bt = 1.0 / float(fractional_flow_derivative(relperm, swi + 1e-9 * (s_inj - swi), mu_w, mu_o, gravity))
    sw_bar_bt = swi + (1.0 - fwi) * pvi_bt
    # Spreading wave from 1 - Sor (slowest) down to Swf (fastest).
    s = np.linspace(s_inj, swf, wave_points)
    speed = fractional_flow_derivative(relperm, s, mu_w, mu_o, gravity)
    concave = bool(np.all(np.diff(speed) >= -1e-12 * max(1.0, float(np.max(np.abs(speed))))))
    if not concave:
        x = s[::-1]
        y = fractional_flow(relperm, x, mu_w, mu_o, gravity)
        idx = _upper_concave_hull(x, y)
        hx, hy = x[idx], y[idx]
        seg = np.diff(hy) / np.diff(hx)  # slopes, decreasing along increasing S
        # Each hull vertex owns the speed range between its two neighbouring segment slopes.
        v_hi = np.concatenate(([1.0 / pvi_bt], seg))   # segment to the lower-S side
        v_lo = np.concatenate((seg, [seg[-1] if seg.size else 0.0]))  # segment to the higher-S side
        v_lo[-1] = min(v_lo[-1], float(speed[0]))
        speed = np.ravel(np.column_stack((v_hi, v_lo)))[::-1]
        s = np.repeat(hx, 2)[::-1]
    return FrontSolution(relperm=relperm, mu_w=float(mu_w), mu_o=float(mu_o), gravity=float(gravity),
                         swi=swi, sw_injected=s_inj, fw_initial=fwi, front_saturation=swf,
                         front_fw=fwf, breakthrough_pvi=pvi_bt,
                         average_saturation_at_breakthrough=sw_bar_bt,
                         wave_speed=np.asarray(speed), wave_saturation=np.asarray(s),
                         concave_tail=concave)


def breakthrough_mobility_ratio(relperm, mu_w, mu_o, swi=None, gravity=0.0, *, solution=None) -> float:
    """Mobility ratio of the displacement at breakthrough, the one areal-sweep charts use [-].

    Parameters
    ----------
    relperm : Corey or LabTable
        Relative-permeability model.
    mu_w, mu_o : float
        Water and oil viscosity [cp].
    swi : float, optional
        Initial water saturation [fraction] (default Swc).
    gravity : float
        Gravity number of :func:`buckley_leverett` [-].
    solution : FrontSolution, optional
        A ready :func:`buckley_leverett` solution of the same case (saves solving it again).

    Returns
    -------
    float
        M_bt = [krw(S̄w,bt)/μw] / [kro(Swi)/μo] [-].

    Notes
    -----
    The water mobility is taken at the Welge average saturation behind the front at
    breakthrough, the oil mobility ahead of the front (Craig 1971, Ch. 3, from memory). With
    piston-like relative permeabilities it equals the endpoint mobility ratio; with a spreading
    Buckley-Leverett front it is lower, so it is the M at which to read a piston-displacement
    sweep correlation such as Fassihi's.

    References
    ----------
    Craig, F.F., 1971, The Reservoir Engineering Aspects of Waterflooding, SPE Monograph 3
    (from memory). Welge, H.J., 1952, Trans. AIME 195, 91-98.

    Examples
    --------
    >>> from flood.relative_permeability import Corey
    >>> round(breakthrough_mobility_ratio(Corey(0, 0, 1, 1, 2, 2), 1.0, 1.0, 0.0), 5)
    0.68629
    """
    sol = solution if solution is not None else buckley_leverett(relperm, mu_w, mu_o, swi, gravity)
    krw, _ = relperm.kr(sol.average_saturation_at_breakthrough)
    _, kro = relperm.kr(sol.swi)
    if not kro > 0:
        raise FloodInputError("relperm.kro", float(kro), "kro(Swi) > 0", "oil must be mobile ahead of the front")
    return float((krw / mu_w) / (kro / mu_o))
