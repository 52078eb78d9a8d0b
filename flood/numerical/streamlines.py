"""Streamlines and time of flight on a steady two-point-flux velocity field (Pollock's method).

Inside each cell the velocity component along x varies linearly between the two x-faces (and
likewise along y), which is exact for the two-point fluxes and lets a streamline be followed
cell by cell in closed form: in a cell, x(t) = x_w + (u(x0) e^{A t} - u_w)/A with
A = (u_e - u_w)/Δx, and the exit time through the east face is ln(u_e/u(x0))/A.

Streamlines start on the outflow faces of the cells holding injectors, spaced evenly in flux (the
normal velocity is uniform on a face), so every streamline carries the same share of the rate;
they end on entering a producer cell. The residence time in the injector and producer cells is
taken as that cell's pore volume over its through-flow.

References
----------
Pollock, D.W., 1988, Semianalytical computation of path lines for finite-difference models,
Ground Water 26(6), 743-750. Datta-Gupta, A. & King, M.J., 2007, Streamline Simulation: Theory
and Practice, SPE Textbook Series 11, Ch. 3 (time of flight; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import ndimage

from ..errors import FloodInputError
from .grid import CartesianGrid

_TINY = 1e-14


@dataclass(frozen=True)
class StreamlineSet:
    """Streamlines of a steady flow field.

    Attributes
    ----------
    time_of_flight : numpy.ndarray
        Time from injector to producer along each streamline [time unit]; inf if it never
        reached a producer.
    flux : numpy.ndarray
        Rate carried by each streamline [volume/time].
    start_x, start_y : numpy.ndarray
        Launch points [length].
    cell_arrival : numpy.ndarray or None
        Per cell, the earliest time a streamline reaches the middle of its path through the cell
        (``record_cells=True``); cells no streamline crossed take the value of the nearest crossed
        cell. None when not recorded [time unit].
    """

    time_of_flight: np.ndarray
    flux: np.ndarray
    start_x: np.ndarray
    start_y: np.ndarray
    cell_arrival: np.ndarray | None = None


def face_fluxes(grid: CartesianGrid, flux: np.ndarray):
    """Rates across the four faces of every cell, positive in +x / +y.

    Parameters
    ----------
    grid : CartesianGrid
    flux : numpy.ndarray
        Rate across each interior face, left -> right cell [volume/time].

    Returns
    -------
    west, east, south, north : numpy.ndarray, each of shape (ny, nx)
        Zero on the outer (closed) boundary [volume/time].
    """
    if grid.stencil != 5:
        raise FloodInputError("grid.stencil", grid.stencil, "5 (streamlines trace face fluxes only)")
    nx, ny = grid.nx, grid.ny
    fx = flux[: grid.faces_x].reshape(ny, nx - 1)
    fy = flux[grid.faces_x:].reshape(ny - 1, nx)
    west = np.zeros((ny, nx))
    east = np.zeros((ny, nx))
    south = np.zeros((ny, nx))
    north = np.zeros((ny, nx))
    east[:, :-1] = fx
    west[:, 1:] = fx
    north[:-1, :] = fy
    south[1:, :] = fy
    return west, east, south, north


def trace_streamlines(grid: CartesianGrid, flux: np.ndarray, well_rates: np.ndarray,
                      lines: int = 2000, max_cells: int | None = None,
                      record_cells: bool = False) -> StreamlineSet:
    """Trace streamlines from the injector cells to the producer cells.

    Parameters
    ----------
    grid : CartesianGrid
    flux : numpy.ndarray
        Steady rate across each interior face, left -> right [volume/time].
    well_rates : numpy.ndarray
        Rate per cell, > 0 injection, < 0 production [volume/time].
    lines : int
        About how many streamlines to launch [-].
    max_cells : int, optional
        Safety limit on cells crossed per streamline (default 20 (nx + ny)).
    record_cells : bool
        Also record each cell's front arrival time (``cell_arrival``): the swept region at time
        t is the set of cells with arrival <= t (exact for a piston front at unit mobility ratio).

    Returns
    -------
    StreamlineSet

    Notes
    -----
    Pollock (1988) tracing. Time of flight uses the interstitial velocity (rate / (face area x
    porosity)); the sum over streamlines of flux x time of flight equals the swept pore volume,
    which at complete sweep is the total pore volume (a check used in the tests).

    References
    ----------
    Pollock, D.W., 1988, Ground Water 26(6), 743-750.
    """
    nx, ny = grid.nx, grid.ny
    dx, dy = grid.dx, grid.dy
    phi = grid.porosity.reshape(ny, nx)
    west, east, south, north = face_fluxes(grid, flux)
    ax_area = dy * grid.thickness
    ay_area = dx * grid.thickness
    uw, ue = west / (ax_area * phi), east / (ax_area * phi)
    us, un = south / (ay_area * phi), north / (ay_area * phi)
    q = well_rates.reshape(ny, nx)
    pv = grid.pore_volume.reshape(ny, nx)
    # --- launch points on the outflow faces of source cells, evenly in flux
    src = np.argwhere(q > 0)
    out_faces = []  # (j, i, side, flux)
    is_src = q > 0
    steps = {"w": (0, -1), "e": (0, 1), "s": (-1, 0), "n": (1, 0)}
    for j, i in src:
        for side, f in (("w", -west[j, i]), ("e", east[j, i]), ("s", -south[j, i]), ("n", north[j, i])):
            dj, di = steps[side]
            # launch only across faces that leave the group of source cells (a well shared by
            # neighbouring cells must not be counted twice)
            if f > 0 and not is_src[j + dj, i + di]:
                out_faces.append((j, i, side, f))
    total_out = sum(f for *_, f in out_faces)
    xs, ys, cj, ci, fl, t0 = [], [], [], [], [], []
    for j, i, side, f in out_faces:
        k = max(1, int(round(lines * f / total_out)))
        s = (np.arange(k) + 0.5) / k
        x0, y0 = i * dx, j * dy
        if side in ("w", "e"):
            px = np.full(k, x0 if side == "w" else x0 + dx)
            py = y0 + s * dy
        else:
            px = x0 + s * dx
            py = np.full(k, y0 if side == "s" else y0 + dy)
        through = max(east[j, i], 0) + max(-west[j, i], 0) + max(north[j, i], 0) + max(-south[j, i], 0)
        xs.append(px)
        ys.append(py)
        # step into the neighbour across that face
        dj, di = steps[side]
        cj.append(np.full(k, j + dj))
        ci.append(np.full(k, i + di))
        fl.append(np.full(k, f / k))
        t0.append(np.full(k, pv[j, i] / through))
    x = np.concatenate(xs)
    y = np.concatenate(ys)
    j = np.concatenate(cj).astype(int)
    i = np.concatenate(ci).astype(int)
    line_flux = np.concatenate(fl)
    tof = np.concatenate(t0)
    sx, sy = x.copy(), y.copy()
    arrival = np.full(nx * ny, np.inf)
    if record_cells:
        arrival[(q > 0).ravel()] = 0.0
    active = np.ones(x.size, dtype=bool)
    done = np.zeros(x.size, dtype=bool)
    limit = max_cells or 20 * (nx + ny)
    for _ in range(limit):
        idx = np.nonzero(active)[0]
        if idx.size == 0:
            break
        jj, ii = j[idx], i[idx]
        # producer cell reached: add its residence time and stop
        sink = q[jj, ii] < 0
        if np.any(sink):
            k = idx[sink]
            inflow = (np.maximum(west, 0) + np.maximum(-east, 0) + np.maximum(south, 0)
                      + np.maximum(-north, 0))[j[k], i[k]]
            if record_cells:
                np.minimum.at(arrival, j[k] * nx + i[k], tof[k])
            tof[k] += pv[j[k], i[k]] / np.maximum(inflow, _TINY)
            done[k] = True
            active[k] = False
            idx = idx[~sink]
            jj, ii = j[idx], i[idx]
        if idx.size == 0:
            break
        xw, ys_ = ii * dx, jj * dy
        a_x = (ue[jj, ii] - uw[jj, ii]) / dx
        a_y = (un[jj, ii] - us[jj, ii]) / dy
        ux0 = uw[jj, ii] + a_x * (x[idx] - xw)
        uy0 = us[jj, ii] + a_y * (y[idx] - ys_)
        tx = _axis_time(ux0, uw[jj, ii], ue[jj, ii], a_x, x[idx] - xw, dx)
        ty = _axis_time(uy0, us[jj, ii], un[jj, ii], a_y, y[idx] - ys_, dy)
        dt = np.minimum(tx, ty)
        stuck = ~np.isfinite(dt)
        if np.any(stuck):
            active[idx[stuck]] = False
            tof[idx[stuck]] = np.inf
        go = ~stuck
        idx, dt = idx[go], dt[go]
        jj, ii, a_x, a_y, ux0, uy0 = jj[go], ii[go], a_x[go], a_y[go], ux0[go], uy0[go]
        xw, ys_ = xw[go], ys_[go]
        if record_cells:
            np.minimum.at(arrival, jj * nx + ii, tof[idx] + 0.5 * dt)
        tof[idx] += dt
        xnew = _advance(x[idx], xw, ux0, uw[jj, ii], a_x, dt)
        ynew = _advance(y[idx], ys_, uy0, us[jj, ii], a_y, dt)
        exit_x = tx[go] <= ty[go]
        # snap the exit coordinate to the face and move to the neighbour cell
        east_exit = exit_x & (ux0 > 0)
        west_exit = exit_x & (ux0 < 0)
        north_exit = ~exit_x & (uy0 > 0)
        south_exit = ~exit_x & (uy0 < 0)
        xnew = np.where(east_exit, xw + dx, np.where(west_exit, xw, np.clip(xnew, xw, xw + dx)))
        ynew = np.where(north_exit, ys_ + dy, np.where(south_exit, ys_, np.clip(ynew, ys_, ys_ + dy)))
        x[idx], y[idx] = xnew, ynew
        i[idx] = ii + east_exit - west_exit
        j[idx] = jj + north_exit - south_exit
        out = (i[idx] < 0) | (i[idx] >= nx) | (j[idx] < 0) | (j[idx] >= ny)
        if np.any(out):  # cannot happen with closed boundaries; guard against round-off
            active[idx[out]] = False
            tof[idx[out]] = np.inf
            i[idx[out]] = np.clip(i[idx[out]], 0, nx - 1)
            j[idx[out]] = np.clip(j[idx[out]], 0, ny - 1)
    tof[active] = np.inf
    cell_arrival = None
    if record_cells:
        missed = ~np.isfinite(arrival).reshape(ny, nx)
        if missed.all():
            cell_arrival = arrival
        else:  # nearest crossed cell (scipy.ndimage Euclidean distance transform)
            nearest = ndimage.distance_transform_edt(missed, sampling=(dy, dx), return_distances=False,
                                                     return_indices=True)
            cell_arrival = arrival.reshape(ny, nx)[nearest[0], nearest[1]].ravel()
    return StreamlineSet(time_of_flight=tof, flux=line_flux, start_x=sx, start_y=sy, cell_arrival=cell_arrival)


def _axis_time(u0, ulo, uhi, a, offset, size):
    """Exit time along one axis (Pollock): inf when the streamline does not leave on this axis.

    t = ln(u_exit/u0)/a with u_exit = u0 + a dist, written as log1p(a dist/u0)/a so that it stays
    accurate as a -> 0 (limit dist/u0).
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        pos = (u0 > _TINY) & (uhi > _TINY)
        neg = (u0 < -_TINY) & (ulo < -_TINY)
        base = np.where(pos | neg, u0, 1.0)
        dist = np.where(pos, size - offset, -offset)
        z = a * dist / base
        small = np.abs(z) < 1e-12
        t = np.where(small, dist / base, np.log1p(np.maximum(z, -1.0 + 1e-300)) / np.where(small, 1.0, a))
        return np.where(pos | neg, np.maximum(t, 0.0), np.inf)


def _advance(pos, lo, u0, ulo, a, dt):
    """Position after ``dt`` inside the cell along one axis (linear velocity, Pollock).

    x = x0 + u0 (exp(a dt) - 1)/a, with expm1 so that it stays accurate as a -> 0 (limit u0 dt).
    """
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        adt = a * dt
        small = np.abs(adt) < 1e-12
        return pos + u0 * np.where(small, dt, np.expm1(adt) / np.where(small, 1.0, a))
