"""Stand-in for the bundled data files in a checkout: they live in the top-level resources/
folder (the project's layout), and ``FOLDER`` points there.

A built wheel installs that folder as this package instead (``package-dir`` in
pyproject.toml), so this file is never installed; resources/__init__.py takes its place.
"""

from pathlib import Path

FOLDER = Path(__file__).resolve().parents[2] / "resources"
"""The folder holding devices.toml and demo_drawer.csv."""
