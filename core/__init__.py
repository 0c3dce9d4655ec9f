"""Tickbin core: values, drawer, timing models, search. Never imports Qt."""

__version__ = "0.1.0"
