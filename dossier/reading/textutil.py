"""Small helpers for the per-program supplements: they read the log text itself."""
from __future__ import annotations

import re

FLOAT = r"[-+]?(?:\d+\.\d*|\.\d+|\d+)(?:[EeDd][-+]?\d+)?"


def to_float(token: str) -> float:
    """A printed number, also in Fortran D notation (1.0D+02)."""
    return float(token.replace("D", "E").replace("d", "e"))


def all_floats(pattern: str, text: str, flags: int = 0) -> list[float]:
    """Every first group of `pattern` in `text`, as floats, in file order."""
    return [to_float(m.group(1)) for m in re.finditer(pattern, text, flags)]


def last_float(pattern: str, text: str, flags: int = 0) -> float | None:
    values = all_floats(pattern, text, flags)
    return values[-1] if values else None


def last_match(pattern: str, text: str, flags: int = 0) -> re.Match | None:
    last = None
    for last in re.finditer(pattern, text, flags):
        pass
    return last
