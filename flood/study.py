"""One complete study of a scenario: the summary and the dated forecast table from one solution.

This is the single entry point the command line and the dashboard call for a scenario's forecast.
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from .displacement import FrontSolution, buckley_leverett
from .forecast import forecast_table, summarize


@dataclass(frozen=True)
class StudyResult:
    """Summary (dict), forecast table and the displacement solution of one case.

    ``layers`` is None for a homogeneous case; for a layered case it holds the layered result
    (see :mod:`flood.layers`).
    """

    summary: dict
    table: pd.DataFrame
    solution: FrontSolution
    layers: object = None


def run_study(case, points: int = 400) -> StudyResult:
    """Solve one case and return its summary and ``points``-row forecast table.

    Parameters
    ----------
    case : flood.scenario.FloodCase
    points : int
        Rows of the forecast table (plus the exact fill-up and breakthrough rows).

    Notes
    -----
    With ``case.layers`` set, the layered forecast of :func:`flood.layers.layered_study` is used:
    the same summary keys plus ``dykstra_parsons_v`` (and layer keys), the same table columns, and
    ``StudyResult.layers`` holds the :class:`flood.layers.LayeredResult`.

    References
    ----------
    Buckley & Leverett, 1942; Welge, 1952; Dykstra & Parsons, 1950 (layers).
    """
    sol = buckley_leverett(case.relperm, case.mu_w, case.mu_o, case.swi, case.gravity)
    if getattr(case, "layers", None) is not None:
        from .layers import layered_study

        lr = layered_study(case, points=points, solution=sol)
        return StudyResult(summary=lr.summary, table=lr.forecast, solution=sol, layers=lr)
    summary = summarize(case, solution=sol)
    table = forecast_table(case, points=points, solution=sol, end_pvi=summary["forecast_end_pvi"])
    return StudyResult(summary=summary, table=table, solution=sol)
