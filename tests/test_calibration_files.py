"""Saved calibrations renamed without ever losing a file; bench readings read from text."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

import core.storage.atomic as atomic
from core.errors import InputError, TickbinError
from core.model.calibration import (
    calibrate,
    calibrations_dir,
    list_calibrations,
    load_calibration,
    measurement_from_cells,
    rename_calibration,
    save_calibration,
)
from core.model.timing import make_oscillator


def _saved(name: str, measured_hz: float = 1050.0):
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    return save_calibration(calibrate(osc, {"R": 10e3, "C": 100e-9}, measured_hz, name=name))


def test_rename_moves_the_file_and_its_name():
    _saved("bench-a")
    before = load_calibration("bench-a")
    path = rename_calibration("bench-a", "bench-b")
    assert path.name == "bench-b.json" and list_calibrations() == ["bench-b"]
    after = load_calibration("bench-b")
    assert after.name == "bench-b"
    assert (after.vt_plus_v, after.vt_minus_v, after.measurements) == (
        before.vt_plus_v, before.vt_minus_v, before.measurements)


def test_rename_never_replaces_another_calibration():
    _saved("bench-a", 1050.0)
    _saved("bench-b", 990.0)
    with pytest.raises(InputError, match="exists already"):
        rename_calibration("bench-a", "bench-b")
    assert load_calibration("bench-b").measurements[0].frequency_hz == 990.0
    assert load_calibration("bench-a").measurements[0].frequency_hz == 1050.0
    with pytest.raises(InputError, match="name"):
        rename_calibration("bench-a", "../elsewhere")
    with pytest.raises(InputError, match="no such calibration"):
        rename_calibration("nothing", "bench-c")


def test_a_failed_rename_keeps_the_old_file(monkeypatch):
    _saved("bench-a")
    with monkeypatch.context() as m:
        def full(*args, **kwargs):
            raise OSError(28, "No space left on device")
        m.setattr(atomic.os, "replace", full)
        with pytest.raises(TickbinError, match="not saved"):
            rename_calibration("bench-a", "bench-b")
    assert list_calibrations() == ["bench-a"]
    # The old file cannot be removed (a read-only share): both stay, nothing is lost.
    with monkeypatch.context() as m:
        def refuse(self, *args, **kwargs):
            raise PermissionError(13, "Permission denied")
        m.setattr(Path, "unlink", refuse)
        with pytest.raises(TickbinError, match="both are kept"):
            rename_calibration("bench-a", "bench-b")
    assert list_calibrations() == ["bench-a", "bench-b"]
    assert not [n for n in os.listdir(calibrations_dir())
                if n.startswith(".")]  # no temporary file left behind


def test_readings_from_text_cells_name_the_column():
    m = measurement_from_cells(("R", "C"), {"r": "4k7", "c": "10n", "frequency": "1.2kHz",
                                            "duty": "48%"})
    assert m.values == {"R": 4700.0, "C": pytest.approx(10e-9)}
    assert (m.frequency_hz, m.duty_pct) == (1200.0, 48.0)
    assert measurement_from_cells(("R", "C"), {"r": "1k", "c": "1u", "frequency": "2ms"}
                                  ).frequency_hz == pytest.approx(500.0)
    with pytest.raises(InputError, match="needs c, frequency"):
        measurement_from_cells(("R", "C"), {"r": "1k"})
    with pytest.raises(InputError, match="frequency 'fast'"):
        measurement_from_cells(("R", "C"), {"r": "1k", "c": "1n", "frequency": "fast"})
    with pytest.raises(InputError, match="duty"):
        measurement_from_cells(("R", "C"), {"r": "1k", "c": "1n", "frequency": "1k",
                                            "duty": "120%"})
