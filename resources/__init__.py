"""Data files: device table, demo drawer. Installed as core.resources."""
