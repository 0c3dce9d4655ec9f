"""Data files: device table, demo drawer. A wheel installs this folder as the package
core.resources (core/resources/__init__.py stands in for it in a checkout)."""

from pathlib import Path

FOLDER = Path(__file__).resolve().parent
"""The folder holding devices.toml and demo_drawer.csv: this one, once installed."""
