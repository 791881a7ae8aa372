"""Scenarios: future dates, a temperature path and (optionally) day types.

- :mod:`~loadcore.scenario.core`: :class:`Scenario`, validated once by its constructor, and
  :func:`make_scenario` (a path and day types to a Scenario);
- :mod:`~loadcore.scenario.values`: the rules a scenario must meet (one place each), among them
  :data:`MAX_DAYS`, the one length limit of scenarios and forecasts;
- :mod:`~loadcore.scenario.windows`: where a window may lie (:func:`window_limits`) and the
  quick choices of its start (:func:`window_starts`);
- :mod:`~loadcore.scenario.paths`: the path builders; :mod:`~loadcore.scenario.copies`: the
  same days of an earlier year copied into a window, by date or by weekday;
- :mod:`~loadcore.scenario.definition`: the JSON scenario definition;
- :mod:`~loadcore.scenario.csv_files`: scenario CSV files (°F only at this edge), and
  :func:`read_scenario_file`, which also takes the JSON definition.
"""

from .copies import Alignment, copy_same_days, same_days_source
from .core import Scenario, make_scenario, same_days_after
from .csv_files import read_scenario_csv, read_scenario_file, write_scenario_csv
from .definition import DEFINITION_KIND, DEFINITION_VERSION
from .paths import (
    NORMAL_WINDOW_HALF_DAYS,
    cold_snap,
    constant_path,
    copy_period,
    heat_wave,
    seasonal_normal_path,
    shift_path,
)
from .values import (
    MAX_DAYS,
    MAX_LEAD_MONTHS,
    PLAUSIBLE_MAX_C,
    PLAUSIBLE_MIN_C,
    fill_blank_day_types,
)
from .windows import WindowChoice, window_limits, window_starts

__all__ = [
    "Alignment",
    "DEFINITION_KIND",
    "DEFINITION_VERSION",
    "MAX_DAYS",
    "MAX_LEAD_MONTHS",
    "NORMAL_WINDOW_HALF_DAYS",
    "PLAUSIBLE_MAX_C",
    "PLAUSIBLE_MIN_C",
    "Scenario",
    "WindowChoice",
    "cold_snap",
    "copy_same_days",
    "constant_path",
    "copy_period",
    "fill_blank_day_types",
    "heat_wave",
    "make_scenario",
    "read_scenario_csv",
    "read_scenario_file",
    "same_days_after",
    "same_days_source",
    "seasonal_normal_path",
    "shift_path",
    "window_limits",
    "window_starts",
    "write_scenario_csv",
]
