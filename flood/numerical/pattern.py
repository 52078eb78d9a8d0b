"""Symmetry elements of repeated, homogeneous, confined well patterns.

A repeated pattern of wells in a homogeneous, infinite (or confined by no-flow lines) reservoir
can be cut along its mirror lines into identical rectangles across which no fluid flows. One such
rectangle, the symmetry element, holds fractions of wells on its corners and edges (a quarter of
a well at a corner, half a well on an edge). Solving on the element gives the whole pattern.

Elements here are in dimensionless lengths (the distance unit is the spacing ``a`` between like
wells in a row, or the five-spot half-side), with injection normalised to 1 per element.

* five_spot: square element, injector and producer at opposite corners.
* direct_line (d/a): injector rows facing producer rows; element d x a/2, injector and producer at
  the two ends of one long side.
* staggered_line (d/a): producer rows shifted by a/2; element d x a/2, wells at opposite corners
  (d/a = 1/2 is the five-spot).
* seven_spot: wells on a triangular lattice of side a, one third producers; element
  (√3/2) a x (3/2) a with a quarter producer at two opposite corners and half injectors on the two
  long sides (inverting injectors and producers gives the same sweep at M = 1).
* nine_spot: square element with the injector at one corner, a quarter corner producer at the
  opposite corner and half side producers at the other two corners; corner-to-side producing
  rate ratio R (default 1, equal well rates).

References
----------
Muskat, M., 1946, The Flow of Homogeneous Fluids through Porous Media, J.W. Edwards (Ch. 9,
pattern geometries; from memory). Craig, F.F., 1971, The Reservoir Engineering Aspects of
Waterflooding, SPE Monograph 3, Ch. 5 (pattern definitions, d/a; from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import FloodInputError
from .grid import CartesianGrid

#: Pattern names accepted everywhere (command line, dashboard, functions).
PATTERNS = ("five_spot", "direct_line", "staggered_line", "seven_spot", "nine_spot")

#: Valid range of d/a for the line drives (inclusive).
D_OVER_A_RANGE = (0.25, 10.0)


@dataclass(frozen=True)
class Well:
    """A well (or the fraction of a well) in a symmetry element.

    Attributes
    ----------
    x, y : float
        Position [dimensionless length].
    rate : float
        Share of the element's injection, > 0 injector, < 0 producer [-]; injectors sum to 1
        and producers to -1.
    name : str
        Label, e.g. "injector" or "side producer".
    """

    x: float
    y: float
    rate: float
    name: str


@dataclass(frozen=True)
class PatternElement:
    """The symmetry element of a pattern: a rectangle with wells on its corners and edges.

    Attributes
    ----------
    pattern : str
        One of :data:`PATTERNS`.
    length_x, length_y : float
        Element size [dimensionless length].
    wells : tuple of Well
        Wells (fractions) in the element.
    d_over_a : float or None
        d/a for the line drives, None otherwise [-].
    """

    pattern: str
    length_x: float
    length_y: float
    wells: tuple
    d_over_a: float | None = None

    def grid(self, cells: int, stencil: int = 5) -> CartesianGrid:
        """A grid of about ``cells`` cells along the longer side, cells close to square.

        Parameters
        ----------
        cells : int
            Cells along the longer side, 4..2000 [-].
        stencil : int
            5 or 9 connections per cell (see :class:`CartesianGrid`).
        """
        if not (isinstance(cells, (int, np.integer)) and 4 <= cells <= 2000):
            raise FloodInputError("cells", cells, "a whole number 4 <= cells <= 2000 (along the longer side)")
        longer = max(self.length_x, self.length_y)
        nx = max(2, int(round(cells * self.length_x / longer)))
        ny = max(2, int(round(cells * self.length_y / longer)))
        return CartesianGrid(nx, ny, self.length_x / nx, self.length_y / ny, stencil=stencil)

    def well_rates(self, grid: CartesianGrid) -> np.ndarray:
        """Rate per cell of the element's wells on ``grid`` (point sources shared by bilinear weights)."""
        q = np.zeros(grid.cells)
        for w in self.wells:
            cells, weights = grid.point_weights(w.x, w.y)
            np.add.at(q, cells, w.rate * weights)
        return q

    @property
    def area(self) -> float:
        """Element area [dimensionless length²]."""
        return self.length_x * self.length_y


def pattern_element(pattern: str, d_over_a: float = 1.0, rate_ratio: float = 1.0) -> PatternElement:
    """Build the symmetry element of a repeated pattern.

    Parameters
    ----------
    pattern : str
        One of :data:`PATTERNS`.
    d_over_a : float
        Distance between injector and producer rows over the spacing of like wells in a row, for
        ``direct_line`` and ``staggered_line`` [-], 0.25..10.
    rate_ratio : float
        Nine-spot only: producing rate of a corner producer over that of a side producer [-],
        0.05..20.

    Returns
    -------
    PatternElement

    Raises
    ------
    FloodInputError
        Unknown pattern, d/a or rate ratio out of range.

    References
    ----------
    Craig, 1971, SPE Monograph 3, Ch. 5 (from memory).

    Examples
    --------
    >>> e = pattern_element("staggered_line", d_over_a=0.5)
    >>> e.length_x, e.length_y, [w.rate for w in e.wells]
    (1.0, 1.0, [1.0, -1.0])
    """
    if pattern not in PATTERNS:
        raise FloodInputError("pattern", pattern, "one of " + ", ".join(PATTERNS))
    if pattern in ("direct_line", "staggered_line"):
        if not (np.isfinite(d_over_a) and D_OVER_A_RANGE[0] <= d_over_a <= D_OVER_A_RANGE[1]):
            raise FloodInputError("d_over_a", d_over_a, f"{D_OVER_A_RANGE[0]:g} <= d/a <= {D_OVER_A_RANGE[1]:g}")
    if pattern == "five_spot":
        return PatternElement(pattern, 1.0, 1.0, (Well(0.0, 0.0, 1.0, "injector"),
                                                 Well(1.0, 1.0, -1.0, "producer")))
    if pattern in ("direct_line", "staggered_line"):
        a = 2.0  # element half-width a/2 = 1
        d = d_over_a * a
        y_prod = 0.0 if pattern == "direct_line" else 1.0
        return PatternElement(pattern, d, 1.0, (Well(0.0, 0.0, 1.0, "injector"),
                                               Well(d, y_prod, -1.0, "producer")), float(d_over_a))
    if pattern == "seven_spot":
        w = math.sqrt(3.0) / 2.0
        return PatternElement(pattern, w, 1.5, (
            Well(0.0, 1.0, 0.5, "injector (half)"), Well(w, 0.5, 0.5, "injector (half)"),
            Well(0.0, 0.0, -0.5, "producer (quarter)"), Well(w, 1.5, -0.5, "producer (quarter)")))
    if not (np.isfinite(rate_ratio) and 0.05 <= rate_ratio <= 20):
        raise FloodInputError("rate_ratio", rate_ratio, "0.05 <= corner/side producing rate ratio <= 20")
    # Element production: corner q_c/4 + two side halves q_s/2 each = 1, q_c = R q_s.
    q_s = 1.0 / (rate_ratio / 4.0 + 1.0)
    q_c = rate_ratio * q_s
    return PatternElement(pattern, 1.0, 1.0, (
        Well(0.0, 0.0, 1.0, "injector"), Well(1.0, 1.0, -q_c / 4.0, "corner producer"),
        Well(1.0, 0.0, -q_s / 2.0, "side producer"), Well(0.0, 1.0, -q_s / 2.0, "side producer")))
