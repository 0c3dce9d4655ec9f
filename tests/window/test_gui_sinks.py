"""The window's sinks with hostile drawer text: the exported netlist and the PDF sheet."""

from __future__ import annotations

from support.gui_helpers import QUIET_OFFSCREEN
from support.sinks import assert_inert_netlist, make_hostile_drawer, run_ngspice
from support.tools import require_tool

pytest_plugins = ["support.gui_helpers"]
pytestmark = QUIET_OFFSCREEN


def test_window_netlist_export_runs_no_drawer_text(make_window, tmp_path, monkeypatch):
    from gui.sheet_actions import SheetActions

    drawer_path, marker = make_hostile_drawer(tmp_path)
    window = make_window(str(drawer_path))
    assert window.selected_candidate() is not None
    out = tmp_path / "window.cir"
    monkeypatch.setattr(SheetActions, "ask_path", classmethod(lambda *a, **k: str(out)))
    window.sheet_actions.netlist_action.trigger()
    text = out.read_text(encoding="ascii")
    assert "A1" in text
    assert_inert_netlist(text)
    require_tool("ngspice")
    run = run_ngspice(out)
    assert run.returncode == 0, run.stderr
    assert not marker.exists()
