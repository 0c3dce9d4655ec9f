"""Work-arounds for the Qt binding as installed; each one says when it can go."""

import ctypes
import sys


def keep_none_alive() -> None:
    """Work around PySide6 6.12 on Python 3.11: each call of a C++ ``void`` method from
    Python drops one reference to ``None`` that it never took (the bindings assume
    Python >= 3.12, where ``None`` is immortal). Drawing a build sheet makes thousands of
    such calls, and ``None``'s count reaching zero aborts the interpreter
    ("none_dealloc"). A huge reference count makes ``None`` effectively immortal, as on
    3.12; on 3.12 and later this does nothing.
    """
    if sys.version_info < (3, 12) and sys.getrefcount(None) < 1 << 40:
        ctypes.c_ssize_t.from_address(id(None)).value += 1 << 48

