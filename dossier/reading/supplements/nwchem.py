"""nwchem supplement."""
from __future__ import annotations


def apply(calc, text, data):
    return None


def covers_skipped(skipped):
    return False
