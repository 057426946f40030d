"""JSON output shared by the commands."""
from __future__ import annotations

import math


def json_safe(obj):
    """JSON has no NaN/Infinity: write null for them (recursively)."""
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {k: json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_safe(v) for v in obj]
    return obj
