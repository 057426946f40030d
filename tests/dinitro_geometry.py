"""A planar 1,3-dinitrobenzene skeleton built from bond lengths, shared by the localization and
analysis tests (numbers invented for the tests; nitro lengths from memory: neutral nitrobenzene
C-N 1.47, N-O 1.22 Å; the nitro group carrying the extra electron C-N about 1.40, N-O about 1.27)."""
from __future__ import annotations

import math


def dinitrobenzene(nitro_lengths: dict[str, tuple[float, float]]):
    """Elements, coordinates (Å, lists) and 0-based sites; nitro_lengths = {site: (C-N, N-O)}
    for the sites "nitro_a" (on C1) and "nitro_b" (on C3)."""
    ring = [(1.39 * math.cos(math.radians(60 * k)), 1.39 * math.sin(math.radians(60 * k)), 0.0) for k in range(6)]
    elements, coords = ["C"] * 6, list(ring)
    sites = {"bridge": list(range(6))}
    for name, k in (("nitro_a", 0), ("nitro_b", 2)):
        cn, no = nitro_lengths[name]
        ux, uy = math.cos(math.radians(60 * k)), math.sin(math.radians(60 * k))
        n = (ring[k][0] + cn * ux, ring[k][1] + cn * uy, 0.0)
        idx = len(elements)
        elements.append("N")
        coords.append(n)
        for sign in (1, -1):
            ang = math.radians(60 * k + sign * 62)
            coords.append((n[0] + no * math.cos(ang), n[1] + no * math.sin(ang), 0.0))
            elements.append("O")
        sites[name] = [idx, idx + 1, idx + 2]
    for k in (1, 3, 4, 5):  # ring hydrogens, C-H 1.08
        ux, uy = math.cos(math.radians(60 * k)), math.sin(math.radians(60 * k))
        coords.append((ring[k][0] + 1.08 * ux, ring[k][1] + 1.08 * uy, 0.0))
        elements.append("H")
    return elements, [list(c) for c in coords], sites
