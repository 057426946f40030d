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
    # Transfers between molecules (dossier/analysis/transfers.py): coupling routes, radii (from memory)
    "newton1991": {"type": "article", "author": "Newton, M. D.", "title": "Quantum chemical probes of electron-transfer kinetics: the nature of donor--acceptor interactions",
                   "journal": "Chem. Rev.", "year": "1991", "volume": "91", "pages": "767--792", "doi": "10.1021/cr00005a007"},
    "bredas2004": {"type": "article", "author": "Br{\\'e}das, J.-L. and Beljonne, D. and Coropceanu, V. and Cornil, J.",
                   "title": "Charge-transfer and energy-transfer processes in {$\\pi$}-conjugated oligomers and polymers: a molecular picture",
                   "journal": "Chem. Rev.", "year": "2004", "volume": "104", "pages": "4971--5004", "doi": "10.1021/cr040084k"},
    "koopmans1934": {"type": "article", "author": "Koopmans, T.", "title": "{\\\"U}ber die {Z}uordnung von {W}ellenfunktionen und {E}igenwerten zu den einzelnen {E}lektronen eines {A}toms",
                     "journal": "Physica", "year": "1934", "volume": "1", "pages": "104--113", "doi": "10.1016/S0031-8914(34)90011-2"},
    "bondi1964": {"type": "article", "author": "Bondi, A.", "title": "van der {W}aals volumes and radii",
                  "journal": "J. Phys. Chem.", "year": "1964", "volume": "68", "pages": "441--451", "doi": "10.1021/j100785a001"},
    # Added for the works the analysis cites inline (formulas, route reasons, uncertainty sources) and
    # for program versions; all recalled from memory (authors, title, journal, volume, pages, DOI).
    "psi4_11": {"type": "article", "author": "Parrish, R. M. and Burns, L. A. and Smith, D. G. A. and others", "title": "{Psi4} 1.1: An open-source electronic structure program emphasizing automation, advanced libraries, and interoperability",
                "journal": "J. Chem. Theory Comput.", "year": "2017", "volume": "13", "pages": "3185--3197", "doi": "10.1021/acs.jctc.7b00174"},
    "orca4": {"type": "article", "author": "Neese, F.", "title": "Software update: the {ORCA} program system, version 4.0",
              "journal": "WIREs Comput. Mol. Sci.", "year": "2018", "volume": "8", "pages": "e1327", "doi": "10.1002/wcms.1327"},
    "newton_sutin1984": {"type": "article", "author": "Newton, M. D. and Sutin, N.", "title": "Electron transfer reactions in condensed phases",
                         "journal": "Annu. Rev. Phys. Chem.", "year": "1984", "volume": "35", "pages": "437--480", "doi": "10.1146/annurev.pc.35.100184.002253"},
    "sutin1983": {"type": "article", "author": "Sutin, N.", "title": "Theory of electron transfer reactions: insights and hindsights",
                  "journal": "Prog. Inorg. Chem.", "year": "1983", "volume": "30", "pages": "441--498", "doi": "10.1002/9780470166314.ch9"},
    "creutz1994": {"type": "article", "author": "Creutz, C. and Newton, M. D. and Sutin, N.", "title": "Metal--ligand and metal--metal coupling elements",
                   "journal": "J. Photochem. Photobiol. A", "year": "1994", "volume": "82", "pages": "47--59", "doi": "10.1016/1010-6030(94)02013-2"},
    "cave_newton": {"type": "article", "author": "Cave, R. J. and Newton, M. D.", "title": "Generalization of the {Mulliken--Hush} treatment for the calculation of electron transfer matrix elements",
                    "journal": "Chem. Phys. Lett.", "year": "1996", "volume": "249", "pages": "15--19", "doi": "10.1016/0009-2614(95)01310-5"},
    "huang_rhys": {"type": "article", "author": "Huang, K. and Rhys, A.", "title": "Theory of light absorption and non-radiative transitions in {F}-centres",
                   "journal": "Proc. R. Soc. Lond. A", "year": "1950", "volume": "204", "pages": "406--423", "doi": "10.1098/rspa.1950.0184"},
    "reimers2001": {"type": "article", "author": "Reimers, J. R.", "title": "A practical method for the use of curvilinear coordinates in calculations of normal-mode-projected displacements and {Duschinsky} rotation matrices for large molecules",
                    "journal": "J. Chem. Phys.", "year": "2001", "volume": "115", "pages": "9103--9109", "doi": "10.1063/1.1412875"},
    "hilborn": {"type": "article", "author": "Hilborn, R. C.", "title": "Einstein coefficients, cross sections, f values, dipole moments, and all that",
                "journal": "Am. J. Phys.", "year": "1982", "volume": "50", "pages": "982--986", "doi": "10.1119/1.12937"},
    "goerigk2017": {"type": "article", "author": "Goerigk, L. and Hansen, A. and Bauer, C. and Ehrlich, S. and Najibi, A. and Grimme, S.", "title": "A look at the density functional theory zoo with the advanced {GMTKN55} database for general main group thermochemistry, kinetics and noncovalent interactions",
                    "journal": "Phys. Chem. Chem. Phys.", "year": "2017", "volume": "19", "pages": "32184--32215", "doi": "10.1039/C7CP04913G"},
    "zhao2005": {"type": "article", "author": "Zhao, Y. and Gonz{\\'a}lez-Garc{\\'i}a, N. and Truhlar, D. G.", "title": "Benchmark database of barrier heights for heavy atom transfer, nucleophilic substitution, association, and unimolecular reactions and its use to test theoretical methods",
                 "journal": "J. Phys. Chem. A", "year": "2005", "volume": "109", "pages": "2012--2018", "doi": "10.1021/jp045141s"},
    "pollak1978": {"type": "article", "author": "Pollak, E. and Pechukas, P.", "title": "Symmetry numbers, not statistical factors, should be used in absolute rate theory and in {Br{\\o}nsted} relations",
                   "journal": "J. Am. Chem. Soc.", "year": "1978", "volume": "100", "pages": "2984--2991", "doi": "10.1021/ja00478a009"},
    "fernandez2007": {"type": "article", "author": "Fern{\\'a}ndez-Ramos, A. and Ellingson, B. A. and Meana-Pa{\\~n}eda, R. and Marques, J. M. C. and Truhlar, D. G.", "title": "Symmetry numbers and chemical reaction rates",
                      "journal": "Theor. Chem. Acc.", "year": "2007", "volume": "118", "pages": "813--826", "doi": "10.1007/s00214-007-0328-0"},
    "jacquemin2009": {"type": "article", "author": "Jacquemin, D. and Wathelet, V. and Perp{\\`e}te, E. A. and Adamo, C.", "title": "Extensive {TD-DFT} benchmark: singlet-excited states of organic molecules",
                      "journal": "J. Chem. Theory Comput.", "year": "2009", "volume": "5", "pages": "2420--2435", "doi": "10.1021/ct900298e"},

}


_PROGRAM_KEYS = {"nwchem": "nwchem", "gaussian": "gaussian", "orca": "orca", "q-chem": "qchem", "qchem": "qchem",
                 "psi4": "psi4", "xtb": "xtb"}

#: Per program, its papers and the versions each describes: (key, first version, last version, described).
#: A version outside every range is cited with the nearest paper and a note that says so (the
#: version's own paper is not known to dossier). Ranges from memory of the programs' "how to cite".
PROGRAM_PAPERS: dict[str, list[tuple[str, tuple, tuple, str]]] = {
    "nwchem": [("nwchem", (7, 0), (7, 0, 99), "7.0")],
    "psi4": [("psi4_11", (1, 1), (1, 1, 99), "1.1"), ("psi4", (1, 4), (1, 4, 99), "1.4")],
    "orca": [("orca4", (4,), (4, 99), "4.0"), ("orca", (5,), (5, 99), "5.0")],
    "qchem": [("qchem", (5,), (5, 99), "5")],
    "gaussian": [("gaussian", (16,), (16, 99), "16")],
    "xtb": [("xtb", (0,), (99,), "")],
}


def _version_tuple(text: str | None) -> tuple:
    return tuple(int(x) for x in re.findall(r"\d+", text or "")[:3])


def program_citation(program: str | None, version: str | None) -> tuple[str, str] | None:
    """(reference key, why) for a program and the version that ran; the why says when the paper
    describes another version than the one that ran."""
    prog = _PROGRAM_KEYS.get((program or "").lower())
    if not prog:
        return None
    papers = PROGRAM_PAPERS[prog]
    v = _version_tuple(version)
    for key, lo, hi, described in papers:
        if v and lo <= v <= hi:
            return key, f"program {program} {version}"
    key, described = papers[-1][0], papers[-1][3]
    if v:
        earlier = [p for p in papers if p[1] <= v]
        key, described = (earlier[-1][0], earlier[-1][3]) if earlier else (papers[0][0], papers[0][3])
    ran = f"{program} {version}" if version else f"{program} (version not printed)"
    return key, f"program {ran}; this paper describes version {described}, a paper of the version that ran is not known"


#: Literature as the analysis writes it inline (formulas, route reasons, uncertainty sources), and the
#: key of the entry it means. The report replaces these with numbered citations.
TEXT_CITATIONS: list[tuple[str, str]] = [
    (r"Eyring, J\. Chem\. Phys\. 1935, 3, 107", "eyring"),
    (r"Marcus &(?:amp;)? Sutin, Biochim\. Biophys\. Acta 1985, 811, 265", "marcus_sutin"),
    (r"Jortner, J\. Chem\. Phys\. 1976, 64, 4860", "jortner"),
    (r"Nelsen, Blackstock, Kim, (?:JACS|J\. Am\. Chem\. Soc\.) 1987, 109, 677", "nelsen"),
    (r"Brunschwig, Creutz,? (?:&(?:amp;)? )?Sutin(?:, Chem\. Soc\. Rev\.)? 2002(?:, 31, 168)?", "two_state"),
    (r"Newton &(?:amp;)? Sutin, Annu\. Rev\. Phys\. Chem\. 1984, 35, 437", "newton_sutin1984"),
    (r"Hush, Prog\. Inorg\. Chem\. 1967, 8, 391", "hush"), (r"Hush 1967", "hush"),
    (r"Creutz, Newton, Sutin 1994", "creutz1994"),
    (r"Huang &(?:amp;)? Rhys 1950", "huang_rhys"),
    (r"Reimers, J\. Chem\. Phys\. 2001, 115, 9103", "reimers2001"),
    (r"Cave &(?:amp;)? Newton(?:, Chem\. Phys\. Lett\.)? 1996(?:, 249, 15)?", "cave_newton"),
    (r"Newton, Chem\. Rev\. 1991, 91, 767", "newton1991"),
    (r"Bredas et al\., Chem\. Rev\. 2004, 104, 4971", "bredas2004"),
    (r"Marcus, J\. Chem\. Phys\. 1956, 24, 966", "marcus1956"),
    (r"Koopmans 1934", "koopmans1934"), (r"Bondi 1964", "bondi1964"),
    (r"Hilborn 1982", "hilborn"),
    (r"Sutin, Prog\. Inorg\. Chem\. 1983, 30, 441", "sutin1983"), (r"Sutin 1983", "sutin1983"),
    (r"Goerigk et al\.(?:, Phys\. Chem\. Chem\. Phys\.)? 2017(?:, 19, 32184)?", "goerigk2017"),
    (r"Zhao, Gonzalez-Garcia &(?:amp;)? Truhlar(?:, J\. Phys\. Chem\. A)? 2005(?:, 109, 2012)?", "zhao2005"),
    (r"Bannwarth, Ehlert &(?:amp;)? Grimme, J\. Chem\. Theory Comput\. 2019, 15, 1652", "gfn2"),
    (r"Jacquemin et al\., J\. Chem\. Theory Comput\. 2009, 5, 2420", "jacquemin2009"),
    (r"Pollak &(?:amp;)? Pechukas(?:, J\. Am\. Chem\. Soc\.)? 1978(?:, 100, 2984)?", "pollak1978"),
    (r"Fern(?:a|á)ndez-Ramos et al\.(?:, Theor\. Chem\. Acc\.)? 2007(?:, 118, 813)?", "fernandez2007"),
]
CITATION_RE = re.compile("|".join(f"(?P<c{i}>{p})" for i, (p, _) in enumerate(TEXT_CITATIONS)))


def citation_keys(text: str | None) -> list[str]:
    """Keys of the works a plain-text string cites, in order of appearance."""
    out: list[str] = []
    for m in CITATION_RE.finditer(text or ""):
        key = TEXT_CITATIONS[int(m.lastgroup[1:])][1]
        if key not in out:
            out.append(key)
    return out


def _strings(value: Any, where: str):
    """(string, where) for every string inside a nested value."""
    if isinstance(value, str):
        yield value, where
    elif isinstance(value, dict):
        for k, v in value.items():
            yield from _strings(v, where)
    elif isinstance(value, list):
        for v in value:
            yield from _strings(v, where)


def _inline_citations(data: dict):
    """(key, why) of every work a formula, reason, note or assumption in the result cites."""
    for pw in data.get("pathways", []):
        for r in pw.get("rates", []):
            for key in citation_keys(r.get("formula")):
                yield key, f"rate model {r.get('model')}"
        for param, routes in (pw.get("routes") or {}).items():
            for r in routes:
                what = (f"route {r.get('route')} (named as not available)" if param == "unavailable"
                        else f"{param.replace('_', ' ')} by route {r.get('route')}")
                for text, _ in _strings(r, what):
                    for key in citation_keys(text):
                        yield key, what
        for text, _ in _strings(pw.get("experiment") or {}, "experiment"):
            for key in citation_keys(text):
                yield key, "analysis of the measurements"
        for text, _ in _strings({k: pw.get(k) for k in ("rates_unavailable", "ladder", "robin_day", "normal_mode",
                                                         "symmetric_transfer")}, ""):
            for key in citation_keys(text):
                yield key, f"pathway {pw.get('name')}"
    for tr in data.get("transfers") or []:
        for text, _ in _strings(tr, ""):
            for key in citation_keys(text):
                yield key, f"transfer {tr.get('name')}"
    for text, _ in _strings(data.get("uncertainty") or {}, ""):
        for key in citation_keys(text):
            yield key, "assumed uncertainties"


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
        prog = program_citation(src.get("program"), src.get("program_version"))
        if prog:
            cite(*prog)
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
        if pw.get("landau_zener"):
            cite("sutin1983", "effective nuclear frequency nu_n of the barrier crossing")
            cite("newton_sutin1984", "Landau-Zener transmission coefficient kappa_LZ")
        for r in (pw.get("routes") or {}).get("reorganization_energy", []):
            if "four" in (r.get("route") or ""):
                cite("nelsen", "four-point reorganization energy")
    for key, why in _inline_citations(data):
        cite(key, why)
    order = list(REFERENCES)
    return [{"key": k, "why": sorted(wanted[k]), **REFERENCES[k]} for k in sorted(wanted, key=order.index)]



def keys_for(kind: str, name: str) -> list[str]:
    """Reference keys for one named thing of a kind (functional, method, basis, dispersion,
    solvation, program), as cited_works picks them."""
    finder = {"functional": _functional_keys, "method": _method_keys, "basis": _basis_keys,
              "dispersion": _dispersion_keys, "solvation": _solvation_keys,
              "program": lambda n: [_PROGRAM_KEYS.get(n.lower(), "")]}[kind]
    return finder(name or "")


def program_keys(program: str | None, version: str | None) -> list[str]:
    """The reference key cited for one program at the version that ran."""
    found = program_citation(program, version)
    return [found[0]] if found else []
