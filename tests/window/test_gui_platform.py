"""Opening the window on a fresh Linux desktop: missing X11 libraries named in one line."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

from core.errors import SetupError
from gui import platform_check
from gui.platform_check import XCB_LIBRARIES, check_window_platform, missing_packages, uses_xcb


def test_xcb_is_what_qt_picks_on_an_x_display_only() -> None:
    # Qt's platform choice on Linux (Qt 6 documentation, "Qt for X11 Requirements" and
    # QT_QPA_PLATFORM): xcb under X11, wayland when a Wayland display is present.
    assert uses_xcb({"DISPLAY": ":0"}, "linux")
    assert uses_xcb({"QT_QPA_PLATFORM": "xcb"}, "linux")
    assert not uses_xcb({"DISPLAY": ":0", "QT_QPA_PLATFORM": "offscreen"}, "linux")
    assert not uses_xcb({"DISPLAY": ":0", "WAYLAND_DISPLAY": "wayland-0"}, "linux")
    assert not uses_xcb({"DISPLAY": ":0"}, "darwin")
    assert not uses_xcb({}, "linux")


def test_missing_libraries_become_package_names_once() -> None:
    gone = {"libxcb-icccm.so.4", "libxcb-keysyms.so.1", "libxcb-cursor.so.0"}
    # Debian 12 package index: libxcb-icccm4 ships libxcb-icccm.so.4, and so on.
    assert missing_packages(lambda soname: soname not in gone) == [
        "libxcb-cursor0", "libxcb-icccm4", "libxcb-keysyms1"]
    assert missing_packages(lambda soname: True) == []


def test_the_message_is_one_line_with_the_install_command(monkeypatch: pytest.MonkeyPatch
                                                          ) -> None:
    monkeypatch.setenv("DISPLAY", ":0")
    monkeypatch.delenv("QT_QPA_PLATFORM", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    monkeypatch.setattr(platform_check.sys, "platform", "linux")
    with pytest.raises(SetupError) as caught:
        check_window_platform(loads=lambda soname: soname != "libxcb-keysyms.so.1")
    message = str(caught.value)
    assert "\n" not in message
    assert message.endswith("sudo apt-get install libxcb-keysyms1")


def test_a_screenshot_falls_back_to_offscreen(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("DISPLAY", ":0")
    monkeypatch.delenv("QT_QPA_PLATFORM", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    monkeypatch.setattr(platform_check.sys, "platform", "linux")
    check_window_platform(picture_only=True, loads=lambda soname: False)
    assert os.environ["QT_QPA_PLATFORM"] == "offscreen"


def test_the_table_covers_what_the_plugin_needs() -> None:
    # The plugin's own NEEDED entries (ELF dynamic section, read with objdump -p).
    objdump = shutil.which("objdump")
    if objdump is None:
        pytest.skip("objdump not installed")
    import PySide6

    qt = Path(PySide6.__file__).parent / "Qt"
    needed: set[str] = set()
    for lib in (qt / "plugins" / "platforms" / "libqxcb.so", *(qt / "lib").glob(
            "libQt6XcbQpa.so*")):
        if lib.exists():
            out = subprocess.run([objdump, "-p", str(lib)], capture_output=True, text=True,
                                 check=True).stdout
            needed |= {line.split()[1] for line in out.splitlines() if "NEEDED" in line}
    system = {n for n in needed if not n.startswith(("libQt6", "libc.", "libm.", "libgcc",
                                                     "libstdc++", "libpthread", "libdl",
                                                     "libgthread", "libicu"))}
    assert system, "no xcb plugin found in PySide6"
    assert system <= set(XCB_LIBRARIES)


def test_a_real_x_server_without_the_libraries_gets_one_line(tmp_path: Path) -> None:
    """Under Xvfb, `tickbin gui` either finds every library or says which packages to add."""
    xvfb = shutil.which("Xvfb")
    if xvfb is None:
        if os.environ.get("CI"):
            pytest.fail("Xvfb is not installed; .ci/run should have installed it")
        pytest.skip("Xvfb not installed (Debian package xvfb)")
    if not missing_packages():
        pytest.skip("every xcb library is present here: the window would open")
    display = f":{90 + os.getpid() % 100}"
    server = subprocess.Popen([xvfb, display, "-screen", "0", "1024x768x24"],
                              stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        time.sleep(1.0)
        env = {k: v for k, v in os.environ.items()
               if k not in ("QT_QPA_PLATFORM", "WAYLAND_DISPLAY")}
        env["DISPLAY"] = display
        done = subprocess.run([sys.executable, "-c", "from gui.entry import main; main()",
                               "gui"], env=env, capture_output=True, text=True, timeout=120,
                              cwd=tmp_path)
    finally:
        server.terminate()
        server.wait(timeout=10)
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1, done.stderr
    assert "sudo apt-get install" in lines[0] and "qt.qpa" not in done.stderr
