"""Figures of the transfers without a transition state: the coupling against the separation with
the exponential fit, and the golden-rule rate against the separation. Reads only the result dict
(`transfers`, docs/dossier-json.md)."""
from __future__ import annotations

import numpy as np
from matplotlib.figure import Figure

from dossier.report.figures import _figure, _style, _t, _with_rc


def _scan_panel(ax, tr: dict) -> None:
    for i, scan in enumerate(tr.get("scans", [])):
        st = _style(i)
        r = [p["separation_angstrom"] for p in scan["points"]]
        h = [p["value_cm1"] for p in scan["points"]]
        ax.plot(r, h, linestyle="none", marker=st["marker"], color=st["color"], markerfacecolor="white",
                markersize=5, label=_t(f"{scan['route']} ({scan['level_of_theory']})"))
        fit = scan.get("fit")
        if fit:
            grid = np.linspace(min(r), max(r), 50)
            ax.plot(grid, fit["h0_cm1"] * np.exp(-fit["beta_per_angstrom"] * (grid - fit["r0_angstrom"]) / 2.0),
                    color=st["color"], linestyle=st["linestyle"], linewidth=1.2,
                    label=_t(f"fit: β = {fit['beta_per_angstrom']:.2f} ± {fit['beta_error_per_angstrom']:.2f} Å⁻¹"))
    ax.set_yscale("log")
    ax.set_xlabel("separation R / Å")
    ax.set_ylabel(r"$H_\mathrm{ab}$ / cm⁻¹")
    ax.legend(fontsize=6, loc="lower left")


def _rate_panel(ax, tr: dict) -> None:
    series: list[tuple[str, str | None]] = []
    for row in tr.get("rates", []):
        key = (row["route"], row.get("level_of_theory"))
        if key not in series:
            series.append(key)
    for i, (route, level) in enumerate(series):
        rows = sorted((x for x in tr["rates"] if (x["route"], x.get("level_of_theory")) == (route, level)
                       and x.get("separation_angstrom") is not None and x.get("rate_per_s")),
                      key=lambda x: x["separation_angstrom"])
        if not rows:
            continue
        st = _style(i)
        ax.plot([x["separation_angstrom"] for x in rows], [x["rate_per_s"] for x in rows], color=st["color"],
                linestyle=st["linestyle"], marker=st["marker"], markerfacecolor="white", markersize=4,
                label=_t(f"{route} ({level})" if level else route))
        bad = [x for x in rows if not x.get("holds")]
        if bad:
            ax.plot([x["separation_angstrom"] for x in bad], [x["rate_per_s"] for x in bad], linestyle="none",
                    marker="x", color="#000000", markersize=6)
    ax.set_yscale("log")
    ax.set_xlabel("separation R / Å")
    ax.set_ylabel("k / s⁻¹ (golden rule)")
    ax.legend(fontsize=6, loc="lower left")


@_with_rc
def scan_figure(tr: dict) -> Figure:
    """Left: H_ab against R per route, with the fit; right: k(R) (crosses where the golden-rule formula is
    outside its range or cannot be judged)."""
    with_rates = any(x.get("rate_per_s") and x.get("separation_angstrom") is not None for x in tr.get("rates", []))
    fig = _figure(6.4 if with_rates else 3.6, 3.0)
    if with_rates:
        ax1, ax2 = fig.subplots(1, 2)
        _scan_panel(ax1, tr)
        _rate_panel(ax2, tr)
    else:
        _scan_panel(fig.add_subplot(), tr)
    return fig


def wants_scan_figure(tr: dict) -> bool:
    return any(len(s.get("points", [])) >= 2 for s in tr.get("scans", []))
