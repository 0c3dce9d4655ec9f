"""Tickbin window: PySide6 and pyqtgraph views over core objects."""
