"""The works a dossier cites: a table of references (BibTeX fields) and the rule that picks, from a
result dict, which of them the dossier cites and why (programs, functionals, basis sets, methods,
thermochemistry treatments, rate models and routes used). The report numbers and prints them.
"""
from __future__ import annotations

import re
from typing import Any


REFERENCES: dict[str, dict[str, str]] = {
    "nwchem": {"type": "article", "author": "Apr{\\`a}, E. and Bylaska, E. J. and de Jong, W. A. and others", "title": "{NWChem}: Past, present, and future",
               "journal": "J. Chem. Phys.", "year": "2020", "volume": "152", "pages": "184102", "doi": "10.1063/5.0004997"},
    "gaussian": {"type": "misc", "author": "Frisch, M. J. and others", "title": "Gaussian 16", "note": "Gaussian, Inc., Wallingford CT",
                 "year": "2016"},
    "orca": {"type": "article", "author": "Neese, F.", "title": "Software update: The {ORCA} program system---Version 5.0",
             "journal": "WIREs Comput. Mol. Sci.", "year": "2022", "volume": "12", "pages": "e1606", "doi": "10.1002/wcms.1606"},
    "qchem": {"type": "article", "author": "Epifanovsky, E. and others", "title": "Software for the frontiers of quantum chemistry: An overview of developments in the {Q-Chem} 5 package",
              "journal": "J. Chem. Phys.", "year": "2021", "volume": "155", "pages": "084801", "doi": "10.1063/5.0055522"},
    "psi4": {"type": "article", "author": "Smith, D. G. A. and others", "title": "{Psi4} 1.4: Open-source software for high-throughput quantum chemistry",
             "journal": "J. Chem. Phys.", "year": "2020", "volume": "152", "pages": "184108", "doi": "10.1063/5.0006002"},
    "xtb": {"type": "article", "author": "Bannwarth, C. and Caldeweyher, E. and Ehlert, S. and others", "title": "Extended tight-binding quantum chemistry methods",
            "journal": "WIREs Comput. Mol. Sci.", "year": "2021", "volume": "11", "pages": "e1493", "doi": "10.1002/wcms.1493"},
    "cclib": {"type": "article", "author": "O'Boyle, N. M. and Tenderholt, A. L. and Langner, K. M.", "title": "cclib: A library for package-independent computational chemistry algorithms",
              "journal": "J. Comput. Chem.", "year": "2008", "volume": "29", "pages": "839--845", "doi": "10.1002/jcc.20823"},
    "b3lyp": {"type": "article", "author": "Becke, A. D.", "title": "Density-functional thermochemistry. {III}. The role of exact exchange",
              "journal": "J. Chem. Phys.", "year": "1993", "volume": "98", "pages": "5648--5652", "doi": "10.1063/1.464913"},
    "bhlyp": {"type": "article", "author": "Becke, A. D.", "title": "A new mixing of {Hartree--Fock} and local density-functional theories",
              "journal": "J. Chem. Phys.", "year": "1993", "volume": "98", "pages": "1372--1377", "doi": "10.1063/1.464304"},
    "lyp": {"type": "article", "author": "Lee, C. and Yang, W. and Parr, R. G.", "title": "Development of the {Colle--Salvetti} correlation-energy formula into a functional of the electron density",
            "journal": "Phys. Rev. B", "year": "1988", "volume": "37", "pages": "785--789", "doi": "10.1103/PhysRevB.37.785"},
    "pbe": {"type": "article", "author": "Perdew, J. P. and Burke, K. and Ernzerhof, M.", "title": "Generalized gradient approximation made simple",
            "journal": "Phys. Rev. Lett.", "year": "1996", "volume": "77", "pages": "3865--3868", "doi": "10.1103/PhysRevLett.77.3865"},
    "pbe0": {"type": "article", "author": "Adamo, C. and Barone, V.", "title": "Toward reliable density functional methods without adjustable parameters: The {PBE0} model",
             "journal": "J. Chem. Phys.", "year": "1999", "volume": "110", "pages": "6158--6170", "doi": "10.1063/1.478522"},
    "m062x": {"type": "article", "author": "Zhao, Y. and Truhlar, D. G.", "title": "The {M06} suite of density functionals",
              "journal": "Theor. Chem. Acc.", "year": "2008", "volume": "120", "pages": "215--241", "doi": "10.1007/s00214-007-0310-x"},
    "wb97xd": {"type": "article", "author": "Chai, J.-D. and Head-Gordon, M.", "title": "Long-range corrected hybrid density functionals with damped atom--atom dispersion corrections",
               "journal": "Phys. Chem. Chem. Phys.", "year": "2008", "volume": "10", "pages": "6615--6620", "doi": "10.1039/b810189b"},
    "camb3lyp": {"type": "article", "author": "Yanai, T. and Tew, D. P. and Handy, N. C.", "title": "A new hybrid exchange--correlation functional using the {Coulomb}-attenuating method ({CAM-B3LYP})",
                 "journal": "Chem. Phys. Lett.", "year": "2004", "volume": "393", "pages": "51--57", "doi": "10.1016/j.cplett.2004.06.011"},
    "mp2": {"type": "article", "author": "M{\\o}ller, C. and Plesset, M. S.", "title": "Note on an approximation treatment for many-electron systems",
            "journal": "Phys. Rev.", "year": "1934", "volume": "46", "pages": "618--622", "doi": "10.1103/PhysRev.46.618"},
    "ccsd": {"type": "article", "author": "Purvis, G. D. and Bartlett, R. J.", "title": "A full coupled-cluster singles and doubles model",
             "journal": "J. Chem. Phys.", "year": "1982", "volume": "76", "pages": "1910--1918", "doi": "10.1063/1.443164"},
    "ccsdt": {"type": "article", "author": "Raghavachari, K. and Trucks, G. W. and Pople, J. A. and Head-Gordon, M.", "title": "A fifth-order perturbation comparison of electron correlation theories",
              "journal": "Chem. Phys. Lett.", "year": "1989", "volume": "157", "pages": "479--483", "doi": "10.1016/S0009-2614(89)87395-6"},
    "tddft": {"type": "article", "author": "Runge, E. and Gross, E. K. U.", "title": "Density-functional theory for time-dependent systems",
              "journal": "Phys. Rev. Lett.", "year": "1984", "volume": "52", "pages": "997--1000", "doi": "10.1103/PhysRevLett.52.997"},
    "gfn2": {"type": "article", "author": "Bannwarth, C. and Ehlert, S. and Grimme, S.", "title": "{GFN2-xTB}---An accurate and broadly parametrized self-consistent tight-binding quantum chemical method",
             "journal": "J. Chem. Theory Comput.", "year": "2019", "volume": "15", "pages": "1652--1671", "doi": "10.1021/acs.jctc.8b01176"},
    "sto3g": {"type": "article", "author": "Hehre, W. J. and Stewart, R. F. and Pople, J. A.", "title": "Self-consistent molecular-orbital methods. {I}. Use of {Gaussian} expansions of {Slater}-type atomic orbitals",
              "journal": "J. Chem. Phys.", "year": "1969", "volume": "51", "pages": "2657--2664", "doi": "10.1063/1.1672392"},
    "631g": {"type": "article", "author": "Hehre, W. J. and Ditchfield, R. and Pople, J. A.", "title": "Self-consistent molecular orbital methods. {XII}",
             "journal": "J. Chem. Phys.", "year": "1972", "volume": "56", "pages": "2257--2261", "doi": "10.1063/1.1677527"},
    "631gd": {"type": "article", "author": "Hariharan, P. C. and Pople, J. A.", "title": "The influence of polarization functions on molecular orbital hydrogenation energies",
              "journal": "Theor. Chim. Acta", "year": "1973", "volume": "28", "pages": "213--222", "doi": "10.1007/BF00533485"},
    "def2": {"type": "article", "author": "Weigend, F. and Ahlrichs, R.", "title": "Balanced basis sets of split valence, triple zeta valence and quadruple zeta valence quality for {H} to {Rn}",
             "journal": "Phys. Chem. Chem. Phys.", "year": "2005", "volume": "7", "pages": "3297--3305", "doi": "10.1039/b508541a"},
    "ccpvxz": {"type": "article", "author": "Dunning, T. H.", "title": "Gaussian basis sets for use in correlated molecular calculations. {I}",
               "journal": "J. Chem. Phys.", "year": "1989", "volume": "90", "pages": "1007--1023", "doi": "10.1063/1.456153"},
    "d3": {"type": "article", "author": "Grimme, S. and Antony, J. and Ehrlich, S. and Krieg, H.", "title": "A consistent and accurate ab initio parametrization of density functional dispersion correction ({DFT-D}) for the 94 elements {H}--{Pu}",
           "journal": "J. Chem. Phys.", "year": "2010", "volume": "132", "pages": "154104", "doi": "10.1063/1.3382344"},
    "d3bj": {"type": "article", "author": "Grimme, S. and Ehrlich, S. and Goerigk, L.", "title": "Effect of the damping function in dispersion corrected density functional theory",
             "journal": "J. Comput. Chem.", "year": "2011", "volume": "32", "pages": "1456--1465", "doi": "10.1002/jcc.21759"},
    "cosmo": {"type": "article", "author": "Klamt, A. and Sch{\\\"u}{\\\"u}rmann, G.", "title": "{COSMO}: a new approach to dielectric screening in solvents",
              "journal": "J. Chem. Soc., Perkin Trans. 2", "year": "1993", "pages": "799--805", "doi": "10.1039/P29930000799"},
    "pcm": {"type": "article", "author": "Tomasi, J. and Mennucci, B. and Cammi, R.", "title": "Quantum mechanical continuum solvation models",
            "journal": "Chem. Rev.", "year": "2005", "volume": "105", "pages": "2999--3094", "doi": "10.1021/cr9904009"},
    "smd": {"type": "article", "author": "Marenich, A. V. and Cramer, C. J. and Truhlar, D. G.", "title": "Universal solvation model based on solute electron density",
            "journal": "J. Phys. Chem. B", "year": "2009", "volume": "113", "pages": "6378--6396", "doi": "10.1021/jp810292n"},
    "qrrho_grimme": {"type": "article", "author": "Grimme, S.", "title": "Supramolecular binding thermodynamics by dispersion-corrected density functional theory",
                     "journal": "Chem. Eur. J.", "year": "2012", "volume": "18", "pages": "9955--9964", "doi": "10.1002/chem.201200497"},
    "qrrho_truhlar": {"type": "article", "author": "Ribeiro, R. F. and Marenich, A. V. and Cramer, C. J. and Truhlar, D. G.", "title": "Use of solution-phase vibrational frequencies in continuum models for the free energy of solvation",
                      "journal": "J. Phys. Chem. B", "year": "2011", "volume": "115", "pages": "14556--14562", "doi": "10.1021/jp205508z"},
    "eyring": {"type": "article", "author": "Eyring, H.", "title": "The activated complex in chemical reactions",
               "journal": "J. Chem. Phys.", "year": "1935", "volume": "3", "pages": "107--115", "doi": "10.1063/1.1749604"},
    "marcus1956": {"type": "article", "author": "Marcus, R. A.", "title": "On the theory of oxidation--reduction reactions involving electron transfer. {I}",
                   "journal": "J. Chem. Phys.", "year": "1956", "volume": "24", "pages": "966--978", "doi": "10.1063/1.1742723"},
    "marcus_sutin": {"type": "article", "author": "Marcus, R. A. and Sutin, N.", "title": "Electron transfers in chemistry and biology",
                     "journal": "Biochim. Biophys. Acta", "year": "1985", "volume": "811", "pages": "265--322", "doi": "10.1016/0304-4173(85)90014-X"},
    "hush": {"type": "article", "author": "Hush, N. S.", "title": "Intervalence-transfer absorption. Part 2",
             "journal": "Prog. Inorg. Chem.", "year": "1967", "volume": "8", "pages": "391--444", "doi": "10.1002/9780470166093.ch7"},
    "robin_day": {"type": "article", "author": "Robin, M. B. and Day, P.", "title": "Mixed valence chemistry---a survey and classification",
                  "journal": "Adv. Inorg. Chem. Radiochem.", "year": "1967", "volume": "10", "pages": "247--422", "doi": "10.1016/S0065-2792(08)60179-X"},
    "nelsen": {"type": "article", "author": "Nelsen, S. F. and Blackstock, S. C. and Kim, Y.", "title": "Estimation of inner shell {Marcus} terms for amino nitrogen compounds by molecular orbital calculations",
               "journal": "J. Am. Chem. Soc.", "year": "1987", "volume": "109", "pages": "677--682", "doi": "10.1021/ja00237a007"},
    "jortner": {"type": "article", "author": "Jortner, J.", "title": "Temperature dependent activation energy for electron transfer between biological molecules",
                "journal": "J. Chem. Phys.", "year": "1976", "volume": "64", "pages": "4860--4867", "doi": "10.1063/1.432142"},
    "two_state": {"type": "article", "author": "Brunschwig, B. S. and Creutz, C. and Sutin, N.", "title": "Optical transitions of symmetrical mixed-valence systems in the {Class II--III} transition regime",
                  "journal": "Chem. Soc. Rev.", "year": "2002", "volume": "31", "pages": "168--184", "doi": "10.1039/b008034i"},
}


_PROGRAM_KEYS = {"nwchem": "nwchem", "gaussian": "gaussian", "orca": "orca", "q-chem": "qchem", "qchem": "qchem",
                 "psi4": "psi4", "xtb": "xtb"}


def _norm(text: str | None) -> str:
    return re.sub(r"[^a-z0-9()*+]", "", (text or "").lower())


def _functional_keys(name: str) -> list[str]:
    n = _norm(name)
    table = [("camb3lyp", ["camb3lyp"]), ("b3lyp", ["b3lyp", "lyp"]), ("bhandhlyp", ["bhlyp", "lyp"]), ("bhlyp", ["bhlyp", "lyp"]),
             ("pbe0", ["pbe0"]), ("pbe1pbe", ["pbe0"]), ("m062x", ["m062x"]), ("wb97xd", ["wb97xd"]), ("pbe", ["pbe"])]
    for key, refs in table:
        if n == key or n.startswith(key):
            return refs
    return []


def _method_keys(name: str) -> list[str]:
    n = _norm(name)
    if "ccsd(t)" in n:
        return ["ccsd", "ccsdt"]
    if n.startswith("ccsd"):
        return ["ccsd"]
    if n.startswith("mp2"):
        return ["mp2"]
    if "gfn2" in n:
        return ["gfn2"]
    return []


def _basis_keys(name: str) -> list[str]:
    n = _norm(name)
    if n.startswith("sto3g"):
        return ["sto3g"]
    if n.startswith("631") or n.startswith("6311"):
        return ["631g"] + (["631gd"] if "*" in n or "(d" in n else [])
    if n.startswith("def2"):
        return ["def2"]
    if "ccpv" in n:
        return ["ccpvxz"]
    return []


def _dispersion_keys(name: str) -> list[str]:
    n = _norm(name)
    if "d3" in n:
        return ["d3", "d3bj"] if "bj" in n else ["d3"]
    return []


def _solvation_keys(name: str) -> list[str]:
    n = _norm(name)
    for key in ("cosmo", "smd", "pcm"):
        if key in n:
            return [key]
    return []


def cited_works(data: dict) -> list[dict[str, Any]]:
    """The references this dossier cites, in a stable order, each with ``key``, ``why`` and its fields."""
    wanted: dict[str, set[str]] = {}

    def cite(key: str, why: str) -> None:
        if key in REFERENCES:
            wanted.setdefault(key, set()).add(why)

    for src in data.get("sources", []):
        prog = _PROGRAM_KEYS.get((src.get("program") or "").lower())
        if prog:
            cite(prog, f"program {src.get('program')}")
        level = src.get("level") or {}
        for k in _functional_keys(level.get("functional") or ""):
            cite(k, f"functional {level.get('functional')}")
        for k in _method_keys(level.get("method") or ""):
            cite(k, f"method {level.get('method')}")
        for k in _basis_keys(level.get("basis") or ""):
            cite(k, f"basis set {level.get('basis')}")
        for k in _dispersion_keys(level.get("dispersion") or ""):
            cite(k, f"dispersion {level.get('dispersion')}")
        for k in _solvation_keys(level.get("solvation") or ""):
            cite(k, f"solvation {level.get('solvation')}")
        if "excited-states" in (src.get("job_kinds") or []) and (level.get("functional") or "").strip():
            cite("tddft", "excited states (TDDFT)")
    if data.get("sources"):
        cite("cclib", "reading of the output files")
    qrrho = (data.get("project") or {}).get("qrrho")
    if qrrho == "grimme":
        cite("qrrho_grimme", "quasi-RRHO entropy of low modes")
    elif qrrho == "truhlar":
        cite("qrrho_truhlar", "raising low frequencies (quasi-harmonic)")
    for pw in data.get("pathways", []):
        models = {r.get("model") or "" for r in pw.get("rates", [])}
        if any("eyring" in m for m in models):
            cite("eyring", "transition-state theory rates")
        if any("marcus" in m for m in models) or pw.get("reorganization_energy_kj_mol") is not None:
            cite("marcus1956", "Marcus theory")
            cite("marcus_sutin", "Marcus theory")
        if any("mlj" in m for m in models):
            cite("jortner", "Marcus-Levich-Jortner rates")
        if pw.get("coupling_cm1") is not None or (pw.get("experiment") or {}).get("band"):
            cite("hush", "Marcus-Hush analysis")
            cite("two_state", "two-state model")
        if pw.get("robin_day_class") or pw.get("robin_day"):
            cite("robin_day", "Robin-Day classification")
        for r in (pw.get("routes") or {}).get("reorganization_energy", []):
            if "four" in (r.get("route") or ""):
                cite("nelsen", "four-point reorganization energy")
    order = list(REFERENCES)
    return [{"key": k, "why": sorted(wanted[k]), **REFERENCES[k]} for k in sorted(wanted, key=order.index)]



def keys_for(kind: str, name: str) -> list[str]:
    """Reference keys for one named thing of a kind (functional, method, basis, dispersion,
    solvation, program), as cited_works picks them."""
    finder = {"functional": _functional_keys, "method": _method_keys, "basis": _basis_keys,
              "dispersion": _dispersion_keys, "solvation": _solvation_keys,
              "program": lambda n: [_PROGRAM_KEYS.get(n.lower(), "")]}[kind]
    return finder(name or "")
