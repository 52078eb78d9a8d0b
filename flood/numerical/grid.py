"""Uniform Cartesian finite-volume grids with two-point transmissibilities.

A grid is ``nx`` by ``ny`` rectangular cells of size ``dx`` by ``dy`` and thickness ``thickness``;
a 1D grid is simply ``ny = 1``. Cells are numbered row by row, ``cell = j * nx + i``. Every interior
face joins a "left" cell and a "right" cell (lower and higher index); outer faces are closed (no
flow), so wells are the only sources and sinks.

References
----------
Aziz, K. & Settari, A., 1979. Petroleum Reservoir Simulation, Applied Science, Ch. 5
(block-centred grids, harmonic averaging of permeability in the two-point transmissibility).
Yanosik, J.L. & McCracken, T.A., 1979, A nine-point, finite-difference reservoir simulator for
realistic prediction of adverse mobility ratio displacements, SPE J. 19(4), 253-262 (nine-point
connections against the grid-orientation effect; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import FloodInputError


@dataclass(frozen=True)
class CartesianGrid:
    """A uniform block-centred Cartesian grid.

    Parameters
    ----------
    nx, ny : int
        Cells along x and y (ny = 1 for a 1D grid) [-].
    dx, dy : float
        Cell sizes [length unit, e.g. ft], > 0.
    thickness : float
        Cell thickness (the third dimension) [length unit], > 0.
    permeability : float or numpy.ndarray
        Absolute permeability, scalar or one value per cell [permeability unit, e.g. md], > 0.
    porosity : float or numpy.ndarray
        Porosity, scalar or one value per cell [fraction], 0 < porosity <= 1.
    darcy_constant : float
        Constant c of Darcy's law q = c k A Δp/(μ L) in the chosen units (1 for consistent
        units, 0.001127 for field units) [-].
    stencil : int
        5 (two-point connections across the cell faces only, the default) or 9 (also the four
        diagonal neighbours, for 2D grids; reduces the grid-orientation effect of adverse
        mobility ratios).

    Notes
    -----
    The two-point transmissibility of the face between cells a and b (distance Δ apart, face
    area A) is T = c A / (Δ/2/k_a + Δ/2/k_b), the harmonic mean of the two half-cell conductances
    (Aziz & Settari 1979, Ch. 5).

    The nine-point option keeps the same list-of-connections form: with g = (dx/dy + dy/dx)/12
    each diagonal pair gets T_d = c H k g and each face pair T = c H k (A/Δ/H - 2 g), the
    compact nine-point ("Mehrstellen") Laplacian, which for square cells is the 2/3 axial, 1/6
    diagonal split of Yanosik & McCracken (1979). Both reproduce a linear pressure field exactly
    (Taylor expansion, common practice). The outer faces are mirror (no-flow) lines, so a
    diagonal neighbour beyond one is the mirror image of a face neighbour: its weight g is added
    to the face connections that run along the boundary. Permeability on a diagonal pair is the
    harmonic mean of the two cells (an approximation for heterogeneous grids). Nine-point needs
    0.45 < dx/dy < 2.2 so that every weight stays positive.

    References
    ----------
    Aziz, K. & Settari, A., 1979, Petroleum Reservoir Simulation, Ch. 5. Yanosik & McCracken,
    1979, SPE J. 19(4) (from memory).

    Examples
    --------
    >>> g = CartesianGrid(4, 1, 0.25, 1.0)
    >>> g.cells, g.face_left.tolist(), g.transmissibility.tolist()
    (4, [0, 1, 2], [4.0, 4.0, 4.0])
    """

    nx: int
    ny: int
    dx: float
    dy: float
    thickness: float = 1.0
    permeability: object = 1.0
    porosity: object = 1.0
    darcy_constant: float = 1.0
    stencil: int = 5
    face_left: np.ndarray = field(init=False, repr=False, compare=False)
    face_right: np.ndarray = field(init=False, repr=False, compare=False)
    transmissibility: np.ndarray = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        for name in ("nx", "ny"):
            v = getattr(self, name)
            if not (isinstance(v, (int, np.integer)) and 1 <= v <= 4_000_000):
                raise FloodInputError(f"grid.{name}", v, "a whole number of cells >= 1")
        for name in ("dx", "dy", "thickness", "darcy_constant"):
            v = getattr(self, name)
            if not (np.isfinite(v) and v > 0):
                raise FloodInputError(f"grid.{name}", v, "a size > 0")
        if self.stencil not in (5, 9):
            raise FloodInputError("grid.stencil", self.stencil, "5 or 9 (connections per cell)")
        if self.stencil == 9 and not (0.45 < self.dx / self.dy < 2.2):
            raise FloodInputError("grid.stencil", f"9 with dx/dy = {self.dx / self.dy:.3g}",
                                  "0.45 < dx/dy < 2.2 for the nine-point stencil", "weights must stay positive")
        n = self.nx * self.ny
        k = np.broadcast_to(np.asarray(self.permeability, dtype=float), (n,)).copy()
        phi = np.broadcast_to(np.asarray(self.porosity, dtype=float), (n,)).copy()
        if not np.all(np.isfinite(k) & (k > 0)):
            raise FloodInputError("grid.permeability", float(np.min(k)), "permeability > 0 in every cell")
        if not np.all(np.isfinite(phi) & (phi > 0) & (phi <= 1)):
            raise FloodInputError("grid.porosity", float(np.min(phi)), "0 < porosity <= 1 in every cell")
        object.__setattr__(self, "permeability", k)
        object.__setattr__(self, "porosity", phi)
        idx = np.arange(n).reshape(self.ny, self.nx)
        xl, xr = idx[:, :-1].ravel(), idx[:, 1:].ravel()
        yl, yr = idx[:-1, :].ravel(), idx[1:, :].ravel()
        left = np.concatenate((xl, yl))
        right = np.concatenate((xr, yr))
        area = np.concatenate((np.full(xl.size, self.dy * self.thickness),
                               np.full(yl.size, self.dx * self.thickness)))
        dist = np.concatenate((np.full(xl.size, self.dx), np.full(yl.size, self.dy)))
        trans = self.darcy_constant * area / (0.5 * dist / k[left] + 0.5 * dist / k[right])
        if self.stencil == 9 and self.nx > 1 and self.ny > 1:
            g = (self.dx / self.dy + self.dy / self.dx) / 12.0
            kh = 2.0 / (1.0 / k[left] + 1.0 / k[right])  # harmonic mean, as in the face T
            base = self.darcy_constant * self.thickness * kh
            # along a boundary row (x faces) or column (y faces) the mirrored diagonal adds g
            on_edge = np.concatenate(((np.arange(self.ny)[:, None] * np.ones(self.nx - 1)).ravel() % (self.ny - 1) == 0,
                                      (np.ones(self.ny - 1)[:, None] * np.arange(self.nx)).ravel() % (self.nx - 1) == 0))
            trans = trans - base * g * np.where(on_edge, 1.0, 2.0)
            d1l, d1r = idx[:-1, :-1].ravel(), idx[1:, 1:].ravel()  # (i, j) - (i+1, j+1)
            d2l, d2r = idx[:-1, 1:].ravel(), idx[1:, :-1].ravel()  # (i+1, j) - (i, j+1)
            dl, dr = np.concatenate((d1l, d2l)), np.concatenate((d1r, d2r))
            td = self.darcy_constant * self.thickness * g * 2.0 / (1.0 / k[dl] + 1.0 / k[dr])
            left, right = np.concatenate((left, dl)), np.concatenate((right, dr))
            trans = np.concatenate((trans, td))
        object.__setattr__(self, "face_left", left)
        object.__setattr__(self, "face_right", right)
        object.__setattr__(self, "transmissibility", trans)

    @property
    def cells(self) -> int:
        """Number of cells [-]."""
        return self.nx * self.ny

    @property
    def faces_x(self) -> int:
        """Number of interior faces normal to x (they come first in the face arrays) [-]."""
        return (self.nx - 1) * self.ny

    @property
    def cell_volume(self) -> float:
        """Bulk volume of one cell [length³]."""
        return self.dx * self.dy * self.thickness

    @property
    def pore_volume(self) -> np.ndarray:
        """Pore volume of each cell [length³]."""
        return self.porosity * self.cell_volume

    @property
    def length_x(self) -> float:
        """Extent along x [length]."""
        return self.nx * self.dx

    @property
    def length_y(self) -> float:
        """Extent along y [length]."""
        return self.ny * self.dy

    def cell_centers(self):
        """Cell-centre coordinates (x, y), each of shape ``(cells,)`` [length]."""
        x = (np.arange(self.nx) + 0.5) * self.dx
        y = (np.arange(self.ny) + 0.5) * self.dy
        xx, yy = np.meshgrid(x, y)
        return xx.ravel(), yy.ravel()

    def point_weights(self, x, y):
        """Share a point source among the cells around it (bilinear weights on cell centres).

        A point at a cell centre goes wholly to that cell; a point on a face or corner between
        cells is split equally; points beyond the outermost centres are clamped to them, so a well
        at a corner of the grid goes to the corner cell.

        Parameters
        ----------
        x, y : float
            Point coordinates [length], inside the grid.

        Returns
        -------
        cells : numpy.ndarray of int
        weights : numpy.ndarray of float
            Summing to 1.
        """
        if not (-1e-9 <= x <= self.length_x * (1 + 1e-9) and -1e-9 <= y <= self.length_y * (1 + 1e-9)):
            raise FloodInputError("well.position", (x, y), f"inside the grid 0..{self.length_x:g} x 0..{self.length_y:g}")
        fi = np.clip(x / self.dx - 0.5, 0.0, self.nx - 1.0)
        fj = np.clip(y / self.dy - 0.5, 0.0, self.ny - 1.0)
        i0, j0 = int(np.floor(fi)), int(np.floor(fj))
        i1, j1 = min(i0 + 1, self.nx - 1), min(j0 + 1, self.ny - 1)
        ti, tj = fi - i0, fj - j0
        cells = np.array([j0 * self.nx + i0, j0 * self.nx + i1, j1 * self.nx + i0, j1 * self.nx + i1])
        w = np.array([(1 - ti) * (1 - tj), ti * (1 - tj), (1 - ti) * tj, ti * tj])
        out = np.zeros(self.cells)
        np.add.at(out, cells, w)
        keep = np.nonzero(out > 1e-12)[0]
        return keep, out[keep] / out[keep].sum()
