"""Structure drawings of the states in one common frame, with atom numbers and the spin population
of every atom.

All states that list the same atoms in the same order are superposed on the first such state
(Kabsch rotation on the shared atoms, dossier.science.geometry.align) and projected on that
state's principal plane, so the drawings differ only where the structures do. Per-atom spin
populations (from the geometry job, the report's population scheme) are drawn as a halo whose
area grows with |ρ| and whose colour gives its sign; the legend sits outside the molecule.
"""
from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure
from matplotlib.patches import Circle

from dossier.science import geometry
from dossier.report.figures import _FILLS, _HATCHES, _figure, _t, _with_rc, bonds, projection_axes

SPIN_POSITIVE = "#c0392b"
SPIN_NEGATIVE = "#2c6fbb"
#: Halo radius (Å) per unit |spin|: a halo of radius r0 + SPIN_SCALE * |ρ|.
SPIN_SCALE = 0.9


def common_frame(states: list[dict]) -> tuple[dict[str, np.ndarray], np.ndarray | None, dict[str, float]]:
    """Coordinates of each state superposed on the first state with the same atom list, the
    projection axes of that reference, and each state's RMSD to the reference after alignment (Å)."""
    ref = next((s for s in states if s.get("elements") and s.get("coordinates_angstrom")), None)
    if ref is None:
        return {}, None, {}
    ref_xyz = np.asarray(ref["coordinates_angstrom"], dtype=float)
    out, rms = {}, {}
    for st in states:
        if not (st.get("elements") and st.get("coordinates_angstrom")):
            continue
        xyz = np.asarray(st["coordinates_angstrom"], dtype=float)
        if geometry.same_atom_order(st["elements"], ref["elements"]):
            xyz = geometry.align(xyz, ref_xyz)
            rms[st["name"]] = geometry.rmsd(xyz, ref_xyz)
        out[st["name"]] = xyz
    return out, projection_axes(ref_xyz), rms


@_with_rc
def structure_drawing(state: dict, sites: dict[str, list[int]], *, coords: np.ndarray | None = None,
                      axes: np.ndarray | None = None, spin: list[float] | None = None, numbered: bool = True,
                      extent: tuple[float, float, float, float] | None = None) -> Figure:
    """Ball-and-stick drawing in a given frame; site atoms hatched, spin as halos, atoms numbered."""
    els = state["elements"]
    xyz = np.asarray(state["coordinates_angstrom"] if coords is None else coords, dtype=float)
    vt = projection_axes(xyz) if axes is None else axes
    p = (xyz - xyz.mean(axis=0)) @ vt.T
    site_names = list(sites)
    site_of = {a - 1: k for k, name in enumerate(site_names) for a in sites[name]}
    fig = _figure(6.2, 3.3)
    fig.set_layout_engine("none")
    ax = fig.add_axes((0.0, 0.0, 0.72, 1.0))
    ax.set_aspect("equal")
    ax.axis("off")
    for i, j in sorted(bonds(els, xyz), key=lambda b: min(p[b[0], 2], p[b[1], 2])):
        ax.plot([p[i, 0], p[j, 0]], [p[i, 1], p[j, 1]], color="#3a3a3a", linewidth=1.6, zorder=2)
    spins = None if spin is None or len(spin) != len(els) else np.asarray(spin, dtype=float)
    for i in np.argsort(p[:, 2], kind="stable"):
        r = 0.16 if els[i] == "H" else 0.3
        if spins is not None and abs(spins[i]) >= 0.01:
            ax.add_patch(Circle((p[i, 0], p[i, 1]), r + SPIN_SCALE * abs(spins[i]), alpha=0.35, linewidth=0,
                                facecolor=SPIN_POSITIVE if spins[i] > 0 else SPIN_NEGATIVE, zorder=1))
        k = site_of.get(int(i))
        ax.add_patch(Circle((p[i, 0], p[i, 1]), r, facecolor="#ffffff" if k is None else _FILLS[(k + 1) % len(_FILLS)],
                            edgecolor="#111111", hatch=None if k is None else _HATCHES[(k + 1) % len(_HATCHES)],
                            linewidth=0.8, zorder=3))
        label = f"{els[i]}{i + 1}" if numbered else ("" if els[i] in ("C", "H") else els[i])
        if label:
            ax.text(p[i, 0], p[i, 1] + r + 0.08, label, ha="center", va="bottom", fontsize=6, zorder=10,
                    bbox=dict(boxstyle="round,pad=0.1", facecolor="white", edgecolor="none", alpha=0.8))
    if extent is None:
        extent = (p[:, 0].min() - 1.0, p[:, 0].max() + 1.0, p[:, 1].min() - 1.0, p[:, 1].max() + 1.1)
    ax.set_xlim(extent[0], extent[1])
    ax.set_ylim(extent[2], extent[3])
    handles = [Circle((0, 0), 0.2, facecolor=_FILLS[(k + 1) % len(_FILLS)], edgecolor="#111111",
                      hatch=_HATCHES[(k + 1) % len(_HATCHES)]) for k in range(len(site_names))]
    labels = [f"site {_t(n)}" for n in site_names]
    if spins is not None:
        handles += [Circle((0, 0), 0.2, facecolor=SPIN_POSITIVE, alpha=0.35), Circle((0, 0), 0.2, facecolor=SPIN_NEGATIVE, alpha=0.35)]
        labels += ["spin ρ > 0 (halo radius grows with |ρ|)", "spin ρ < 0"]
    if handles:
        fig.legend(handles, labels, fontsize=7, loc="center left", bbox_to_anchor=(0.73, 0.5), frameon=False)
    return fig
