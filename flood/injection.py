"""Injection plans: constant rate or a (day, rate) schedule, and the conversion of injected volume to days.

References
----------
Common practice: a schedule gives the surface water injection rate from each listed day until the
next one (a step function); the last rate continues to the end of the forecast.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import FloodInputError


@dataclass(frozen=True)
class InjectionPlan:
    """Surface water injection rate as a step function of time.

    Parameters
    ----------
    start_days : numpy.ndarray
        Day each rate starts [day]; first 0, strictly increasing.
    rates_bwpd : numpy.ndarray
        Surface injection rate from that day on [bbl/d], >= 0; the last one > 0.
    """

    start_days: np.ndarray
    rates_bwpd: np.ndarray

    @classmethod
    def constant(cls, rate_bwpd: float, field: str = "injection.rate_bwpd") -> "InjectionPlan":
        """A constant injection rate [bbl/d] > 0."""
        if not (np.isfinite(rate_bwpd) and rate_bwpd > 0):
            raise FloodInputError(field, rate_bwpd, "an injection rate > 0 bbl/d")
        return cls(np.array([0.0]), np.array([float(rate_bwpd)]))

    @classmethod
    def from_schedule(cls, rows, field: str = "injection.schedule") -> "InjectionPlan":
        """Build from rows of (day, rate_bwpd); see the class docstring for the rules."""
        try:
            arr = np.asarray(rows, dtype=float)
        except (TypeError, ValueError):
            raise FloodInputError(field, rows, "rows of two numbers [day, rate_bwpd]") from None
        if arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 1:
            raise FloodInputError(field, rows, "at least one row of two numbers [day, rate_bwpd]")
        days, rates = arr[:, 0], arr[:, 1]
        for i in range(arr.shape[0]):
            if not np.all(np.isfinite(arr[i])):
                raise FloodInputError(f"{field}[{i}]", arr[i].tolist(), "finite numbers [day, rate_bwpd]")
        if days[0] != 0.0:
            raise FloodInputError(f"{field}[0].day", float(days[0]), "the schedule must start at day 0")
        bad = np.nonzero(np.diff(days) <= 0)[0]
        if bad.size:
            i = int(bad[0]) + 1
            raise FloodInputError(f"{field}[{i}].day", float(days[i]),
                                  f"days must increase strictly (previous row {days[i-1]:g})")
        neg = np.nonzero(rates < 0)[0]
        if neg.size:
            i = int(neg[0])
            raise FloodInputError(f"{field}[{i}].rate_bwpd", float(rates[i]), "a rate >= 0 bbl/d")
        if rates[-1] <= 0:
            raise FloodInputError(f"{field}[{len(rates)-1}].rate_bwpd", float(rates[-1]),
                                  "the last rate must be > 0 bbl/d (it continues to the end of the forecast)")
        return cls(days.copy(), rates.copy())

    def _knots(self):
        """Cumulative injected volume at each rate change [bbl]."""
        cum = np.concatenate(([0.0], np.cumsum(np.diff(self.start_days) * self.rates_bwpd[:-1])))
        return self.start_days, cum

    def rate(self, days):
        """Surface injection rate at ``days`` [bbl/d] (the rate in force from that day)."""
        i = np.searchsorted(self.start_days, np.asarray(days, dtype=float), side="right") - 1
        return self.rates_bwpd[np.clip(i, 0, None)]

    def cumulative(self, days):
        """Cumulative surface volume injected by ``days`` [bbl]."""
        days = np.asarray(days, dtype=float)
        t, cum = self._knots()
        i = np.clip(np.searchsorted(t, days, side="right") - 1, 0, None)
        return cum[i] + (days - t[i]) * self.rates_bwpd[i]

    def days_at_cumulative(self, volume_bbl):
        """Day by which ``volume_bbl`` [bbl, surface] has been injected (earliest such day).

        Notes
        -----
        Inverse of a piecewise-linear non-decreasing function; during a shut-in (rate 0) the
        earliest day is returned.
        """
        v = np.asarray(volume_bbl, dtype=float)
        t, cum = self._knots()
        i = np.clip(np.searchsorted(cum, v, side="left") - 1, 0, None)
        # step back over zero-rate intervals so the earliest day is returned
        r = self.rates_bwpd[i]
        with np.errstate(divide="ignore", invalid="ignore"):
            d = t[i] + np.where(r > 0, (v - cum[i]) / r, 0.0)
        return np.where(v <= 0, 0.0, d)

    def mean_rate(self) -> float:
        """Time-weighted mean rate over the listed schedule [bbl/d] (the single rate if constant)."""
        if self.start_days.size == 1:
            return float(self.rates_bwpd[0])
        span = np.diff(self.start_days)
        return float(np.sum(span * self.rates_bwpd[:-1]) / np.sum(span))
