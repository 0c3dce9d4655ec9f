"""Where the window remembers things between runs (QSettings, one INI file).

Tests move the file with ``QSettings.setPath`` so they never touch a person's
settings; the keys used by the window are listed here, in one place.
"""

from __future__ import annotations

from PySide6.QtCore import QSettings

ORGANIZATION = "Tickbin"
APPLICATION = "tickbin"

GEOMETRY = "window/geometry"
WINDOW_STATE = "window/state"
SPLITTERS = "window/splitters"
LAST_DRAWER = "drawer/last"
HIDDEN_COLUMNS = "drawer/hidden_columns"
TARGET = "target/fields"
DRIFT_RANGES = "plots/drift_ranges"


def settings() -> QSettings:
    """The program's settings store (an INI file in the user's config folder)."""
    return QSettings(QSettings.Format.IniFormat, QSettings.Scope.UserScope, ORGANIZATION,
                     APPLICATION)
