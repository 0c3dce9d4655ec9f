"""Before Qt opens a window on X11: are the system libraries its xcb plugin loads present?

When one is missing, Qt prints several lines that can blame a library that is
there, then aborts the process. We look first and name the Debian/Ubuntu
packages to install, in one line, instead.
"""

from __future__ import annotations

import ctypes
import os
import sys
from collections.abc import Callable

from core.errors import SetupError

XCB_LIBRARIES: dict[str, str] = {
    "libxcb.so.1": "libxcb1",
    "libX11.so.6": "libx11-6",
    "libX11-xcb.so.1": "libx11-xcb1",
    "libxcb-cursor.so.0": "libxcb-cursor0",
    "libxcb-icccm.so.4": "libxcb-icccm4",
    "libxcb-image.so.0": "libxcb-image0",
    "libxcb-keysyms.so.1": "libxcb-keysyms1",
    "libxcb-randr.so.0": "libxcb-randr0",
    "libxcb-render.so.0": "libxcb-render0",
    "libxcb-render-util.so.0": "libxcb-render-util0",
    "libxcb-shape.so.0": "libxcb-shape0",
    "libxcb-shm.so.0": "libxcb-shm0",
    "libxcb-sync.so.1": "libxcb-sync1",
    "libxcb-util.so.1": "libxcb-util1",
    "libxcb-xfixes.so.0": "libxcb-xfixes0",
    "libxcb-xkb.so.1": "libxcb-xkb1",
    "libxkbcommon.so.0": "libxkbcommon0",
    "libxkbcommon-x11.so.0": "libxkbcommon-x11-0",
    "libGL.so.1": "libgl1",
    "libEGL.so.1": "libegl1",
    "libfontconfig.so.1": "libfontconfig1",
    "libglib-2.0.so.0": "libglib2.0-0",
    "libdbus-1.so.3": "libdbus-1-3",
}
"""Shared libraries Qt 6's xcb platform plugin (and the widgets it draws) loads, each with
the Debian/Ubuntu package that ships it (read off the plugin with ``objdump -p``: its
NEEDED entries; package names from Debian 12's package index)."""


def uses_xcb(environ: dict[str, str] | os._Environ[str] = os.environ,
             platform: str = sys.platform) -> bool:
    """True when Qt will pick its X11 (xcb) plugin: Linux, no platform chosen or xcb
    chosen, and an X display without a Wayland one (Qt prefers Wayland there)."""
    chosen = environ.get("QT_QPA_PLATFORM", "")
    if not platform.startswith("linux") or chosen not in ("", "xcb"):
        return False
    return chosen == "xcb" or (bool(environ.get("DISPLAY"))
                               and not environ.get("WAYLAND_DISPLAY"))


def _loads(soname: str) -> bool:
    try:
        ctypes.CDLL(soname)
    except OSError:
        return False
    return True


def missing_packages(loads: Callable[[str], bool] = _loads) -> list[str]:
    """The packages whose library cannot be loaded, in table order, without repeats."""
    missing: list[str] = []
    for soname, package in XCB_LIBRARIES.items():
        if package not in missing and not loads(soname):
            missing.append(package)
    return missing


def check_window_platform(*, picture_only: bool = False,
                          loads: Callable[[str], bool] = _loads) -> None:
    """Raise SetupError naming the packages to install when xcb cannot load.

    A screenshot (``picture_only``) needs no screen: it falls back to Qt's
    offscreen platform instead.
    """
    if not uses_xcb():
        return
    missing = missing_packages(loads)
    if missing and picture_only:
        os.environ["QT_QPA_PLATFORM"] = "offscreen"
    elif missing:
        raise SetupError("the window needs system libraries that are missing; install them "
                         f"with: sudo apt-get install {' '.join(missing)}")
