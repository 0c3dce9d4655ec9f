"""Helpers shared by test modules (tests/ is on sys.path through tests/conftest.py).

Test modules import from here, never from one another or from conftest.
"""
