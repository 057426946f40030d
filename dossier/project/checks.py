"""Physics-aware checks of a bound Project: the project errors no single file shows.

``run_checks(project, *, previous_sources=None) -> list[Finding]``. Each finding has a
severity ("error" | "warning" | "info"), a short code of our own (see ``CODES``), the
state it concerns (or None), the file as the manifest writes it (or None) and a
one-sentence message. Findings come errors first, then warnings, then infos, each
group in manifest order.

Thresholds (module constants, quoted in every message that uses them):

- imaginary modes: a mode with |nu| below the project's ``imaginary_threshold_cm1``
  (default 20 cm-1) is treated as numerical noise (grid/convergence artefacts of the
  frequency job) and gives a warning, not an error. Common practice, no source.
- transition-state mode direction: the geometry difference min_b - min_a (both
  Kabsch-aligned onto the frequency job's TS geometry) projected on the imaginary mode's
  displacement vector; |cos| >= ``TS_MODE_COS_OK`` (0.5) passes, below
  ``TS_MODE_COS_ERROR`` (0.25) is an error, between is a warning. Common practice, no source.
- same geometry: RMSD after Kabsch alignment <= ``SAME_GEOMETRY_RMSD_ANGSTROM`` (0.01 A);
  coordinates are printed to 1e-4..1e-6 A, so a real re-optimisation or a different
  structure exceeds this by far. Common practice, no source.
- spin contamination: |<S^2> - S(S+1)| > ``SPIN_CONTAMINATION_LIMIT`` (0.1). Common
  practice, no source (a deviation of about 10 % of S(S+1) for a doublet is the usual
  warning level, e.g. D. Young, Computational Chemistry, Wiley 2001, ch. 27, from memory).
- duplicate states: RMSD <= 0.01 A and |E_a - E_b| <= ``DUPLICATE_ENERGY_HARTREE`` (1e-6 Eh).
"""
from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import asdict, dataclass

import numpy as np

from dossier import units
from dossier.science import geometry
from dossier.project.model import FOUR_POINT_KEYS, Project, State
from dossier.records import Calculation

SEVERITIES = ("error", "warning", "info")

TS_MODE_COS_OK = 0.5
TS_MODE_COS_ERROR = 0.25
SAME_GEOMETRY_RMSD_ANGSTROM = 0.01
SPIN_CONTAMINATION_LIMIT = 0.1
DUPLICATE_ENERGY_HARTREE = 1e-6
TEMPERATURE_MATCH_K = 0.01
PRESSURE_MATCH_PA = 1.0

#: Every finding code, with what it means. Codes are our own.
CODES = {
    "IMAG-MIN": "a minimum has an imaginary mode beyond the noise threshold",
    "IMAG-TS": "a transition state does not have exactly one imaginary mode beyond the threshold",
    "IMAG-NOISE": "a small imaginary mode below the threshold (numerical noise; tighten the job)",
    "NO-FREQ": "a state has no frequency job, so its role is unverified",
    "ROLE-GUESS": "a state's role was not given and was taken from its imaginary count",
    "ROLE-PATHWAY": "a pathway's reactant/product is not a minimum or its transition state is not one",
    "TS-MODE": "the transition-state mode does not point from one minimum towards the other",
    "TS-MODE-UNCHECKED": "the transition-state mode direction could not be checked",
    "TS-ENERGY": "at some recipe's electronic energies a transition state lies below a minimum it connects",
    "RUN-FAILED": "a job ended with an error",
    "RUN-TRUNCATED": "a job's output stops before the end (cut off)",
    "RUN-STATUS": "a job's status is not 'ok' for another reason",
    "SCF-CONV": "the SCF did not converge",
    "OPT-CONV": "the geometry optimisation did not converge",
    "NOT-OPT": "a state's geometry job is not an optimisation",
    "READ-NOTE": "the reader noted a problem in the file",
    "LEVEL-MIX": "levels of theory differ along a profile or between parts of one state",
    "LEVEL-UNKNOWN": "the level of theory of a file could not be read",
    "SP-GEOM": "a single point was not run at the geometry of the state it refines",
    "FREQ-GEOM": "a frequency job was not run at the state's geometry",
    "TD-GEOM": "an excited-state job was not run at the state's geometry",
    "TD-EMPTY": "an excited-states file holds no excited states",
    "ATOM-ORDER": "two structures of one pathway/state list their atoms in different orders",
    "FORMULA": "structures that should be the same molecule have different formulas",
    "CHARGE-MULT": "charge or multiplicity differ where they must agree",
    "SPIN-CONTAM": "spin contamination beyond the threshold",
    "ENERGY-MISSING": "a file that a recipe takes an energy from has no energy",
    "THERMO-T": "the program printed thermochemistry at another temperature than the project's",
    "THERMO-SS": "the program printed thermochemistry at another standard state than the project's",
    "DUP-FILE": "the same file is the geometry of two states",
    "DUP-STATE": "two states are the same structure with the same energy",
    "SITE-OVERLAP": "two sites of a pathway share atoms",
    "FOUR-POINT": "the four-point files are inconsistent (geometry, charge or multiplicity)",
    "SRC-CHANGED": "a source file changed since the last build",
    "SRC-NEW": "a source file was not part of the last build",
    "SRC-GONE": "a file of the last build is no longer used",
    "MANIFEST": "a manifest remark (a legal but unusual construction)",
}


@dataclass(frozen=True)
class Finding:
    severity: str
    code: str
    state: str | None
    file: str | None
    message: str

    def to_dict(self) -> dict:
        return asdict(self)

    def line(self) -> str:
        where = ", ".join(x for x in (f"state {self.state}" if self.state else None, self.file) if x)
        return f"{self.code}: {self.message}" + (f" [{where}]" if where else "")


class _Collector:
    def __init__(self, project: Project):
        self.project = project
        self.items: list[Finding] = []
        self._seen: set = set()

    def add(self, severity: str, code: str, message: str, *, state: str | None = None,
            record: Calculation | None = None, file: str | None = None) -> None:
        assert severity in SEVERITIES and code in CODES
        if file is None and record is not None:
            file = self.project.label(record)
        finding = Finding(severity, code, state, file, message)
        key = (severity, code, state, file, message)
        if key not in self._seen:
            self._seen.add(key)
            self.items.append(finding)


def _level(rec: Calculation) -> str | None:
    lv = rec.level
    if not (lv.functional or lv.method):
        return None
    return lv.label()


def _coords(rec: Calculation) -> np.ndarray:
    return np.asarray(rec.coordinates_angstrom, dtype=float)


def _part_word(part: str) -> str:
    return part.replace("_", " ").replace("single point:", "single point ")


# ---------------------------------------------------------------------------
def _check_status(c: _Collector, state: str | None, part: str, rec: Calculation) -> None:
    st = rec.status
    why = f" ({st.reason})" if st.reason else ""
    w = _part_word(part)
    if st.word == "truncated":
        tail = "; the optimisation had not converged" if st.optimization_converged is False else ""
        c.add("error", "RUN-TRUNCATED", f"{w}: the output stops before the end{why}{tail}; "
                                        "rerun or restart the job", state=state, record=rec)
    elif st.word == "failed":
        c.add("error", "RUN-FAILED", f"{w}: the job ended with an error{why}", state=state, record=rec)
    if st.word != "truncated":
        why = f" ({st.reason})" if st.reason and "converge" not in st.reason else ""
        if st.scf_converged is False:
            c.add("error", "SCF-CONV", f"{w}: the SCF did not converge{why}; rerun it to convergence",
                  state=state, record=rec)
        if st.optimization_converged is False:
            c.add("error", "OPT-CONV", f"{w}: the geometry optimisation did not converge{why}; "
                                       "continue it from its last geometry", state=state, record=rec)
    if st.word not in ("ok", "truncated", "failed") and st.scf_converged is not False \
            and st.optimization_converged is not False:
        code = "RUN-STATUS"
        if st.word == "not-converged":
            code = "OPT-CONV" if "optimization" in rec.job_kinds else "SCF-CONV"
        c.add("error", code, f"{w}: status '{st.word}'{why}", state=state, record=rec)
    for problem in rec.problems:
        if "spin contamination" in problem.lower():
            continue  # SPIN-CONTAM reports it, with the threshold
        if st.word != "ok" and st.reason and st.reason in problem:
            continue  # the status finding above says it
        c.add("info", "READ-NOTE", f"{_part_word(part)}: {problem}", state=state, record=rec)


def _check_spin(c: _Collector, state: str | None, part: str, rec: Calculation) -> None:
    dev = rec.s2_deviation
    if dev is not None and abs(dev) > SPIN_CONTAMINATION_LIMIT:
        c.add("warning", "SPIN-CONTAM",
              f"{_part_word(part)}: <S^2> = {rec.s2:.4f} against S(S+1) = {rec.s2_ideal:.4f} for multiplicity "
              f"{rec.multiplicity} (deviation {dev:+.3f} > {SPIN_CONTAMINATION_LIMIT}); the unrestricted "
              "wavefunction mixes in higher spin states", state=state, record=rec)


def _same_structure(c: _Collector, state: str, part: str, rec: Calculation, ref: Calculation,
                    code: str, what: str) -> None:
    """`rec` must have the atoms, order and geometry of the state's geometry job `ref`."""
    if not rec.elements or not rec.coordinates_angstrom or not ref.elements or not ref.coordinates_angstrom:
        return  # a cut-off job has no final geometry; RUN-TRUNCATED says so
    if sorted(rec.elements) != sorted(ref.elements):
        c.add("error", "FORMULA", f"{_part_word(part)} is {rec.formula or '?'} but the state's geometry job is "
                                  f"{ref.formula}; it belongs to another molecule", state=state, record=rec)
        return
    if not geometry.same_atom_order(rec.elements, ref.elements):
        c.add("error", "ATOM-ORDER", f"{_part_word(part)} lists the atoms in a different order than the "
                                     "state's geometry job; atom numbers (sites) would point at other atoms",
              state=state, record=rec)
        return
    d = geometry.kabsch_rmsd(rec.coordinates_angstrom, ref.coordinates_angstrom)
    if d > SAME_GEOMETRY_RMSD_ANGSTROM:
        c.add("error", code, f"{_part_word(part)} was run at a geometry {d:.3f} A RMSD (after alignment) from the "
                             f"state's optimised geometry (limit {SAME_GEOMETRY_RMSD_ANGSTROM} A); {what}",
              state=state, record=rec)
    if (rec.charge, rec.multiplicity) != (ref.charge, ref.multiplicity) and None not in (
            rec.charge, rec.multiplicity, ref.charge, ref.multiplicity):
        c.add("error", "CHARGE-MULT", f"{_part_word(part)} has charge {rec.charge}, multiplicity {rec.multiplicity}"
                                      f"; the geometry job has charge {ref.charge}, multiplicity {ref.multiplicity}",
              state=state, record=rec)


def _check_state(c: _Collector, project: Project, st: State) -> None:
    thr = project.settings.imaginary_threshold_cm1
    geom = st.geometry
    for part, rec in st.records():
        if part == "frequencies" and rec is geom:
            continue
        _check_status(c, st.name, part, rec)
        _check_spin(c, st.name, part, rec)
    optimised = "optimization" in geom.job_kinds or len(geom.optimization_energies_hartree) > 1
    if geom.job_kinds and not optimised:
        c.add("warning", "NOT-OPT", f"the geometry job is a {', '.join(geom.job_kinds)} job, not an optimisation; "
                                    "the state's structure is an input, not a stationary point",
              state=st.name, record=geom)

    # role against imaginary count
    freq = st.frequencies
    if st.role_source == "imaginary count":
        c.add("info", "ROLE-GUESS", f"role '{st.role}' taken from the imaginary count; write role = "
                                    f"\"{st.role}\" in the manifest to confirm", state=st.name, record=freq)
    if freq is None:
        c.add("warning", "NO-FREQ", f"no frequency job: the {st.role} role cannot be verified "
                                    "(and no thermal correction can be computed)", state=st.name, record=geom)
    elif freq.vibrations is None:
        c.add("warning", "NO-FREQ", f"the frequency job holds no frequencies (status {freq.status.word}): the "
                                    f"{st.role} role cannot be verified", state=st.name, record=freq)
    else:
        wn = freq.vibrations.wavenumbers_cm1
        big = [w for w in wn if w < -thr]
        small = [w for w in wn if -thr <= w < 0]
        fmt = ", ".join(f"{abs(w):.1f}i" for w in big)
        if st.role == "minimum" and big:
            c.add("error", "IMAG-MIN", f"role minimum, but the frequency job has {len(big)} imaginary mode(s) "
                                       f"({fmt} cm-1) beyond the {thr:g} cm-1 noise threshold; it is a saddle "
                                       "point: follow the mode and re-optimise", state=st.name, record=freq)
        if st.role == "transition-state" and len(big) != 1:
            if not big:
                msg = (f"role transition-state, but the frequency job has no imaginary mode beyond the {thr:g} cm-1 "
                       "noise threshold; it is a minimum, not a transition state")
            else:
                msg = (f"role transition-state, but the frequency job has {len(big)} imaginary modes ({fmt} cm-1); "
                       "a first-order saddle point has exactly one")
            c.add("error", "IMAG-TS", msg, state=st.name, record=freq)
        if small:
            fmt_s = ", ".join(f"{abs(w):.1f}i" for w in small)
            c.add("warning", "IMAG-NOISE", f"small imaginary mode(s) {fmt_s} cm-1 below the {thr:g} cm-1 threshold, "
                                           "taken as numerical noise and left out of the thermochemistry; a tighter "
                                           "grid or convergence would remove them", state=st.name, record=freq)
        if freq is not geom:
            _same_structure(c, st.name, "frequencies", freq, geom, "FREQ-GEOM",
                            "its modes and thermal correction describe another structure; rerun it at the final "
                            "geometry")
            lf, lg = _level(freq), _level(geom)
            if lf and lg and lf.casefold() != lg.casefold():
                c.add("error", "LEVEL-MIX", f"frequencies at {lf} but the geometry was optimised at {lg}; the "
                                            "structure is a stationary point only at its own level",
                      state=st.name, record=freq)
        _check_printed_thermo(c, project, st, freq)

    for key, sp in st.single_points.items():
        _same_structure(c, st.name, f"single point:{key}", sp, geom, "SP-GEOM",
                        "it does not refine this state; rerun it at the final geometry")
    if st.excited_states is not None:
        td = st.excited_states
        if not td.excited_states:
            c.add("warning", "TD-EMPTY", "the excited-states file holds no excited states", state=st.name, record=td)
        _same_structure(c, st.name, "excited_states", td, geom, "TD-GEOM",
                        "vertical excitations belong to another structure; rerun at the final geometry")
    for part, rec in st.records():
        if _level(rec) is None:
            c.add("info", "LEVEL-UNKNOWN", f"{_part_word(part)}: level of theory not read from the file; "
                                           "the one-level check skips it", state=st.name, record=rec)


def _check_printed_thermo(c: _Collector, project: Project, st: State, freq: Calculation) -> None:
    pt = freq.printed_thermo
    if pt is None:
        return
    temps = project.settings.temperatures_k
    if pt.temperature_k is not None and not any(abs(pt.temperature_k - t) <= TEMPERATURE_MATCH_K for t in temps):
        c.add("info", "THERMO-T", f"the program printed thermochemistry at {pt.temperature_k:g} K; the project uses "
                                  f"{', '.join(f'{t:g}' for t in temps)} K. The dossier computes its own, so the "
                                  "printed values are not used", state=st.name, record=freq)
    ss = project.settings.standard_state
    if pt.pressure_pa is not None:
        expected = {"1atm": units.STANDARD_ATMOSPHERE_PA, "1bar": units.BAR_PA}.get(ss)
        if expected is None or abs(pt.pressure_pa - expected) > PRESSURE_MATCH_PA:
            t = pt.temperature_k or temps[0]
            # G(ss) - G(p): ideal-gas change of standard state, RT ln(p_ss / p), with p_ss = c RT for 1 mol/L
            p_ss = expected if expected is not None else 1000.0 * units.GAS_CONSTANT_J_MOL_K * t
            shift = units.rt_kj_mol(t) * math.log(p_ss / pt.pressure_pa)
            c.add("info", "THERMO-SS", f"the program printed thermochemistry at {pt.pressure_pa:g} Pa; the project's "
                                       f"standard state is {ss}, which shifts G by {shift:+.2f} kJ/mol at {t:g} K. "
                                       "The dossier computes its own", state=st.name, record=freq)


def _check_structures_agree(c: _Collector, names: list[str], project: Project, what: str, *,
                            require_order: bool) -> bool:
    states = project.states
    ref = states[names[0]].geometry
    ok = True
    for n in names[1:]:
        rec = states[n].geometry
        if sorted(rec.elements) != sorted(ref.elements):
            c.add("error", "FORMULA", f"{what}: '{n}' is {rec.formula} but '{names[0]}' is {ref.formula}",
                  state=n, record=rec)
            ok = False
        elif require_order and not geometry.same_atom_order(rec.elements, ref.elements):
            c.add("error", "ATOM-ORDER", f"{what}: '{n}' lists its atoms in a different order than '{names[0]}'; "
                                         "sites and geometry differences would compare different atoms",
                  state=n, record=rec)
            ok = False
        if (rec.charge, rec.multiplicity) != (ref.charge, ref.multiplicity) and None not in (
                rec.charge, rec.multiplicity, ref.charge, ref.multiplicity):
            c.add("error", "CHARGE-MULT", f"{what}: '{n}' has charge {rec.charge}, multiplicity {rec.multiplicity}; "
                                          f"'{names[0]}' has charge {ref.charge}, multiplicity {ref.multiplicity}",
                  state=n, record=rec)
    return ok


def _electronic_record(project: Project, state: State, recipe_name: str) -> tuple[str, Calculation]:
    rc = project.recipes[recipe_name]
    if rc.electronic == "geometry":
        return "geometry", state.geometry
    return f"single point:{rc.electronic}", state.single_points[rc.electronic]


def _check_levels(c: _Collector, project: Project, names: list[str], recipe_names: Iterable[str], what: str) -> None:
    for rname in dict.fromkeys(recipe_names):
        rc = project.recipes[rname]
        parts: dict[str, dict[str, list[str]]] = {"electronic energy": {}, "geometry": {}, "thermal correction": {}}
        for n in names:
            st = project.states[n]
            part, rec = _electronic_record(project, st, rname)
            if rec.energy_hartree is None:
                c.add("error", "ENERGY-MISSING", f"{what}, recipe '{rname}': {_part_word(part)} has no final energy",
                      state=n, record=rec)
            sources = [("electronic energy", rec), ("geometry", st.geometry)]
            if rc.thermal == "frequencies" and st.frequencies is not None:
                sources.append(("thermal correction", st.frequencies))
            for what_part, r in sources:
                if (lv := _level(r)):
                    parts[what_part].setdefault(lv.casefold(), [lv]).append(n)
        mixed = {part: by_level for part, by_level in parts.items() if len(by_level) > 1}
        if mixed:
            desc = "; ".join(f"{part}: " + ", ".join(f"{ns[0]} ({', '.join(ns[1:])})" for ns in by_level.values())
                             for part, by_level in mixed.items())
            sev, tail = ("info", "the recipe allows mixed levels") if rc.mixed_levels else (
                "error", "energies at different levels do not subtract; use one level or set "
                         "mixed_levels = true in the recipe")
            # name the odd one out: the first state outside the most common level of the first mixed part
            groups = sorted(next(iter(mixed.values())).values(), key=lambda ns: -len(ns))
            odd = groups[-1][1]
            part_name = next(iter(mixed))
            st = project.states[odd]
            rec = {"electronic energy": _electronic_record(project, st, rname)[1], "geometry": st.geometry,
                   "thermal correction": st.frequencies}[part_name]
            c.add(sev, "LEVEL-MIX", f"{what}, recipe '{rname}': levels of theory differ along the profile "
                                    f"[{desc}]; {tail}", state=odd, record=rec)


def _check_pathway(c: _Collector, project: Project, pw) -> None:
    states = project.states
    names = pw.state_names
    what = f"pathway '{pw.name}'"
    for n in (pw.reactant, pw.product):
        if states[n].role != "minimum":
            c.add("error", "ROLE-PATHWAY", f"{what}: '{n}' is reactant/product but its role is {states[n].role}",
                  state=n, record=states[n].geometry)
    if pw.transition_state and states[pw.transition_state].role != "transition-state":
        c.add("error", "ROLE-PATHWAY", f"{what}: '{pw.transition_state}' is the transition state but its role is "
                                       f"{states[pw.transition_state].role}",
              state=pw.transition_state, record=states[pw.transition_state].geometry)
    agree = _check_structures_agree(c, names, project, what, require_order=True)
    _check_levels(c, project, names, [pw.recipe, *pw.levels.values(), *pw.ladder], what)
    for a, b in ((pw.donor_site, pw.acceptor_site), (pw.donor_site, pw.bridge_site), (pw.acceptor_site, pw.bridge_site)):
        if a and b and a != b:
            common = sorted(set(project.sites[a]) & set(project.sites[b]))
            if common:
                c.add("warning", "SITE-OVERLAP", f"{what}: sites '{a}' and '{b}' share atom(s) "
                                                 f"{', '.join(str(i + 1) for i in common)}; shares by site "
                                                 "will count them twice", state=None)
    if pw.transition_state and agree:
        _check_ts_mode(c, project, pw)
        ts = states[pw.transition_state]
        for rname in dict.fromkeys([pw.recipe, *pw.levels.values(), *pw.ladder]):
            part, ts_rec = _electronic_record(project, ts, rname)
            levels = {(_level(_electronic_record(project, states[n], rname)[1]) or "").casefold() for n in names}
            if ts_rec.energy_hartree is None or len(levels) != 1:
                continue  # LEVEL-MIX / ENERGY-MISSING say why
            for n in (pw.reactant, pw.product):
                e = _electronic_record(project, states[n], rname)[1].energy_hartree
                if e is not None and ts_rec.energy_hartree < e:
                    c.add("warning", "TS-ENERGY", f"{what}, recipe '{rname}': the transition state's electronic "
                                                  f"energy ({_part_word(part)}) is "
                                                  f"{units.hartree_to_kj_mol(e - ts_rec.energy_hartree):.2f} kJ/mol "
                                                  f"below '{n}'; at this level the barrier is negative",
                          state=ts.name, record=ts_rec)
    if pw.four_point:
        _check_four_point(c, project, pw)


def _check_ts_mode(c: _Collector, project: Project, pw) -> None:
    states = project.states
    ts = states[pw.transition_state]
    freq = ts.frequencies
    thr = project.settings.imaginary_threshold_cm1
    if freq is None or freq.vibrations is None:
        return
    vib = freq.vibrations
    imag = [i for i, w in enumerate(vib.wavenumbers_cm1) if w < -thr]
    if len(imag) != 1:
        return  # IMAG-TS already says why
    if not vib.displacements or len(vib.displacements) <= imag[0]:
        c.add("info", "TS-MODE-UNCHECKED", f"pathway '{pw.name}': the frequency job carries no normal-mode "
                                           "displacements, so the mode direction was not checked",
              state=ts.name, record=freq)
        return
    mode = np.asarray(vib.displacements[imag[0]], dtype=float)
    ref = freq.coordinates_angstrom or ts.geometry.coordinates_angstrom
    a, b = states[pw.reactant].geometry, states[pw.product].geometry
    if mode.shape != np.asarray(ref).shape or len(a.coordinates_angstrom) != len(ref) \
            or len(b.coordinates_angstrom) != len(ref):
        c.add("info", "TS-MODE-UNCHECKED", f"pathway '{pw.name}': the mode and the geometries have different atom "
                                           "counts; the mode direction was not checked", state=ts.name, record=freq)
        return
    delta = geometry.align(b.coordinates_angstrom, ref) - geometry.align(a.coordinates_angstrom, ref)
    if np.linalg.norm(delta) < 1e-6:
        return  # reactant and product are the same structure: DUP-STATE says so
    cos = abs(geometry.displacement_cosine(delta, mode))
    nu = abs(vib.wavenumbers_cm1[imag[0]])
    if cos < TS_MODE_COS_OK:
        sev = "error" if cos < TS_MODE_COS_ERROR else "warning"
        c.add(sev, "TS-MODE", f"pathway '{pw.name}': the imaginary mode ({nu:.1f}i cm-1) is nearly orthogonal to the "
                              f"change from '{pw.reactant}' to '{pw.product}' (|cos| = {cos:.2f}; passes at >= "
                              f"{TS_MODE_COS_OK}); this saddle point probably belongs to another process — "
                              "follow the mode (IRC) to see which minima it connects", state=ts.name, record=freq)


def _check_four_point(c: _Collector, project: Project, pw) -> None:
    fp = pw.four_point
    files = pw.four_point_files or {}
    what = f"pathway '{pw.name}' four_point"
    for k in FOUR_POINT_KEYS:
        _check_status(c, None, k, fp[k])
        _check_spin(c, None, k, fp[k])
    pairs_same_state = (("reactant_at_reactant", "reactant_at_product"), ("product_at_product", "product_at_reactant"))
    for a, b in pairs_same_state:
        ra, rb = fp[a], fp[b]
        if (ra.charge, ra.multiplicity) != (rb.charge, rb.multiplicity):
            c.add("error", "FOUR-POINT", f"{what}: {a} has charge {ra.charge}, multiplicity {ra.multiplicity} but "
                                         f"{b} has charge {rb.charge}, multiplicity {rb.multiplicity}; both must be "
                                         "the same electronic state", file=files.get(b))
    pairs_same_geometry = (("reactant_at_product", "product_at_product"), ("product_at_reactant", "reactant_at_reactant"))
    for a, b in pairs_same_geometry:
        ra, rb = fp[a], fp[b]
        if not ra.coordinates_angstrom or not rb.coordinates_angstrom:
            continue  # a job that did not finish has no geometry to compare (its status is reported above)
        if not geometry.same_atom_order(ra.elements, rb.elements):
            c.add("error", "FOUR-POINT", f"{what}: {a} and {b} list different atoms or atom orders; "
                                         "they must share one geometry", file=files.get(a))
            continue
        d = geometry.kabsch_rmsd(ra.coordinates_angstrom, rb.coordinates_angstrom)
        if d > SAME_GEOMETRY_RMSD_ANGSTROM:
            c.add("error", "FOUR-POINT", f"{what}: {a} was run {d:.3f} A RMSD from the geometry of {b} "
                                         f"(limit {SAME_GEOMETRY_RMSD_ANGSTROM} A); the vertical energy is taken "
                                         "at the wrong structure", file=files.get(a))
    levels = {k: _level(fp[k]) for k in FOUR_POINT_KEYS if _level(fp[k])}
    if len({v.casefold() for v in levels.values()}) > 1:
        desc = "; ".join(f"{k}: {v}" for k, v in levels.items())
        c.add("error", "LEVEL-MIX", f"{what}: the four energies come from different levels ({desc})", state=None)


def _check_duplicates(c: _Collector, project: Project) -> None:
    by_file: dict = {}
    for st in project.states.values():
        key = project.label(st.geometry)
        if key in by_file:
            c.add("error", "DUP-FILE", f"the geometry file is also the geometry of state '{by_file[key]}'; "
                                       "two states cannot be one calculation", state=st.name, file=key)
        else:
            by_file[key] = st.name
    # same structure, same energy: sort by energy and compare only within the energy window
    labels = {n: project.label(st.geometry) for n, st in project.states.items()}
    order = {n: i for i, n in enumerate(project.states)}
    items = sorted(((st.geometry.energy_hartree, n) for n, st in project.states.items()
                    if st.geometry.energy_hartree is not None and st.geometry.coordinates_angstrom),
                   key=lambda x: x[0])
    for i, (ea, na) in enumerate(items):
        a = project.states[na].geometry
        for eb, nb in items[i + 1:]:
            if eb - ea > DUPLICATE_ENERGY_HARTREE:
                break
            b = project.states[nb].geometry
            if labels[na] == labels[nb] or a.elements != b.elements:
                continue
            first, second = sorted((na, nb), key=order.get)
            if geometry.kabsch_rmsd(a.coordinates_angstrom, b.coordinates_angstrom) <= SAME_GEOMETRY_RMSD_ANGSTROM:
                c.add("warning", "DUP-STATE", f"'{first}' and '{second}' are the same structure (RMSD <= "
                                              f"{SAME_GEOMETRY_RMSD_ANGSTROM} A) with the same energy; both "
                                              "optimisations reached one minimum", state=second,
                      record=project.states[second].geometry)


def _check_sources(c: _Collector, project: Project, previous_sources) -> None:
    if isinstance(previous_sources, Mapping):
        prev = {str(k): (v["sha256"] if isinstance(v, Mapping) else str(v)) for k, v in previous_sources.items()}
    else:
        prev = {str(s["path"]): str(s["sha256"]) for s in previous_sources}
    used = set()
    for path, rec in project.records.items():
        label = project.label(path)
        used.add(label)
        if label not in prev:
            c.add("info", "SRC-NEW", "this file was not part of the last build", file=label)
        elif prev[label] != rec.source.sha256:
            c.add("warning", "SRC-CHANGED", f"the file changed since the last build (SHA-256 {prev[label][:12]}... "
                                            f"then, {rec.source.sha256[:12]}... now); rebuild the dossier",
                  file=label)
    for label in prev:
        if label not in used:
            c.add("info", "SRC-GONE", "the last build used this file; the manifest no longer names it", file=label)


def run_checks(project: Project, *, previous_sources=None) -> list[Finding]:
    """All findings for a project; errors first, then warnings, then infos."""
    c = _Collector(project)
    for w in project.warnings:
        c.add("warning", "MANIFEST", w)
    for st in project.states.values():
        _check_state(c, project, st)
    for pw in project.pathways:
        _check_pathway(c, project, pw)
    for fam in project.isomer_families:
        what = f"isomer family '{fam.name}'"
        _check_structures_agree(c, fam.states, project, what, require_order=False)
        _check_levels(c, project, fam.states, [fam.recipe], what)
    _check_duplicates(c, project)
    if previous_sources is not None:
        _check_sources(c, project, previous_sources)
    order = {s: i for i, s in enumerate(SEVERITIES)}
    return sorted(c.items, key=lambda f: order[f.severity])
