"""Days whose demand departs from its neighbours and from its weekday pattern: likely data errors.

A meter glitch, a unit slip (kW for MW) or a typing error shows as one day far from the days
around it *and* far from the same weekday in the weeks around it. Weather and holidays move
demand too, but a hot day is close to the same weekday of a hot week, and a holiday stays within
the range that holidays reach; the margin below is wide enough for both.

For each day t with demand, on the log scale (so that the margin is a ratio):

- its departure from its neighbours is ``log d_t - median(log d_{t±1}, log d_{t±2}, log d_{t±3})``;
- its departure from its weekday pattern is ``log d_t - median(log d_{t±7}, log d_{t±14},
  log d_{t±21})``.

Each departure is measured against its own robust spread over the whole history (1.4826 times the
median absolute deviation, the normal-consistent scale of Hampel, 1974). A day is flagged when
both departures have the same sign and both exceed :data:`ROBUST_MARGIN` spreads and the smaller
is beyond :data:`MIN_RATIO` (a ratio no weather or holiday effect is mistaken for).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd

#: Normal-consistent scale factor of the median absolute deviation (Hampel, 1974).
MAD_TO_SD = 1.4826

#: Robust spreads a day must depart by, from both references, to be flagged (our choice: far in
#: the tail of any plausible demand distribution).
ROBUST_MARGIN = 6.0

#: Smallest ratio to both references that is flagged: 1.6 times, or 1/1.6 (our choice; holidays
#: and single hot or cold days stay well inside it).
MIN_RATIO = 1.6

#: Neighbouring days and weeks compared, and the fewest of each a day needs to be judged.
NEIGHBOUR_DAYS = (1, 2, 3)
NEIGHBOUR_WEEKS = (7, 14, 21)
MIN_REFERENCES = 3


@dataclass(frozen=True)
class Outlier:
    """A flagged day: its date, its demand and the typical demand around it (same unit)."""

    date: pd.Timestamp
    demand: float
    typical: float

    @property
    def ratio(self) -> float:
        """Demand over the typical demand around it."""
        return self.demand / self.typical


def _reference(logs: pd.Series, lags: tuple[int, ...]) -> pd.Series:
    shifted = [logs.shift(k) for k in lags] + [logs.shift(-k) for k in lags]
    stack = np.column_stack([s.to_numpy() for s in shifted])
    count = np.isfinite(stack).sum(axis=1)
    with warnings.catch_warnings():  # all-NaN rows give NaN, which is what is wanted
        warnings.simplefilter("ignore", RuntimeWarning)
        median = np.nanmedian(stack, axis=1)
    median[count < MIN_REFERENCES] = np.nan
    return pd.Series(median, index=logs.index)


def _spread(departure: pd.Series) -> float:
    values = departure.to_numpy()
    values = values[np.isfinite(values)]
    if len(values) < 10:
        return float("nan")
    return float(MAD_TO_SD * np.median(np.abs(values - np.median(values))))


def find_outliers(demand: pd.Series) -> list[Outlier]:
    """The days of a complete daily demand series (NaN = missing) that look like data errors.

    Parameters
    ----------
    demand : pandas.Series
        Daily demand on a complete daily ``DatetimeIndex`` (positive values, NaN where missing).

    Returns
    -------
    list of Outlier
        In date order.
    """
    values = demand.to_numpy(dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        logs = pd.Series(np.where(values > 0, np.log(values), np.nan), index=demand.index)
    near = logs - _reference(logs, NEIGHBOUR_DAYS)
    weekly_ref = _reference(logs, NEIGHBOUR_WEEKS)
    weekly = logs - weekly_ref
    near_sd, weekly_sd = _spread(near), _spread(weekly)
    if not (np.isfinite(near_sd) and np.isfinite(weekly_sd)) or min(near_sd, weekly_sd) <= 0:
        return []
    floor = np.log(MIN_RATIO)
    same_sign = np.sign(near) == np.sign(weekly)
    far = (
        (near.abs() > ROBUST_MARGIN * near_sd)
        & (weekly.abs() > ROBUST_MARGIN * weekly_sd)
        & (np.minimum(near.abs(), weekly.abs()) > floor)
        & same_sign
    )
    return [
        Outlier(pd.Timestamp(day), float(demand[day]), float(np.exp(weekly_ref[day])))
        for day in demand.index[far.fillna(False).to_numpy(dtype=bool)]
    ]
