"""Energy profile of a pathway at one level with every energy kind the records give: electronic
energy E, E + ZPE and G at each temperature. A double well in E that zero-point energy removes
(the saddle dropping below the minima) is visible at a glance."""
from __future__ import annotations

from matplotlib.figure import Figure

from dossier import units
from dossier.report.figures import _figure, _fixed, _t, _with_rc, unit_label

_SERIES_STYLE = {"E": ("#111111", "-", 2.6), "E+ZPE": ("#555555", "--", 2.0)}
_G_STYLES = ["#2f4f6f", "#7a4a2a", "#3d6b3d", "#8c8c8c", "#5a5a5a"]


def profile_series(profile: dict) -> list[tuple[str, list[tuple[str, float]]]]:
    """(label, [(state, kJ/mol)]) for E, E+ZPE and G(T) of a profile, each only when every point has it."""
    points = profile.get("points") or []
    out: list[tuple[str, list[tuple[str, float]]]] = []
    for label, key in (("E", "electronic_kj_mol"), ("E+ZPE", "zpe_kj_mol")):
        vals = [(p["state"], p.get(key)) for p in points]
        if vals and all(v is not None for _, v in vals):
            out.append((label, vals))
    temps = sorted({t for p in points for t in (p.get("gibbs_kj_mol") or {})}, key=float)
    for t in temps:
        vals = [(p["state"], (p.get("gibbs_kj_mol") or {}).get(t)) for p in points]
        if vals and all(v is not None for _, v in vals):
            out.append((f"G({float(t):g} K)", vals))
    return out


@_with_rc
def energy_kinds_figure(profiles: list[dict], unit: str) -> Figure:
    """One panel per recipe of a pathway: levels of E, E+ZPE and G at each temperature."""
    fig = _figure(6.4, 3.2)
    axes = fig.subplots(1, len(profiles), sharey=False, squeeze=False)[0]
    for ax, prof in zip(axes, profiles):
        series = profile_series(prof)
        order = [p["state"] for p in prof.get("points", [])]
        half = 0.3
        for k, (label, vals) in enumerate(series):
            if label in _SERIES_STYLE:
                color, ls, lw = _SERIES_STYLE[label]
            else:
                color, ls, lw = _G_STYLES[(k - 2) % len(_G_STYLES)], ":", 1.6
            xs, ys = [], []
            for state, value in vals:
                x, v = order.index(state), units.kj_mol_to(value, unit)
                ax.hlines(v, x - half, x + half, colors=color, linewidth=lw)
                xs.append(x)
                ys.append(v)
            for (x0, y0), (x1, y1) in zip(zip(xs, ys), zip(xs[1:], ys[1:])):
                ax.plot([x0 + half, x1 - half], [y0, y1], color=color, linestyle=ls, linewidth=0.8)
            ax.plot([], [], color=color, linestyle=ls, linewidth=1.4, label=label)
            if label in ("E", "E+ZPE") or k == len(series) - 1:
                for x, v in zip(xs, ys):
                    if x not in (0,):
                        ax.annotate(_fixed(v, 1), (x + half, v), xytext=(2, 0), textcoords="offset points",
                                    fontsize=6, color=color, va="center")
        ax.set_xticks(range(len(order)), [_t(s) for s in order])
        ax.set_xlim(-0.6, len(order) - 0.1)
        ax.set_title(_t(f"recipe {prof.get('recipe', '?')}"), fontsize=8)
        ax.tick_params(axis="x", length=0)
        ax.axhline(0.0, color="#bbbbbb", linewidth=0.5, zorder=0)
    axes[0].set_ylabel(f"relative energy / {unit_label(unit)}")
    axes[-1].legend(fontsize=6.5, loc="upper left", bbox_to_anchor=(1.0, 1.0))
    return fig
