"""pyqtgraph, imported without building every Qt class first.

On import, pyqtgraph (0.13, 0.14) fills mirror modules of its own (``pyqtgraph.Qt.QtCore``,
``QtGui``, ``QtWidgets``) by asking ``hasattr`` of each, then copying every name PySide6's
module lists. PySide6 builds a class or enum only when it is first looked up, so that copy
builds about 720 of them that the window never uses: 0.2-0.3 s of CPU between the first
paint and the first plots, the largest single part of that wait. Here each mirror answers
the copy's ``hasattr`` from PySide6's listing and fetches a name from PySide6 when it is
actually used: the same objects, built later or never. Anything pyqtgraph sets on a mirror
stays its own. If pyqtgraph ever stops copying this way, the answer is never given and the
import is the plain one (slower, the same result).

Every module of ours that draws imports ``pg`` from here, never pyqtgraph itself.
"""

from __future__ import annotations

import importlib
import importlib.abc
import importlib.machinery
import sys
from collections.abc import Callable, Sequence
from types import ModuleType
from typing import Any

import PySide6.QtCore
import PySide6.QtGui
import PySide6.QtWidgets

MIRRORS: dict[str, ModuleType] = {
    "pyqtgraph.Qt.QtCore": PySide6.QtCore,
    "pyqtgraph.Qt.QtGui": PySide6.QtGui,
    "pyqtgraph.Qt.QtWidgets": PySide6.QtWidgets,
}
COPIER = "_copy_attrs"
"""The function in ``pyqtgraph.Qt`` that copies PySide6's names into the mirrors."""


def lookup_from(qt: ModuleType, mirror: ModuleType) -> Callable[[str], Any]:
    """A module ``__getattr__`` (PEP 562) for a mirror: the copier's ``hasattr`` is answered
    without building the class; any other look-up fetches it from PySide6 and keeps it."""
    listed = frozenset(dir(qt))

    def lookup(name: str) -> Any:
        if name in listed and sys._getframe(1).f_code.co_name == COPIER:
            return True  # only its truth is read: the copier then leaves the name alone
        value = getattr(qt, name)
        setattr(mirror, name, value)
        return value

    return lookup


class _MirrorLoader(importlib.abc.Loader):
    def __init__(self, loader: importlib.abc.Loader, qt: ModuleType):
        self.loader, self.qt = loader, qt

    def create_module(self, spec: importlib.machinery.ModuleSpec) -> ModuleType | None:
        return self.loader.create_module(spec)

    def exec_module(self, module: ModuleType) -> None:
        module.__getattr__ = lookup_from(self.qt, module)  # type: ignore[method-assign]
        self.loader.exec_module(module)


class _MirrorFinder(importlib.abc.MetaPathFinder):
    """Finds pyqtgraph's mirror packages where they are and gives them the look-up above."""

    def find_spec(self, fullname: str, path: Sequence[str] | None,
                  target: ModuleType | None = None) -> importlib.machinery.ModuleSpec | None:
        qt = MIRRORS.get(fullname)
        spec = None if qt is None else importlib.machinery.PathFinder.find_spec(fullname, path)
        if spec is None or spec.loader is None:
            return None
        spec.loader = _MirrorLoader(spec.loader, qt)  # type: ignore[arg-type]
        return spec


def _import_pyqtgraph() -> None:
    if "pyqtgraph" in sys.modules:
        return
    finder = _MirrorFinder()
    sys.meta_path.insert(0, finder)
    try:
        importlib.import_module("pyqtgraph")
    finally:
        sys.meta_path.remove(finder)


_import_pyqtgraph()
import pyqtgraph as pg  # noqa: E402 - loaded just above; this only names it

__all__ = ["pg"]
