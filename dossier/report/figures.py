"""Figures of the dossier, drawn with matplotlib from the result dict only.

Every figure is a pure function of parts of ``dossier.json`` (never of a log). The output
is deterministic SVG (fixed ``svg.hashsalt``, no date or creator URL in the metadata, ids
prefixed per figure so several SVGs can live inline in one HTML page) and, on request,
PNG. Figures stay readable in black and white: series differ by line style, marker and
hatch, never by colour alone.

The object-oriented matplotlib API is used (``Figure`` + the SVG/Agg canvases), so no
global pyplot state is touched and no display is needed.
"""
from __future__ import annotations

import functools
import io
import math
import re
from dataclasses import dataclass, field

import matplotlib
import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from dossier import units

#: Fixed salt: matplotlib derives SVG element ids from it, so identical input gives identical bytes.
SVG_HASH_SALT = "dossier-figures"

#: Gaussian broadening of the computed spectrum, full width at half maximum (a display choice).
SPECTRUM_FWHM_CM1 = 3000.0

_RC = {
    "svg.hashsalt": SVG_HASH_SALT,
    "svg.fonttype": "none",  # text stays text: smaller files, searchable in the HTML
    "font.family": "DejaVu Sans",
    "font.size": 8.5,
    "axes.linewidth": 0.8,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "lines.linewidth": 1.3,
    "hatch.linewidth": 0.6,
    "legend.frameon": False,
    "path.simplify": False,
}

# Print-safe series styles: grey levels plus distinct dashes, markers and hatches.
_INK = ["#1b1b1b", "#5a5a5a", "#8c8c8c", "#2f4f6f", "#7a4a2a", "#3d6b3d"]
_DASHES = ["-", "--", ":", "-.", (0, (5, 1, 1, 1, 1, 1)), (0, (1, 2))]
_MARKERS = ["o", "s", "^", "D", "v", "P"]
_HATCHES = ["", "////", "\\\\\\", "xxx", "---", "|||"]
_FILLS = ["#ffffff", "#c8c8c8", "#7f7f7f", "#e6e6e6", "#4d4d4d", "#a6a6a6"]

# Radii only used to decide which atoms to join with a stick in the structure drawing:
# single-bond covalent radii in angstrom, Cordero et al., Dalton Trans. 2008, 2832-2838 (Table 2),
# rounded to 0.01 A (from memory); elements missing here are drawn without bonds guessed.
_DRAWING_RADII_ANGSTROM = {
    "H": 0.31, "B": 0.84, "C": 0.76, "N": 0.71, "O": 0.66, "F": 0.57, "Si": 1.11, "P": 1.07,
    "S": 1.05, "Cl": 1.02, "Br": 1.20, "I": 1.39, "Li": 1.28, "Na": 1.66, "K": 2.03,
    "Mg": 1.41, "Ca": 1.76, "Fe": 1.32, "Co": 1.26, "Ni": 1.24, "Cu": 1.32, "Zn": 1.22,
    "Ru": 1.46, "Rh": 1.42, "Pd": 1.39, "Ag": 1.45, "Ir": 1.41, "Pt": 1.36, "Au": 1.36,
}
_BOND_TOLERANCE = 1.2  # join atoms closer than 1.2 x (r_i + r_j): common practice, no source


@dataclass
class FigureOut:
    """One rendered figure: a stable key, where it belongs, its caption, its SVG (and PNG)."""

    key: str
    section: str  # template section the figure belongs to
    title: str
    caption: str
    svg: str
    png: bytes | None = None
    subject: dict = field(default_factory=dict)  # e.g. {"pathway": "a_to_b"} or {"state": "min_a"}


# -- output ------------------------------------------------------------------------------

_ID_RE = re.compile(r'id="([^"]+)"')


def figure_to_svg(fig: Figure, prefix: str) -> str:
    """Deterministic SVG text without XML prolog or metadata; element ids get ``prefix``."""
    buf = io.StringIO()
    with matplotlib.rc_context(_RC):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    text = buf.getvalue()
    text = re.sub(r"<\?xml[^>]*\?>\s*", "", text)
    text = re.sub(r"<!DOCTYPE[^>]*>\s*", "", text)
    text = re.sub(r"<metadata>.*?</metadata>\s*", "", text, flags=re.S)
    safe = re.sub(r"[^A-Za-z0-9_-]", "-", prefix)
    ids = set(_ID_RE.findall(text))
    for old in sorted(ids, key=len, reverse=True):
        new = f"{safe}-{old}"
        text = text.replace(f'id="{old}"', f'id="{new}"')
        text = text.replace(f"url(#{old})", f"url(#{new})")
        text = text.replace(f'href="#{old}"', f'href="#{new}"')
    # Let the figure scale with the page: keep the viewBox, drop the fixed pt size.
    text = re.sub(r'<svg([^>]*?) width="[^"]+" height="[^"]+"', r'<svg\1 class="figure-svg"', text, count=1)
    return text.strip() + "\n"


def figure_to_png(fig: Figure, dpi: int = 200) -> bytes:
    buf = io.BytesIO()
    with matplotlib.rc_context(_RC):
        FigureCanvasAgg(fig)
        fig.savefig(buf, format="png", dpi=dpi, metadata={"Software": None})
    return buf.getvalue()


def _figure(width_in: float, height_in: float) -> Figure:
    return Figure(figsize=(width_in, height_in), layout="constrained")


def _with_rc(fn):
    """Artists take their style when created: run the whole drawing under the dossier's rcParams."""
    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        with matplotlib.rc_context(_RC):
            return fn(*args, **kwargs)
    return wrapper


#: Smallest energy range an energy-profile axis shows (display choice).
MIN_PROFILE_SPAN_KJ_MOL = 2.0


def _fixed(value: float, digits: int) -> str:
    text = f"{value:.{digits}f}"
    if text.startswith("-"):
        return text[1:] if float(text) == 0.0 else "\u2212" + text[1:]  # a real minus sign, no "-0.0"
    return text


def _t(text) -> str:
    """User text for matplotlib: '$' would start mathtext, so it is escaped."""
    return str(text).replace("$", r"\$")


def _style(i: int) -> dict:
    return {"color": _INK[i % len(_INK)], "linestyle": _DASHES[i % len(_DASHES)], "marker": _MARKERS[i % len(_MARKERS)]}


def unit_label(unit: str) -> str:
    return {"kJ/mol": "kJ mol⁻¹", "kcal/mol": "kcal mol⁻¹", "eV": "eV", "cm-1": "cm⁻¹"}.get(unit, unit)


def profile_quantity(point: dict, temperature_k: float | None) -> tuple[float | None, str]:
    """The value a profile figure or table shows for a point: Gibbs at T if present, else electronic."""
    key = _temperature_key(point.get("gibbs_kj_mol") or {}, temperature_k)
    if key is not None:
        return point["gibbs_kj_mol"][key], "G"
    return point.get("electronic_kj_mol"), "E"


def profile_values(profile: dict, temperature_k: float | None) -> tuple[list[tuple[str, float]], str]:
    """(state, kJ/mol) of a profile: Gibbs at T when every point has it, else electronic energies."""
    points = profile.get("points") or []
    gibbs = [profile_quantity(p, temperature_k) for p in points]
    if points and all(q == "G" and v is not None for v, q in gibbs):
        return [(p["state"], v) for p, (v, _) in zip(points, gibbs)], "G"
    return [(p["state"], p["electronic_kj_mol"]) for p in points if p.get("electronic_kj_mol") is not None], "E"


def _temperature_key(table: dict, temperature_k: float | None) -> str | None:
    if not table:
        return None
    if temperature_k is None:
        return sorted(table, key=float)[0]
    best = min(table, key=lambda k: abs(float(k) - temperature_k))
    return best if abs(float(best) - temperature_k) < 1e-6 else None


def report_temperature(data: dict) -> float | None:
    """The temperature the report quotes (chosen by the analysis: `report.temperature_k`)."""
    return data["report"]["temperature_k"]


# -- individual figures -------------------------------------------------------------------

@_with_rc
def energy_profile_figure(profiles: list[dict], unit: str, temperature_k: float | None, *, join: bool = True) -> Figure:
    """Levels of one pathway or isomer family (one series per recipe), joined by thin lines."""
    fig = _figure(6.2, 3.4)
    ax = fig.add_subplot()
    order: list[str] = []
    for prof in profiles:
        for p in prof.get("points", []):
            if p["state"] not in order:
                order.append(p["state"])
    x_of = {s: i for i, s in enumerate(order)}
    half = 0.28
    quantity_used = set()
    for i, prof in enumerate(profiles):
        st = _style(i)
        xs, ys = [], []
        values, q = profile_values(prof, temperature_k)
        quantity_used.add(q)
        for state, value in values:
            v = units.kj_mol_to(value, unit)
            x = x_of[state]
            ax.hlines(v, x - half, x + half, colors=st["color"], linewidth=2.4, linestyles="solid")
            ax.annotate(_fixed(v, 1), (x, v), xytext=(0, -11 - 9 * i), textcoords="offset points",
                        ha="center", va="center", fontsize=7, color=st["color"])
            xs.append(x)
            ys.append(v)
        if join and len(xs) > 1:
            for (x0, y0), (x1, y1) in zip(zip(xs, ys), zip(xs[1:], ys[1:])):
                ax.plot([x0 + half, x1 - half], [y0, y1], color=st["color"], linestyle=st["linestyle"], linewidth=0.9)
        ax.plot([], [], color=st["color"], linestyle=st["linestyle"], linewidth=1.4, label=_t(prof.get("recipe", "?")))
    ax.set_xticks(range(len(order)), [_t(s) for s in order])
    ax.set_xlim(-0.6, len(order) - 0.4)
    lo, hi = ax.get_ylim()
    # nearly degenerate levels: show at least 2 kJ/mol of range, so noise does not look like a gap
    min_span = units.kj_mol_to(MIN_PROFILE_SPAN_KJ_MOL, unit)
    if hi - lo < min_span:
        mid = 0.5 * (hi + lo)
        lo, hi = mid - 0.5 * min_span, mid + 0.5 * min_span
    pad = 0.12 * (hi - lo)
    ax.set_ylim(lo - pad, hi + pad)
    symbol = "G" if quantity_used == {"G"} else ("E" if quantity_used == {"E"} else "G or E")
    ax.set_ylabel(f"relative {symbol} / {unit_label(unit)}")
    ax.spines["bottom"].set_visible(False)
    ax.tick_params(axis="x", length=0)
    if profiles:
        ax.legend(title="recipe", fontsize=7, title_fontsize=7, loc="upper left", bbox_to_anchor=(1.0, 1.0))
    return fig


def two_state_curves(reorganization_energy_kj_mol: float, delta_g0_kj_mol: float, coupling_cm1: float | None,
                     grid: np.ndarray | None = None) -> dict[str, np.ndarray]:
    """Diabatic parabolas and adiabatic surfaces of the two-state model, in kJ/mol.

    Diabatic: G_R(x) = lambda x^2, G_P(x) = lambda (x-1)^2 + dG0 (Marcus, J. Chem. Phys. 24, 966, 1956).
    Adiabatic: E_-/+ = (G_R+G_P)/2 -/+ sqrt(((G_R-G_P)/2)^2 + H_ab^2), the two-state
    (Hush) model as written by Brunschwig, Creutz and Sutin, Chem. Soc. Rev. 31, 168 (2002), eq. 5.
    """
    x = np.linspace(-0.45, 1.45, 381) if grid is None else np.asarray(grid, dtype=float)
    lam = float(reorganization_energy_kj_mol)
    g_r = lam * x**2
    g_p = lam * (x - 1.0) ** 2 + float(delta_g0_kj_mol)
    out = {"x": x, "diabatic_reactant": g_r, "diabatic_product": g_p}
    if coupling_cm1 is not None:
        hab = units.cm1_to_kj_mol(float(coupling_cm1))
        mean = 0.5 * (g_r + g_p)
        root = np.sqrt((0.5 * (g_r - g_p)) ** 2 + hab**2)
        out["adiabatic_lower"] = mean - root
        out["adiabatic_upper"] = mean + root
    return out


@_with_rc
def diabatic_figure(pathway: dict, unit: str) -> Figure:
    lam = pathway["reorganization_energy_kj_mol"]
    curves = two_state_curves(lam, pathway.get("delta_g0_kj_mol") or 0.0, pathway.get("coupling_cm1"))
    conv = units.ENERGY_UNITS_FROM_KJ_MOL[unit]
    fig = _figure(5.2, 3.4)
    ax = fig.add_subplot()
    x = curves["x"]
    ax.plot(x, curves["diabatic_reactant"] * conv, color=_INK[1], linestyle="--", label=_t(f"diabatic, {pathway.get('carrier') or 'electron'} on {pathway.get('donor_site') or 'donor'}"))
    ax.plot(x, curves["diabatic_product"] * conv, color=_INK[1], linestyle=":", label=_t(f"diabatic, {pathway.get('carrier') or 'electron'} on {pathway.get('acceptor_site') or 'acceptor'}"))
    if "adiabatic_lower" in curves:
        ax.plot(x, curves["adiabatic_lower"] * conv, color=_INK[0], linestyle="-", label="adiabatic, lower")
        ax.plot(x, curves["adiabatic_upper"] * conv, color=_INK[0], linestyle="-.", linewidth=1.0, label="adiabatic, upper")
    dg0 = pathway.get("delta_g0_kj_mol") or 0.0
    top = max(lam + abs(dg0), float(curves["adiabatic_upper"][len(x) // 2]) if "adiabatic_upper" in curves else 0.0) * 1.1
    bottom = min(0.0, dg0, float(curves["adiabatic_lower"].min()) if "adiabatic_lower" in curves else 0.0)
    ax.set_ylim((bottom - 0.06 * (top - bottom)) * conv, top * conv)
    ax.set_xlim(x[0], x[-1])
    ax.set_xlabel("electron-transfer coordinate (0 = reactant, 1 = product)")
    ax.set_ylabel(f"G / {unit_label(unit)}")
    ax.legend(fontsize=7, loc="upper center")
    return fig


@_with_rc
def site_population_figure(states: list[dict], scheme: str) -> Figure:
    """Spin (top) and charge (bottom) summed per site, for every state that has them."""
    sites: list[str] = []
    rows = []
    for st in states:
        sch = ((st.get("localization") or {}).get("schemes") or {}).get(scheme)
        if not sch:
            continue
        rows.append((st["name"], sch))
        for s in list(sch.get("spin_by_site") or {}) + list(sch.get("charge_by_site") or {}):
            if s not in sites:
                sites.append(s)
    fig = _figure(6.2, 4.4)
    axes = fig.subplots(2, 1, sharex=True)
    width = 0.8 / max(len(sites), 1)
    for ax, key, label in ((axes[0], "spin_by_site", "spin population"), (axes[1], "charge_by_site", "charge / e")):
        for j, site in enumerate(sites):
            xs = [i - 0.4 + width * (j + 0.5) for i in range(len(rows))]
            vals = [(r[1].get(key) or {}).get(site, np.nan) for r in rows]
            ax.bar(xs, vals, width * 0.92, facecolor=_FILLS[j % len(_FILLS)], edgecolor="#1b1b1b",
                   hatch=_HATCHES[j % len(_HATCHES)], linewidth=0.7, label=_t(site))
        ax.axhline(0.0, color="#1b1b1b", linewidth=0.6)
        ax.set_ylabel(label)
    axes[1].set_xticks(range(len(rows)), [_t(r[0]) for r in rows])
    if sites:  # no site named: no legend (matplotlib would warn about an empty one)
        axes[0].legend(title="site", fontsize=7, title_fontsize=7, ncols=min(len(sites), 5), loc="lower center",
                       bbox_to_anchor=(0.5, 1.0))
    return fig


def broadened_spectrum(energies_cm1, strengths, grid_cm1, fwhm_cm1: float = SPECTRUM_FWHM_CM1) -> np.ndarray:
    """Sum of unit-area Gaussians scaled by oscillator strength (a display convolution)."""
    sigma = fwhm_cm1 / (2.0 * math.sqrt(2.0 * math.log(2.0)))
    e = np.asarray(energies_cm1, dtype=float)[:, None]
    f = np.asarray(strengths, dtype=float)[:, None]
    g = np.asarray(grid_cm1, dtype=float)[None, :]
    return (f * np.exp(-0.5 * ((g - e) / sigma) ** 2) / (sigma * math.sqrt(2.0 * units.PI))).sum(axis=0)


def _cm1_to_nm(x):
    x = np.asarray(x, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(x > 0, units.NM_CM1 / np.where(x > 0, x, 1.0), np.inf)


@_with_rc
def spectrum_figure(states: list[dict]) -> Figure:
    rows = [dict(s, excited_states=[x for x in s["excited_states"] if x.get("energy_cm1")])
            for s in states if any(x.get("energy_cm1") for x in s.get("excited_states") or [])]
    fig = _figure(6.2, 1.1 + 1.5 * len(rows))
    axes = np.atleast_1d(fig.subplots(len(rows), 1, sharex=True, squeeze=False)[:, 0])
    e_all = [x["energy_cm1"] for s in rows for x in s["excited_states"] if x.get("energy_cm1")]
    lo = max(min(e_all) - 2.5 * SPECTRUM_FWHM_CM1, 500.0)
    hi = max(e_all) + 2.5 * SPECTRUM_FWHM_CM1
    grid = np.linspace(lo, hi, 600)
    for i, (ax, st) in enumerate(zip(axes, rows)):
        es = [x["energy_cm1"] for x in st["excited_states"]]
        fs = [x.get("oscillator_strength") or 0.0 for x in st["excited_states"]]
        ax.vlines(es, 0.0, fs, color=_INK[0], linewidth=1.0)
        ax.plot(es, fs, linestyle="none", marker="o", markersize=2.5, color=_INK[0])
        curve = broadened_spectrum(es, fs, grid)
        peak = curve.max()
        if peak > 0 and max(fs) > 0:
            curve = curve / peak * max(fs)
        ax.plot(grid, curve, color=_INK[1], linestyle="--", linewidth=1.0)
        ax.set_ylabel("f")
        ax.set_ylim(0.0, max(max(fs), 1e-3) * 1.25)
        ax.text(0.99, 0.9, _t(st["name"]), transform=ax.transAxes, ha="right", va="top", fontsize=8)
        if i == 0:
            sec = ax.secondary_xaxis("top", functions=(_cm1_to_nm, _cm1_to_nm))
            sec.set_xlabel("wavelength / nm")
            nm_lo, nm_hi = units.NM_CM1 / hi, units.NM_CM1 / lo
            ticks = [t for t in (100, 150, 200, 250, 300, 400, 500, 700, 1000, 1500, 2000, 3000, 5000, 10000)
                     if nm_lo <= t <= nm_hi]
            # keep ticks at least ~12 % of the axis apart (they crowd at long wavelength)
            kept: list[float] = []
            for t in sorted(ticks):
                if all(abs(units.NM_CM1 / t - units.NM_CM1 / k) > 0.12 * (hi - lo) for k in kept):
                    kept.append(t)
            sec.set_xticks(kept, [f"{t:g}" for t in kept])
    axes[-1].set_xlim(lo, hi)
    axes[-1].set_xlabel("excitation energy / cm⁻¹")
    return fig


@_with_rc
def rates_figure(pathway: dict) -> Figure:
    """log-scale rate against temperature, one series per model, with the 68/95 % bands."""
    fig = _figure(6.2, 3.4)
    ax = fig.add_subplot()
    models = []
    for r in pathway.get("rates", []):
        if r.get("model") not in models:
            models.append(r.get("model"))
    for i, model in enumerate(models):
        rs = sorted((r for r in pathway["rates"] if r.get("model") == model and r.get("rate_per_s")), key=lambda r: r["temperature_k"])
        if not rs:
            continue
        st = _style(i)
        t = [r["temperature_k"] for r in rs]
        if all(r.get("log10_rate_interval_68") for r in rs):
            ax.fill_between(t, [10 ** r["log10_rate_interval_68"][0] for r in rs], [10 ** r["log10_rate_interval_68"][1] for r in rs],
                            facecolor=st["color"], edgecolor="none", alpha=0.13)
        if all(r.get("log10_rate_interval_95") for r in rs):
            for j in (0, 1):
                ax.plot(t, [10 ** r["log10_rate_interval_95"][j] for r in rs], color=st["color"], linestyle=st["linestyle"],
                        linewidth=0.7)
        ax.plot(t, [r["rate_per_s"] for r in rs], color=st["color"], linestyle=st["linestyle"], marker=st["marker"],
                markersize=4, markerfacecolor="white", linewidth=1.6, label=_t(model))
    exp = ((pathway.get("experiment") or {}).get("rates")) or []
    if exp:
        ax.errorbar([e["temperature_k"] for e in exp], [e["rate_per_s"] for e in exp],
                    yerr=[e.get("error_per_s") or 0.0 for e in exp], linestyle="none", marker="*", markersize=8,
                    color="#000000", capsize=3, label="experiment")
    ax.set_yscale("log")
    ax.set_xlabel("T / K")
    ax.set_ylabel("k / s⁻¹ (model estimate)")
    ax.legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return fig


@_with_rc
def populations_figure(rows: list[dict]) -> Figure:
    """Boltzmann populations of one isomer family (per recipe and basis) at each temperature."""
    rows = [r for r in rows if r.get("populations")]
    temps = sorted({r["temperature_k"] for r in rows})
    states: list[str] = []
    for r in rows:
        for s in r["populations"]:
            if s not in states:
                states.append(s)
    fig = _figure(5.6, 3.0)
    ax = fig.add_subplot()
    width = 0.8 / max(len(states), 1)
    by_t = {r["temperature_k"]: r for r in rows}
    for j, s in enumerate(states):
        xs = [i - 0.4 + width * (j + 0.5) for i in range(len(temps))]
        ax.bar(xs, [100.0 * by_t[t]["populations"].get(s, 0.0) for t in temps], width * 0.92,
               facecolor=_FILLS[j % len(_FILLS)], edgecolor="#1b1b1b", hatch=_HATCHES[j % len(_HATCHES)], linewidth=0.7, label=_t(s))
    ax.set_xticks(range(len(temps)), [f"{t:g} K" for t in temps])
    ax.set_ylabel("population / %")
    ax.set_ylim(0, 100)
    ax.legend(fontsize=7, ncols=min(len(states), 5), loc="lower center", bbox_to_anchor=(0.5, 1.0))
    return fig


def projection_axes(coords: np.ndarray) -> np.ndarray:
    """Principal axes of a structure (rows), signs fixed so the drawing is reproducible."""
    c = coords - coords.mean(axis=0)
    if len(c) < 2:
        return np.eye(3)
    _, _, vt = np.linalg.svd(c, full_matrices=True)
    for i in range(3):
        proj = c @ vt[i]
        k = int(np.argmax(np.abs(proj)))
        if proj[k] < 0:
            vt[i] = -vt[i]
    return vt


def bonds(elements: list[str], coords: np.ndarray) -> list[tuple[int, int]]:
    out = []
    n = len(elements)
    d = np.linalg.norm(coords[:, None, :] - coords[None, :, :], axis=-1)
    for i in range(n):
        ri = _DRAWING_RADII_ANGSTROM.get(elements[i])
        for j in range(i + 1, n):
            rj = _DRAWING_RADII_ANGSTROM.get(elements[j])
            if ri and rj and d[i, j] < _BOND_TOLERANCE * (ri + rj):
                out.append((i, j))
    return out


def structure_figure(state: dict, sites: dict[str, list[int]], *, numbered: bool = True) -> Figure:
    """One state drawn alone in its own principal plane (dossier.report.structure_figure)."""
    from dossier.report.structure_figure import structure_drawing

    return structure_drawing(state, sites, numbered=numbered)


# -- the whole set ------------------------------------------------------------------------

def _add_structures(data: dict, add, numbered_atoms: bool) -> None:
    """Structure drawings of every state in one frame (dossier.report.structure_figure)."""
    from dossier.report.structure_figure import common_frame, structure_drawing

    sites = sites_of(data)
    states = data.get("states", [])
    coords, axes, rms = common_frame(states)
    scheme = data["report"]["population_scheme"]
    proj = [(c - c.mean(axis=0)) @ axes.T for c in coords.values()] if axes is not None else []
    extent = None
    if proj:
        allp = np.vstack(proj)
        extent = (allp[:, 0].min() - 1.0, allp[:, 0].max() + 1.0, allp[:, 1].min() - 1.0, allp[:, 1].max() + 1.1)
    for n, st in enumerate(states):
        if st["name"] not in coords:
            continue
        spin = (st.get("atom_spin_populations") or {}).get(scheme or "")
        frame = (f"superposed on the first state (Kabsch, RMSD {rms[st['name']]:.3f} Å) and drawn in its principal plane"
                 if st["name"] in rms else "in its own principal plane (its atoms differ from the first state's)")
        add(structure_drawing(st, sites, coords=coords[st["name"]], axes=axes if st["name"] in rms else None,
                              spin=spin, numbered=numbered_atoms, extent=extent if st["name"] in rms else None),
            f"structure-{n}", "states", f"Structure of {st['name']}",
            f"State {st['name']} {frame}; atoms of each site hatched"
            + (", atoms numbered as in the coordinate table" if numbered_atoms else "")
            + (f"; halos: spin population of each atom ({scheme} scheme)" if spin else "") + ".",
            {"state": st["name"]})


def profile_series(profile: dict):
    from dossier.report.profile_figure import profile_series as series

    return series(profile)


def sites_of(data: dict) -> dict[str, list[int]]:
    return dict((data.get("project") or {}).get("sites") or {})


def make_figures(data: dict, *, png: bool = False, numbered_atoms: bool = True) -> list[FigureOut]:
    """Every figure the dossier shows, in document order."""
    unit = data.get("project", {}).get("energy_unit", "kJ/mol")
    t_ref = report_temperature(data)
    t_text = f" at {t_ref:g} K" if t_ref is not None else ""
    out: list[FigureOut] = []

    def add(fig: Figure, key: str, section: str, title: str, caption: str, subject: dict) -> None:
        svg = figure_to_svg(fig, key)
        out.append(FigureOut(key, section, title, caption, svg, figure_to_png(fig) if png else None, subject))

    groups: dict[tuple[str, str], list[dict]] = {}
    for prof in data.get("energy_profiles", []):
        groups.setdefault((prof.get("kind", "pathway"), prof["name"]), []).append(prof)
    for n, ((kind, name), profs) in enumerate(groups.items()):
        join = kind == "pathway"
        what = "pathway" if join else "isomer family"
        add(energy_profile_figure(profs, unit, t_ref, join=join), f"profile-{n}", "energies",
            f"Energy profile of {what} {name}",
            f"Relative energies of {what} {name}{t_text} ({unit}), one series per recipe; Gibbs energies where "
            "frequencies exist, electronic energies otherwise. Levels are joined in pathway order." if join else
            f"Relative energies of the members of {what} {name}{t_text} ({unit}), one series per recipe.",
            {"kind": kind, "name": name})
        if kind == "pathway" and any(len(profile_series(p)) > 1 for p in profs):
            from dossier.report.profile_figure import energy_kinds_figure

            temps = sorted({float(t) for p in profs for q in p.get("points", []) for t in (q.get("gibbs_kj_mol") or {})})
            add(energy_kinds_figure(profs, unit), f"kinds-{n}", "energies", f"Energy kinds along pathway {name}",
                f"Electronic energy E (solid), E + ZPE (dashed) and Gibbs energy G (dotted) at "
                f"{', '.join(f'{t:g}' for t in temps) or 'no'} K of each state of pathway {name} ({unit}, relative to the "
                "first state), one panel per recipe: a barrier in E that disappears in E + ZPE means the double well "
                "does not survive zero-point motion.", {"kind": "kinds", "name": name})
    for n, pw in enumerate(data.get("pathways", [])):
        if pw.get("reorganization_energy_kj_mol") is not None:
            add(diabatic_figure(pw, unit), f"curves-{n}", "marcus", f"Two-state curves of pathway {pw['name']}",
                f"Diabatic parabolas (dashed, dotted) drawn from the reorganization energy "
                f"({units.kj_mol_to(pw['reorganization_energy_kj_mol'], unit):.1f} {unit}) and driving force, and the adiabatic "
                "surfaces (solid, dash-dot) from the electronic coupling"
                + (f" ({pw['coupling_cm1']:.0f} cm⁻¹)" if pw.get("coupling_cm1") is not None else " (not available)")
                + "; two-state model.", {"pathway": pw["name"]})
    scheme = data["report"]["population_scheme"]
    if scheme:
        add(site_population_figure(data["states"], scheme), "sites-0", "localization", "Spin and charge per site",
            f"Spin population (top) and charge (bottom) summed over the atoms of each site ({scheme} scheme), for every state.",
            {"scheme": scheme})
    if any(x.get("energy_cm1") for s in data.get("states", []) for x in s.get("excited_states") or []):
        add(spectrum_figure(data["states"]), "spectrum-0", "excited", "Computed excitation spectra",
            f"Computed vertical excitations (sticks, oscillator strength f) and a Gaussian broadening with a "
            f"FWHM of {SPECTRUM_FWHM_CM1:.0f} cm⁻¹ (dashed, scaled to the strongest stick); wavelength on the top axis.", {})
    for n, pw in enumerate(data.get("pathways", [])):
        if pw.get("rates"):
            add(rates_figure(pw), f"rates-{n}", "rates", f"Rates of pathway {pw['name']} against temperature",
                "Model rate estimates (thick lines with markers; shaded band: 68 % interval; thin lines of the same "
                "dash: 95 % interval of the uncertainty propagation) and experimental values (stars, with their stated "
                "errors) where given.",
                {"pathway": pw["name"]})
    fam: dict[tuple[str, str, str], list[dict]] = {}
    for row in data.get("isomer_populations", []):
        if row.get("populations"):
            fam.setdefault((row["family"], row.get("recipe", ""), row.get("basis", "")), []).append(row)
    for n, ((family, recipe, basis), rows) in enumerate(fam.items()):
        add(populations_figure(rows), f"populations-{n}", "populations", f"Populations of {family}",
            f"Boltzmann populations of isomer family {family} (recipe {recipe}, from {basis or 'relative'} energies) at each temperature.",
            {"family": family, "recipe": recipe})
    from dossier.report.transfer_figures import scan_figure, wants_scan_figure

    for n, tr in enumerate(data.get("transfers") or []):
        if wants_scan_figure(tr):
            who = (tr.get("carrier") or "charge").capitalize()
            add(scan_figure(tr), f"transfer-{n}", "transfers", f"{who} coupling against separation ({tr['name']})",
                "Coupling H_ab by route (markers) with the exponential fit (lines); right: golden-rule rate with "
                "lambda = lambda_in + lambda_out (crosses: the golden-rule formula is outside its range or cannot be judged there).",
                {"transfer": tr["name"]})
    _add_structures(data, add, numbered_atoms)
    return out
