"""Tickbin window."""
