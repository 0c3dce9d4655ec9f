"""Two costs of starting the window that the libraries and the interpreter add, cut.

PySide6's look at every later import. Once imported, PySide6 (6.x) replaces
``__import__`` to support its opt-in ``from __feature__ import ...``: after each new
module is imported it asks whether the module's source mentions "PySide6", through
``inspect.getsource``. For a module, that call searches every loaded module for the file
and reads it through the line cache, so each of the some 400 modules imported after
PySide6 (numpy, pyqtgraph, core) cost several times its own import: about 0.25 s before
the window's first result. Tickbin selects no such feature; the same question is answered
here from the module's loader, which reads just that file. If PySide6 stops asking this
way, nothing is changed.

The cyclic garbage collector. Start-up makes some 74,000 long-lived objects that the
collector tracks (functions, classes, module and instance dicts); it ran 120-160 times
before the first result (75-105 ms) and freed about 400 objects in all. It waits until
the first result is shown; then what exists is frozen out of later collections
(``gc.freeze``).
"""

from __future__ import annotations

import gc
import sys
from types import ModuleType

_paused = False


def mentions_pyside(module: ModuleType) -> bool:
    """Whether ``module``'s source holds "PySide6" (False where there is no source)."""
    get_source = getattr(getattr(module, "__loader__", None), "get_source", None)
    try:
        source = get_source(module.__name__) if get_source is not None else None
    except (ImportError, OSError, SyntaxError, UnicodeDecodeError):
        return False
    return isinstance(source, str) and "PySide6" in source


def quicken_import_check() -> None:
    """Answer PySide6's question with ``mentions_pyside`` (PySide6 must be imported)."""
    feature = sys.modules.get("shibokensupport.feature")
    if feature is not None and callable(getattr(feature, "_mod_uses_pyside", None)):
        feature._mod_uses_pyside = mentions_pyside


def pause_collection() -> None:
    """Hold the cyclic collector until ``resume_collection`` (the first result)."""
    global _paused
    if gc.isenabled():
        gc.disable()
        _paused = True


def resume_collection() -> None:
    """After start-up: what exists now is kept out of later collections, which resume.
    Only undoes ``pause_collection``; calling it again does nothing."""
    global _paused
    if _paused:
        _paused = False
        gc.freeze()
        gc.enable()
