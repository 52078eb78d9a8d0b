"""IMPES finite-volume solver for incompressible two-phase (water/oil) flow.

Unknowns are the oil pressure p and the water saturation Sw per cell. Each time step

1. solves the pressure equation, implicit in p with mobilities frozen at the old saturation,

       sum_faces T (λw,up + λo,up) (p_i - p_j) = q_i + sum_faces T λw,up (ΔPc - Δγ Δz)_ij ,

   with two-point transmissibilities T and phase-upstream mobilities λ = kr/μ (the upstream
   cell of each phase is the one with the higher phase potential; the choice is iterated until
   it agrees with the new pressure);
2. moves the saturation explicitly, Sw_i += Δt/Vp_i (qw_i - sum_faces Fw_ij), with
   Fw = T λw,up (Δp - ΔPc + Δγ Δz), and Δt from an adaptive CFL bound.

Phase potentials are Φo = p and Φw = p - Pc + Δγ z (z elevation, positive upward; Δγ the
water-minus-oil hydrostatic gradient): only the density difference matters in incompressible flow,
since the oil head can be absorbed into p. Injectors inject water;
producers produce both phases in proportion to the mobilities of their cell.

References
----------
Sheldon, J.W., Harris, C.D. & Bavly, D., 1959, A method for general reservoir behavior simulation
on digital computers, SPE 1521-G; Stone, H.L. & Garder, A.O., 1961, Analysis of gas-cap or
dissolved-gas drive reservoirs, SPE J. 1(2) (the IMPES scheme). Aziz, K. & Settari, A., 1979,
Petroleum Reservoir Simulation, Ch. 5 and 9 (two-point flux, upstream weighting, stability).
Coats, K.H., 2003, IMPES stability: selection of stable timesteps, SPE J. 8(2), 181-187.
Chen, Z., Huan, G. & Li, B., 2004, An improved IMPES method for two-phase flow in porous media,
Transport in Porous Media 54, 361-376 (from memory).
"""

from __future__ import annotations

import time as _time
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.linalg.lapack import dgtsv
from scipy.sparse.linalg import LinearOperator, cg, splu

from ..errors import FloodInputError
from .grid import CartesianGrid

_SAMPLES = 2001
_MAX_UPSTREAM_ITERATIONS = 4
#: Relative residual and iteration limit of the preconditioned conjugate-gradient pressure solve.
_KRYLOV_RTOL = 1e-11
_KRYLOV_MAXITER = 12


@dataclass(frozen=True)
class TwoPhaseRun:
    """Result of :func:`simulate_two_phase`.

    Attributes
    ----------
    time : numpy.ndarray
        Time at the end of each step, starting with 0 [time unit].
    injected, water_produced, oil_produced : numpy.ndarray
        Cumulative water injected, water produced and oil produced at those times [volume].
    producer_fw : numpy.ndarray
        Water fraction of the total production rate during each step (first entry repeats the
        second) [fraction].
    average_saturation : numpy.ndarray
        Pore-volume-weighted mean water saturation at those times [fraction].
    report_times : numpy.ndarray
        Times at which saturations were kept [time unit].
    report_saturations : numpy.ndarray
        Saturation per cell at each report time, shape (reports, cells) [fraction].
    final_saturation : numpy.ndarray
        Saturation per cell at the end [fraction].
    pore_volume : float
        Total pore volume [volume].
    steps, pressure_solves : int
        Number of time steps and of pressure solves.
    seconds : float
        Wall-clock time of the run [s].
    """

    time: np.ndarray
    injected: np.ndarray
    water_produced: np.ndarray
    oil_produced: np.ndarray
    producer_fw: np.ndarray
    average_saturation: np.ndarray
    report_times: np.ndarray
    report_saturations: np.ndarray
    final_saturation: np.ndarray
    pore_volume: float
    steps: int
    pressure_solves: int
    seconds: float

    @property
    def pvi(self) -> np.ndarray:
        """Pore volumes injected at each step time [total PV]."""
        return self.injected / self.pore_volume


class PressureSolver:
    """Solve the pressure equation for given face weights T λt and right-hand side.

    A chain of cells (1D grid) is solved as a tridiagonal system (LAPACK ``dgtsv`` via scipy);
    anything else with a sparse LU factorisation (``scipy.sparse.linalg.splu``, minimum-degree
    ordering of the symmetric matrix), which is kept and
    reused while the face weights do not change. The system is singular (pure Neumann with
    sources summing to zero); it is made regular by adding the first diagonal entry to itself,
    which sets p = 0 in cell 0 and leaves every other equation exact. When the weights change,
    conjugate gradients (``scipy.sparse.linalg.cg``) preconditioned by the previous factorisation
    and started from the previous pressure are tried first; only if they miss the tolerance
    within a few iterations is the matrix factorised again (common practice for slowly varying
    systems).
    """

    def __init__(self, grid: CartesianGrid):
        self.n = grid.cells
        self.fl = grid.face_left
        self.fr = grid.face_right
        self.chain = self.n > 1 and bool(np.array_equal(self.fl, np.arange(self.n - 1))
                          and np.array_equal(self.fr, np.arange(1, self.n)))
        self.rows = np.concatenate((self.fl, self.fr, self.fl, self.fr))
        self.cols = np.concatenate((self.fl, self.fr, self.fr, self.fl))
        self._weights = None
        self._lu = None
        self._rhs = None
        self._p = None
        self.solves = 0
        self.factorisations = 0
        self.krylov_solves = 0

    def solve(self, weights: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """Pressure per cell for face weights ``weights`` and sources ``rhs``."""
        if self.chain:  # tridiagonal: solving is cheaper than checking for a repeat
            self.solves += 1
            diag = np.zeros(self.n)
            diag[:-1] += weights
            diag[1:] += weights
            diag[0] *= 2.0
            off = -weights
            p, info = dgtsv(off, diag, off, rhs)[3:]
            if info != 0:  # pragma: no cover - the matrix is diagonally dominant
                raise np.linalg.LinAlgError(f"tridiagonal pressure solve failed (info={info})")
            return p
        if self._p is not None and np.array_equal(weights, self._weights) and np.array_equal(rhs, self._rhs):
            return self._p
        self.solves += 1
        if self.n == 1:
            p = np.zeros(1)
        else:
            p = None
            if self._lu is not None and not np.array_equal(weights, self._weights):
                p = self._krylov(weights, rhs)
            if p is None:
                if self._lu is None or not np.array_equal(weights, self._weights):
                    self._factorise(weights)
                p = self._lu.solve(rhs)
        self._weights = weights.copy()
        self._rhs = rhs.copy()
        self._p = p
        return p

    def _factorise(self, weights):
        data = np.concatenate((weights, weights, -weights, -weights))
        a = sp.coo_matrix((data, (self.rows, self.cols)), shape=(self.n, self.n)).tocsc()
        a[0, 0] = 2.0 * a[0, 0]
        # the matrix is symmetric: a minimum-degree ordering of A^T + A keeps the fill low
        self._lu = splu(a, permc_spec="MMD_AT_PLUS_A", options={"SymmetricMode": True})
        self.factorisations += 1

    def _krylov(self, weights, rhs):
        """Conjugate gradients preconditioned by the last factorisation, from the last pressure.

        Mobilities change little between pressure solves, so the old factor is a close
        preconditioner and a few iterations reach the tolerance; None when they do not (the
        caller then factorises afresh).
        """
        fl, fr, n = self.fl, self.fr, self.n
        a00 = float(weights[(fl == 0) | (fr == 0)].sum())

        def matvec(x):
            x = np.ravel(x)
            flux = weights * (x[fl] - x[fr])
            y = np.bincount(fl, flux, n) - np.bincount(fr, flux, n)
            y[0] += a00 * x[0]
            return y

        a = LinearOperator((n, n), matvec=matvec, dtype=float)
        m = LinearOperator((n, n), matvec=lambda x: self._lu.solve(np.ravel(x)), dtype=float)
        p, info = cg(a, rhs, x0=self._p, rtol=_KRYLOV_RTOL, maxiter=_KRYLOV_MAXITER, M=m)
        if info != 0:
            return None
        self.krylov_solves += 1
        return p


class StepLog:
    """Per-step bookkeeping shared by the explicit and the implicit stepping.

    Keeps the step times, cumulative water produced, producer water fraction and mean saturation;
    copies the saturation at the report times (which the steppers land on exactly, see
    :meth:`next_report`); reports progress and asks the ``stop`` callback after each step.
    """

    def __init__(self, sw, pv, report_times, end_time, progress=None, stop=None):
        self.pv, self.pv_total = pv, float(pv.sum())
        times = np.asarray(report_times, dtype=float)
        self.reports = np.sort(times[(times > 0) & (times <= end_time)])
        self.report_out = [sw.copy() for _ in times[times <= 0]]
        self.kept = [0.0 for _ in times[times <= 0]]
        self.ri = 0
        self.times, self.wprod, self.fwp = [0.0], [0.0], [np.nan]
        self.savg = [float(pv @ sw) / self.pv_total]
        self.end_time, self.progress, self.stop = end_time, progress, stop
        self.next_progress = 0.01

    def next_report(self) -> float:
        """The next report time still to land on (inf when none is left)."""
        return float(self.reports[self.ri]) if self.ri < self.reports.size else np.inf

    def record(self, t, sw, cum_w, f_now) -> bool:
        """Log the state after a step ending at ``t``; True when ``stop`` asks to end the run."""
        self.times.append(t)
        self.wprod.append(cum_w)
        self.fwp.append(f_now)
        self.savg.append(float(self.pv @ sw) / self.pv_total)
        while self.ri < self.reports.size and t >= self.reports[self.ri] * (1 - 1e-12):
            self.report_out.append(sw.copy())
            self.kept.append(float(self.reports[self.ri]))
            self.ri += 1
        if self.progress is not None and t >= self.next_progress * self.end_time:
            self.progress(min(t / self.end_time, 1.0))
            self.next_progress = t / self.end_time + 0.01
        return self.stop is not None and bool(self.stop(t, sw, f_now))

    def run(self, sw, total_injection, total_production, steps, pressure_solves, t0) -> TwoPhaseRun:
        """The finished :class:`TwoPhaseRun`."""
        times = np.asarray(self.times)
        wprod = np.asarray(self.wprod)
        fwp = self.fwp
        fwp[0] = fwp[1] if len(fwp) > 1 else np.nan
        if self.progress is not None:
            self.progress(1.0)
        return TwoPhaseRun(time=times, injected=times * total_injection, water_produced=wprod,
                           oil_produced=times * total_production - wprod, producer_fw=np.asarray(fwp),
                           average_saturation=np.asarray(self.savg), report_times=np.asarray(self.kept),
                           report_saturations=np.asarray(self.report_out).reshape(len(self.report_out), sw.size),
                           final_saturation=sw, pore_volume=self.pv_total, steps=steps,
                           pressure_solves=pressure_solves, seconds=_time.perf_counter() - t0)


def _sample_bounds(relperm, mu_w, mu_o):
    """Largest saturation derivatives of the flux functions, for the CFL bound.

    Returns max |d(λw/λt)/dSw| (viscous fractional flow) and max(|dλw/dSw|, |dλo/dSw|) (bounds
    the derivative of the gravity and capillary fluxes T λw,up λo,up/(λw,up + λo,up) ΔΦ with
    respect to either upstream saturation), by differences on a fine sample over Swc..1 - Sor.
    """
    s = np.linspace(float(relperm.swc), 1.0 - float(relperm.sor), _SAMPLES)
    krw, kro = relperm.kr(s)
    lw, lo = krw / mu_w, kro / mu_o
    f = lw / (lw + lo)
    ds = np.diff(s)
    fmax = float(np.max(np.abs(np.diff(f) / ds)))
    gmax = float(max(np.max(np.abs(np.diff(lw) / ds)), np.max(np.abs(np.diff(lo) / ds))))
    return fmax, gmax


def simulate_two_phase(grid: CartesianGrid, relperm, mu_w: float, mu_o: float, sw_initial,
                       well_rates, end_time: float, *, elevation=None, gravity_gradient: float = 0.0,
                       capillary=None, capillary_scale: float = 1.0, report_times=(),
                       cfl: float = 0.9, stop=None, progress=None,
                       pressure_update_ds: float | None = None, time_stepping: str = "explicit",
                       max_steps: int = 5_000_000) -> TwoPhaseRun:
    """Run the IMPES two-phase solver from an initial saturation to ``end_time``.

    Parameters
    ----------
    grid : CartesianGrid
        The grid; its transmissibilities include the Darcy constant.
    relperm : Corey or LabTable
        Relative-permeability model (anything with ``kr``, ``swc``, ``sor``).
    mu_w, mu_o : float
        Water and oil viscosity [viscosity unit, e.g. cp], > 0.
    sw_initial : float or numpy.ndarray
        Initial water saturation, scalar or per cell [fraction].
    well_rates : numpy.ndarray
        Rate per cell, shape (cells,): > 0 water injection, < 0 production (both phases at the
        cell's mobility ratio) [volume/time]; must sum to zero (incompressible).
    end_time : float
        Time to stop [time unit], > 0.
    elevation : numpy.ndarray, optional
        Elevation of each cell centre, positive upward [length]; needed with gravity.
    gravity_gradient : float
        (γw - γo) g, the water-minus-oil hydrostatic pressure gradient [pressure/length].
    capillary : BrooksCoreyCapillary or CapillaryTable, optional
        Capillary pressure Pc(Sw) = po - pw.
    capillary_scale : float
        Factor turning the model's Pc into the pressure unit of the solver [-].
    report_times : sequence of float
        Times at which to keep the saturation field [time unit]; steps land on them exactly.
    cfl : float
        Safety factor on the explicit stability bound, 0 < cfl <= 1 [-].
    stop : callable, optional
        ``stop(time, sw, producer_fw) -> bool``; the run ends after the first step where it is true.
        ``sw`` is the solver's working array, updated in place: copy it to keep it.
    progress : callable, optional
        ``progress(fraction)`` called as the run advances (fraction of ``end_time``, 0..1).
    pressure_update_ds : float, optional
        Without gravity and capillarity on a grid that is not a chain of cells, the pressure
        (and so the total flux) is solved again only once some cell's saturation has changed by
        this much since the last solve; between solves the water flux is the upstream fw times
        the held total flux. Default 0.05 [fraction]. On a chain (1D grid) without gravity and
        capillarity the total flux is fixed by the well rates, so the pressure is solved once and
        this setting is not needed.
    time_stepping : str
        "explicit" (IMPES, the default) or "implicit" (backward Euler with Newton, chains of cells
        only: see :mod:`flood.numerical.implicit_chain`; for strong capillarity, where the explicit
        step is bound by Δt ~ Δx²). ``cfl`` and ``pressure_update_ds`` do not apply to it.
    max_steps : int
        Safety limit on the number of steps.

    Returns
    -------
    TwoPhaseRun

    Raises
    ------
    FloodInputError
        Bad viscosity, rates not summing to zero, saturations outside [0, 1], bad CFL factor.

    Notes
    -----
    Time step Δt = cfl / max_i r_i with, per cell,
    r_i = [out_i max|f'| + Σ_faces T (|Δγ Δz| + |ΔPc|) max(|λw'|, |λo'|)
           + 2 Σ_faces T h max(|Pc'_i|, |Pc'_j|)] / Vp_i,
    where out_i is the total outflow of the cell, f = λw/λt and h = λw,up λo,up/(λw,up + λo,up)
    on each face: the upwind monotonicity bound for the advective part plus the explicit-diffusion
    bound for the capillary part, evaluated on the current state (Aziz & Settari 1979, Ch. 9;
    Coats 2003). First order in space and time. Holding the total flux over several saturation
    steps is the usual "improved IMPES" economy (Chen, Huan & Li 2004, from memory); it keeps
    the scheme conservative because the held flux is divergence-free apart from the wells.
    On a chain of cells without gravity and capillarity nothing is lost by holding it: the flux
    through face k is exactly Σ_{i<=k} q_i whatever the mobilities (1D continuity, common
    practice), so the one solve of the first step serves the whole run and, since the stability
    bound then depends on the flux only, so does its time step (apart from landing on report times).

    References
    ----------
    Sheldon, Harris & Bavly, 1959; Stone & Garder, 1961 (IMPES); Aziz & Settari, 1979;
    Coats, 2003, SPE J. 8(2); Chen, Huan & Li, 2004 (from memory).

    Examples
    --------
    >>> from flood.relative_permeability import Corey
    >>> g = CartesianGrid(50, 1, 0.02, 1.0)
    >>> q = np.zeros(50); q[0], q[-1] = 1.0, -1.0
    >>> run = simulate_two_phase(g, Corey(0, 0, 1, 1, 1, 1), 1.0, 1.0, 0.0, q, 0.5)
    >>> round(float(run.average_saturation[-1]), 6)
    0.5
    """
    t0 = _time.perf_counter()
    for name, value in (("mu_w", mu_w), ("mu_o", mu_o)):
        if not (np.isfinite(value) and value > 0):
            raise FloodInputError(f"fluids.{name}", value, "a viscosity > 0")
    if not (0 < cfl <= 1):
        raise FloodInputError("numerical.cfl", cfl, "0 < cfl <= 1")
    if not (np.isfinite(end_time) and end_time > 0):
        raise FloodInputError("numerical.end_time", end_time, "a time > 0")
    n = grid.cells
    q = np.asarray(well_rates, dtype=float)
    if q.shape != (n,):
        raise FloodInputError("wells.rates", f"shape {q.shape}", f"one rate per cell, shape ({n},)")
    if abs(q.sum()) > 1e-9 * max(1.0, np.abs(q).sum()):
        raise FloodInputError("wells.rates", float(q.sum()), "injection equal to production (sum 0)",
                              "incompressible fluids")
    sw = np.broadcast_to(np.asarray(sw_initial, dtype=float), (n,)).copy()
    if np.any((sw < 0) | (sw > 1)):
        raise FloodInputError("saturations.swi", float(sw.min()), "0 <= Sw <= 1")
    z = np.zeros(n) if elevation is None else np.broadcast_to(np.asarray(elevation, dtype=float), (n,))
    fl, fr, trans = grid.face_left, grid.face_right, grid.transmissibility
    pv = grid.pore_volume
    pv_total = float(pv.sum())
    gz = -gravity_gradient * (z[fl] - z[fr])  # water potential offset: Φw = p - Pc + Δγ z
    lam_floor = 1e-12 * max(float(np.max(relperm.kr(np.linspace(0.0, 1.0, 101))[0])) / mu_w,
                            float(np.max(relperm.kr(np.linspace(0.0, 1.0, 101))[1])) / mu_o)
    fmax, gmax = _sample_bounds(relperm, mu_w, mu_o)
    def div(flux):  # net flux out of each cell
        return np.bincount(fl, flux, n) - np.bincount(fr, flux, n)

    def touch(flux):  # sum over the faces of each cell
        return np.bincount(fl, flux, n) + np.bincount(fr, flux, n)

    static_rate = touch(np.abs(trans * gz)) * gmax
    qinj = np.maximum(q, 0.0)
    qneg = np.minimum(q, 0.0)
    total_injection = float(qinj.sum())
    total_production = float(-qneg.sum())
    has_extra = capillary is not None or bool(np.any(gz != 0.0))
    solver = PressureSolver(grid)
    if time_stepping not in ("explicit", "implicit"):
        raise FloodInputError("numerical.time_stepping", time_stepping, "explicit or implicit")
    if time_stepping == "implicit":
        if not solver.chain:
            raise FloodInputError("numerical.time_stepping", "implicit", "explicit on a 2D grid",
                                  "the implicit stepping is for chains of cells (1D)")
        from .implicit_chain import simulate_chain_implicit

        log = StepLog(sw, pv, report_times, end_time, progress, stop)
        sw, steps = simulate_chain_implicit(grid, relperm, mu_w, mu_o, sw, q, end_time, log, z=z,
                                            gravity_gradient=gravity_gradient, capillary=capillary,
                                            capillary_scale=capillary_scale, max_steps=max_steps)
        return log.run(sw, total_injection, total_production, steps, 0, t0)
    # On a chain of cells without gravity and capillarity the total flux on every face is fixed by
    # the well rates alone (div of the flux equals q), so one pressure solve gives it for the run.
    fixed_flux = solver.chain and not has_extra
    log = StepLog(sw, pv, report_times, end_time, progress, stop)
    up_w = np.ones(fl.size, dtype=bool)
    up_o = np.ones(fl.size, dtype=bool)
    idx_w = idx_o = fl
    t = 0.0
    cum_w = 0.0
    steps = 0
    end = end_time * (1 - 1e-12)
    sw_solved = None
    if pressure_update_ds is None:
        pressure_update_ds = 0.05
    # work arrays reused every step (the loop body allocates as little as possible)
    lw, lo, lt, fcell, change = (np.empty(n) for _ in range(5))
    face_fw = np.empty(fl.size)
    producers = np.flatnonzero(qneg)
    q_producers = qneg[producers]
    tiny = np.finfo(float).tiny
    dt_stable = None  # stability step of the held total flux (no capillarity), reused while held
    while t < end and steps < max_steps:
        krw, kro = relperm.kr(sw)
        np.divide(krw, mu_w, out=lw)
        np.divide(kro, mu_o, out=lo)
        if has_extra:
            extra = gz if capillary is None else gz + capillary_scale * (
                (pc := capillary.pc(sw))[fl] - pc[fr])
        np.add(lw, lo, out=lt)
        np.maximum(lt, tiny, out=lt)  # where λt = 0, λw = 0 too and fw = 0
        np.divide(lw, lt, out=fcell)
        if sw_solved is None or has_extra:
            lagged = False
        elif fixed_flux:
            lagged = True
        else:
            np.subtract(sw, sw_solved, out=change)
            lagged = float(np.max(np.abs(change, out=change))) < pressure_update_ds
        if lagged:
            # total flux held from the last pressure solve; water takes its upstream share
            fcell.take(idx_o, out=face_fw)
            fw_flux = np.multiply(face_fw, ft_flux, out=face_fw)
        else:
            sw_solved = sw.copy()
            dt_stable = None
            for _ in range(_MAX_UPSTREAM_ITERATIONS):
                lwf = lw.take(idx_w)
                lof = lo.take(idx_o)
                # A face whose upstream cells hold neither phase mobile carries no flow; the floor
                # (1e-12 of the largest mobility) only keeps the pressure matrix connected.
                w = trans * np.maximum(lwf + lof, lam_floor)
                rhs = q + div(trans * lwf * extra) if has_extra else q
                p = solver.solve(w, rhs)
                dp = p.take(fl) - p.take(fr)
                if has_extra:
                    dpw = dp - extra
                    tol = 1e-12 * (np.max(np.abs(dp)) + np.max(np.abs(extra)) + 1e-300)
                    new_o = np.where(np.abs(dp) > tol, dp > 0, up_o)
                    new_w = np.where(np.abs(dpw) > tol, dpw > 0, up_w)
                else:
                    dpw = dp
                    new_o = new_w = dp >= 0
                    if np.array_equal(new_o, up_o):
                        break
                if has_extra and np.array_equal(new_o, up_o) and np.array_equal(new_w, up_w):
                    break
                up_o, up_w = new_o, new_w
                idx_o = np.where(up_o, fl, fr)
                idx_w = np.where(up_w, fl, fr)
            fw_flux = trans * lwf * dpw
            ft_flux = fw_flux + trans * lof * dp
        if dt_stable is None or capillary is not None:
            out = (np.bincount(fl, np.maximum(ft_flux, 0.0), n) - np.bincount(fr, np.minimum(ft_flux, 0.0), n)
                   - qneg)
            rate = out * fmax + static_rate
            if capillary is not None:
                # Local capillary bound: diffusion T h |dPc/dSw| (both neighbours) and the mobility
                # derivative times the capillary pressure difference, h = λw,up λo,up/(λw,up + λo,up).
                dpc = np.abs(capillary.dpc(sw)) * capillary_scale
                h = lwf * lof / np.maximum(lwf + lof, lam_floor)
                cap = trans * (2.0 * h * np.maximum(dpc[fl], dpc[fr]) + np.abs(extra - gz) * gmax)
                rate = rate + touch(cap)
            dt_stable = cfl / float(np.max(rate / pv))
        dt = dt_stable
        landing = log.next_report()
        if t + dt >= landing * (1 - 1e-12):
            dt = landing - t
        if t + dt > end_time:
            dt = end_time - t
        # Sw += Δt (qinj + qprod fw - div Fw) / Vp, in place; then kept within [0, 1]
        change = np.multiply(qneg, fcell, out=change)
        change += qinj
        outflow = np.bincount(fl, fw_flux, n)
        outflow -= np.bincount(fr, fw_flux, n)
        change -= outflow
        change *= dt
        change /= pv
        sw += change
        np.maximum(sw, 0.0, out=sw)
        np.minimum(sw, 1.0, out=sw)
        t += dt
        steps += 1
        rate_w = -float(q_producers @ fcell.take(producers))
        cum_w += dt * rate_w
        f_now = rate_w / total_production if total_production > 0 else np.nan
        if log.record(t, sw, cum_w, f_now):
            break
    return log.run(sw, total_injection, total_production, steps, solver.solves, t0)
