"""Finite-volume grid connections and the pressure solver.

Checks: a linear pressure field is reproduced exactly by both stencils (Taylor expansion of the
two-point and compact nine-point differences, common practice), the flux of a uniform field equals
Darcy's law (q = k A Δp / (μ L), Darcy 1856), and the pressure solve agrees with scipy's direct
sparse solver.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
import scipy.sparse as sp
from scipy.sparse.linalg import spsolve

from flood.errors import FloodInputError
from flood.numerical.grid import CartesianGrid
from flood.numerical.two_phase import PressureSolver


def _net_outflow(grid, p):
    flux = grid.transmissibility * (p[grid.face_left] - p[grid.face_right])
    return np.bincount(grid.face_left, flux, grid.cells) - np.bincount(grid.face_right, flux, grid.cells)


@pytest.mark.parametrize("stencil", [5, 9])
@pytest.mark.parametrize("dx, dy", [(0.1, 0.1), (0.1, 0.07), (0.05, 0.09)])
def test_uniform_flow_along_x_is_exact(stencil, dx, dy):
    """p = -x/k (unit gradient, k = 2): every cell not on the x ends balances (closed y boundaries are
    parallel to the flow), and the rate crossing any vertical line is k A |∇p| = Ly (Darcy)."""
    g = CartesianGrid(9, 6, dx, dy, permeability=2.0, stencil=stencil)
    x, _ = g.cell_centers()
    p = -x / 2.0
    col = np.arange(g.cells) % g.nx
    assert np.max(np.abs(_net_outflow(g, p)[(col > 0) & (col < g.nx - 1)])) < 1e-13
    flux = g.transmissibility * (p[g.face_left] - p[g.face_right])
    xl, xr = x[g.face_left], x[g.face_right]
    line = 5.0 * dx  # the faces between columns 4 and 5
    crossing = np.sign(xr - xl) * ((np.minimum(xl, xr) < line) & (np.maximum(xl, xr) > line))
    assert float(np.sum(flux * crossing)) == pytest.approx(g.length_y, rel=1e-12)


@pytest.mark.parametrize("stencil", [5, 9])
def test_linear_field_balances_inside(stencil):
    g = CartesianGrid(7, 8, 0.1, 0.1, stencil=stencil)
    x, y = g.cell_centers()
    interior = ((np.arange(g.cells) % g.nx > 0) & (np.arange(g.cells) % g.nx < g.nx - 1)
                & (np.arange(g.cells) // g.nx > 0) & (np.arange(g.cells) // g.nx < g.ny - 1))
    assert np.max(np.abs(_net_outflow(g, 2.0 * x - 3.0 * y)[interior])) < 1e-13


def test_nine_point_connections():
    """Square cells: 2/3 of the face transmissibility on the faces, 1/6 on the diagonals, and the
    mirrored diagonal added back along the closed boundary (5/6) [Yanosik & McCracken 1979, from memory]."""
    g = CartesianGrid(4, 4, 1.0, 1.0, stencil=9)
    five = CartesianGrid(4, 4, 1.0, 1.0)
    assert g.transmissibility.size == five.transmissibility.size + 2 * 3 * 3
    t = dict(zip(zip(g.face_left.tolist(), g.face_right.tolist()), g.transmissibility.tolist()))
    assert t[(5, 6)] == pytest.approx(2.0 / 3.0)   # interior face
    assert t[(1, 2)] == pytest.approx(5.0 / 6.0)   # face along the bottom boundary
    assert t[(5, 10)] == pytest.approx(1.0 / 6.0)  # diagonal
    assert t[(6, 9)] == pytest.approx(1.0 / 6.0)   # the other diagonal


def test_stencil_errors():
    with pytest.raises(FloodInputError, match=r"grid.stencil = 7: 5 or 9"):
        CartesianGrid(4, 4, 1.0, 1.0, stencil=7)
    with pytest.raises(FloodInputError, match=r"0.45 < dx/dy < 2.2"):
        CartesianGrid(4, 4, 3.0, 1.0, stencil=9)


def test_pressure_solver_matches_direct_solve_when_weights_change():
    """The warm-started, factor-preconditioned conjugate gradients give the direct solution."""
    g = CartesianGrid(30, 30, 1.0, 1.0, stencil=9)
    q = np.zeros(g.cells)
    q[0], q[-1] = 1.0, -1.0
    solver = PressureSolver(g)
    rng = np.random.default_rng(3)
    w = g.transmissibility.copy()
    solver.solve(w, q)
    for _ in range(3):
        w = w * (1.0 + 0.05 * rng.random(w.size))
        p = solver.solve(w, q)
        data = np.concatenate((w, w, -w, -w))
        rows = np.concatenate((g.face_left, g.face_right, g.face_left, g.face_right))
        cols = np.concatenate((g.face_left, g.face_right, g.face_right, g.face_left))
        a = sp.csc_matrix((data, (rows, cols)), shape=(g.cells, g.cells)).tolil()
        a[0, 0] = 2.0 * a[0, 0]
        expected = spsolve(a.tocsc(), q)
        assert np.max(np.abs(p - expected)) < 1e-8 * np.max(np.abs(expected))
    assert solver.krylov_solves >= 1


@settings(max_examples=60, deadline=None)
@given(nx=st.integers(3, 12), ny=st.integers(3, 12), dx=st.floats(0.05, 2.0),
       aspect=st.floats(0.5, 2.1), gx=st.floats(-5, 5), gy=st.floats(-5, 5), k=st.floats(0.01, 1e4))
def test_nine_point_linear_fields_property(nx, ny, dx, aspect, gx, gy, k):
    """Any homogeneous grid and any linear field: every interior cell balances (consistency of the
    compact nine-point stencil, common practice)."""
    g = CartesianGrid(nx, ny, dx, dx / aspect, permeability=k, stencil=9)
    x, y = g.cell_centers()
    net = _net_outflow(g, gx * x + gy * y)
    i, j = np.arange(g.cells) % nx, np.arange(g.cells) // nx
    interior = (i > 0) & (i < nx - 1) & (j > 0) & (j < ny - 1)
    scale = k * (abs(gx) + abs(gy)) * max(g.dx, g.dy) + 1e-300
    assert np.max(np.abs(net[interior])) <= 1e-11 * scale


def test_streamlines_refuse_a_nine_point_grid():
    """Pollock tracing needs the face fluxes alone; a nine-point flux list gets a clear error."""
    from flood.numerical.streamlines import trace_streamlines

    g = CartesianGrid(6, 6, 1.0, 1.0, stencil=9)
    q = np.zeros(g.cells)
    q[0], q[-1] = 1.0, -1.0
    with pytest.raises(FloodInputError, match=r"grid.stencil = 9: 5 \(streamlines trace face fluxes only\)"):
        trace_streamlines(g, np.zeros(g.transmissibility.size), q, 20)
