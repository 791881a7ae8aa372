"""The scenario library: saved scenarios with their forecasts, in one SQLite file.

- :mod:`~loadcore.library.schema`: the file's schema, its migrations and how it is opened (one
  transaction per write, WAL journal, full synchronisation);
- :mod:`~loadcore.library.entries`: what is saved and given back (:class:`ScenarioEntry`,
  :class:`SavedScenario`, :class:`ScenarioListing`, :class:`StoredForecast`),
  :func:`entry_from_forecast`, :func:`is_current`, :func:`settings_to_dict`;
- :mod:`~loadcore.library.rows`: checks on names and texts, and the JSON of a stored row;
- :mod:`~loadcore.library.store`: :class:`ScenarioLibrary`, the store itself.
"""

from loadcore.library.entries import (
    HISTORY_TAIL_DAYS,
    DamagedRow,
    LibraryListing,
    SavedScenario,
    ScenarioEntry,
    ScenarioListing,
    StoredForecast,
    entry_from_forecast,
    is_current,
    settings_to_dict,
)
from loadcore.library.schema import APPLICATION_ID, MIGRATIONS, SCHEMA_VERSION, Migration
from loadcore.library.store import ENV_VAR, ScenarioLibrary, default_library_path

__all__ = [
    "APPLICATION_ID",
    "ENV_VAR",
    "HISTORY_TAIL_DAYS",
    "DamagedRow",
    "LibraryListing",
    "MIGRATIONS",
    "SCHEMA_VERSION",
    "Migration",
    "SavedScenario",
    "ScenarioEntry",
    "ScenarioLibrary",
    "ScenarioListing",
    "StoredForecast",
    "default_library_path",
    "entry_from_forecast",
    "is_current",
    "settings_to_dict",
]
