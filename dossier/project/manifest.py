"""Reading and validating a manifest (`dossier.toml`): ``load_manifest(path) -> Manifest``.

The TOML text alone is checked here (types, names, references, files present); what needs
the records (atom counts, frequencies present) is checked by ``dossier.project.bind``.
``load_manifest`` calls one validator per table, in this order: [project], [sites],
[states], [recipes], [[pathways]], [[isomer_families]], then the pass-through tables
[uncertainty] and [experiment] (raw here; their own modules validate their content).

Every error is one line, ``<manifest>:<line>: <what is wrong>; <what to do>``.
tomllib reports syntax errors with a line and column; for everything else the line is
found in the raw text by :class:`dossier.project.locator.Locator` (tomllib keeps no positions).
Unknown keys in every checked table are errors (a typo such as ``frequences`` would
otherwise silently drop a file); the message suggests the nearest known key. Atom numbers
are 1-based in the manifest (as programs print them) and 0-based in code. The format is
documented in docs/manifest.md.
"""
from __future__ import annotations

import difflib
import math
import os
import re
import tomllib
from pathlib import Path
from typing import Any

from dossier.errors import ManifestError
from dossier.project.locator import Locator
from dossier.project.model import (
    DEFAULT_RECIPE, ENERGY_UNITS, FOUR_POINT_KEYS, LEVEL_PARAMETERS, QRRHO_MODES, ROLES, STANDARD_STATES,
    THERMAL_SOURCES, FamilySpec, Manifest, PathwaySpec, Recipe, Settings, StateSpec, _norm,
)
from dossier.project.transfers import transfers_table
from dossier.reading.jobs import split_name
from dossier.units import FREQUENCY_SCALE_RANGE, TEMPERATURE_RANGE_K

_TOP_KEYS = ("project", "sites", "states", "recipes", "pathways", "isomer_families", "transfers", "uncertainty",
             "experiment")
_PROJECT_KEYS = (
    "title", "authors", "temperatures_k", "energy_unit", "standard_state", "qrrho",
    "frequency_scale", "imaginary_threshold_cm1",
)
_STATE_KEYS = ("role", "geometry", "frequencies", "excited_states", "single_points", "symmetry_number", "note")
_RECIPE_KEYS = ("electronic", "thermal", "based_on", "mixed_levels", "note")
_PATHWAY_KEYS = (
    "name", "reactant", "transition_state", "product", "donor_site", "acceptor_site", "bridge_site",
    "recipe", "levels", "ladder", "four_point", "symmetric",
)
_FAMILY_KEYS = ("name", "states", "recipe")


_TYPE_WORDS = {str: "a string", int: "an integer", float: "a number", bool: "true or false",
               list: "a list", dict: "a table"}


def _type_word(value: Any) -> str:
    if isinstance(value, bool):
        return "true/false"
    for t, w in _TYPE_WORDS.items():
        if type(value) is t:
            return w
    return type(value).__name__


def _dotted(key: tuple) -> str:
    out = ""
    for k in key:
        if isinstance(k, int):
            out += f"[{k + 1}]"
        else:
            text = k if re.fullmatch(r"[A-Za-z0-9_-]+", k) else f'"{k}"'
            out += ("." if out else "") + text
    return out


class _Validator:
    def __init__(self, display: str, locator: Locator):
        self.display = display
        self.loc = locator

    def fail(self, key: tuple, reason: str) -> ManifestError:
        return ManifestError(reason, where=f"{self.display}:{self.loc.line_of(key)}")

    def table(self, value: Any, key: tuple, what: str) -> dict:
        if not isinstance(value, dict):
            raise self.fail(key, f"{_dotted(key)} must be a table ({what}); got {_type_word(value)}")
        return value

    def known_keys(self, table: dict, key: tuple, allowed: tuple[str, ...]) -> None:
        for k in table:
            if k not in allowed:
                close = difflib.get_close_matches(k, allowed, n=1)
                hint = f"did you mean '{close[0]}'?" if close else f"known keys: {', '.join(allowed)}"
                raise self.fail(key + (k,), f"unknown key '{k}' in [{_dotted(key)}]; {hint}")

    def string(self, table: dict, key: tuple, *, required: bool = False, choices: tuple | None = None,
               default: str | None = None) -> str | None:
        name = key[-1]
        if name not in table:
            if required:
                raise self.fail(key[:-1], f"[{_dotted(key[:-1])}] needs '{name}'; add {name} = \"...\"")
            return default
        value = table[name]
        if not isinstance(value, str):
            raise self.fail(key, f"{_dotted(key)} must be a string; got {_type_word(value)} {value!r}")
        if choices is not None and value not in choices:
            raise self.fail(key, f"{_dotted(key)} = {value!r} is not one of: {', '.join(choices)}")
        return value

    def number(self, table: dict, key: tuple, default: float, *, positive: bool = False,
               nonnegative: bool = False, within: tuple[float, float] | None = None) -> float:
        name = key[-1]
        if name not in table:
            return default
        value = table[name]
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(key, f"{_dotted(key)} must be a number; got {_type_word(value)} {value!r}")
        if not math.isfinite(value):
            raise self.fail(key, f"{_dotted(key)} must be a finite number; got {value}")
        if within is not None and not within[0] <= value <= within[1]:
            raise self.fail(key, f"{_dotted(key)} = {value:g} is outside {within[0]:g} to {within[1]:g}")
        if positive and not value > 0:
            raise self.fail(key, f"{_dotted(key)} must be greater than zero; got {value}")
        if nonnegative and value < 0:
            raise self.fail(key, f"{_dotted(key)} must not be negative; got {value}")
        return float(value)

    def string_list(self, table: dict, key: tuple, *, default: list | None = None) -> list[str]:
        name = key[-1]
        if name not in table:
            return list(default or [])
        value = table[name]
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise self.fail(key, f"{_dotted(key)} must be a list of strings, e.g. [\"a\", \"b\"]; "
                                 f"got {_type_word(value)} {value!r}")
        return list(value)


def _read_text(path: Path, display: str) -> str:
    from dossier.reading.files import refuse_special

    refuse_special(path, ManifestError, "manifest file")
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise ManifestError("manifest not found; give the path of a dossier.toml (or run `dossier init FOLDER`)",
                            where=display) from None
    except IsADirectoryError:
        raise ManifestError("is a folder; give the manifest file inside it (e.g. FOLDER/dossier.toml)",
                            where=display) from None
    except OSError as exc:
        raise ManifestError(f"cannot be read ({exc.strerror})", where=display) from None
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise ManifestError("is not UTF-8 text (TOML files must be UTF-8)", where=f"{display}:{line}") from None


def _parse_toml(text: str, display: str) -> dict:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        if m:
            reason = msg[: m.start()].strip()
            raise ManifestError(f"TOML syntax: {reason} (column {m.group(2)})",
                                where=f"{display}:{m.group(1)}") from None
        m = re.search(r"\(at end of document\)", msg)
        line = text.count("\n") + 1
        reason = msg[: m.start()].strip() if m else msg
        raise ManifestError(f"TOML syntax: {reason} (at end of file)", where=f"{display}:{line}") from None



# ---------------------------------------------------------------------------
# Shared helpers of the table validators
# ---------------------------------------------------------------------------
class _Files:
    """Resolves file values against the manifest's folder; remembers each file's label and line."""

    def __init__(self, v: _Validator, root: Path):
        self.v = v
        self.root = root
        #: absolute path -> the path as written in the manifest
        self.labels: dict[Path, str] = {}
        #: absolute path -> manifest line of the first key that names it
        self.lines: dict[Path, int] = {}

    def value(self, table: dict, key: tuple, *, required: bool = False) -> Path | None:
        v, root = self.v, self.root
        value = v.string(table, key, required=required)
        if value is None:
            return None
        if not value.strip():
            raise v.fail(key, f"{_dotted(key)} is empty; give the output file's path relative to {root}")
        p = Path(value).expanduser()
        full = _norm(p if p.is_absolute() else root / p)
        on_disk, job = split_name(str(full))
        if job is None or os.path.lexists(full):  # "run.log#job2": job 2 of run.log (dossier.reading.jobs)
            on_disk = str(full)
        if not os.path.lexists(on_disk) or not Path(on_disk).exists():
            raise v.fail(key, f"{_dotted(key)}: file '{value}' does not exist (paths are relative to the "
                              f"manifest's folder {root}); fix the path or add the file")
        if not Path(on_disk).is_file():
            raise v.fail(key, f"{_dotted(key)}: '{value}' is not a file; name the output file itself")
        self.labels.setdefault(full, value)
        self.lines.setdefault(full, v.loc.line_of(key))
        return full


class _Refs:
    """Checks names that refer to the states, sites and recipes the manifest defines."""

    def __init__(self, v: _Validator, states: dict[str, StateSpec], sites: dict[str, list[int]],
                 recipes: dict[str, Recipe], implicit_recipe: bool):
        self.v = v
        self.states = states
        self.sites = sites
        self.recipes = recipes
        self.implicit_recipe = implicit_recipe
        #: pathway and family names -> key path of the name (one namespace for both)
        self.profile_names: dict[str, tuple] = {}

    def recipe(self, table: dict, key: tuple) -> str | None:
        name = self.v.string(table, key)
        if name is not None and name not in self.recipes:
            known = ", ".join(self.recipes) if not self.implicit_recipe else "none defined (add a [recipes.NAME] table)"
            raise self.v.fail(key, f"{_dotted(key)} names recipe '{name}', which is not defined under [recipes] "
                                   f"(known: {known})")
        return name

    def state(self, table: dict, key: tuple, *, required: bool) -> str | None:
        name = self.v.string(table, key, required=required)
        if name is not None and name not in self.states:
            close = difflib.get_close_matches(name, list(self.states), n=1)
            hint = f"; did you mean '{close[0]}'?" if close else f"; known states: {', '.join(self.states)}"
            raise self.v.fail(key, f"state '{name}' in {_dotted(key[:-1])} is not defined under [states]{hint}")
        return name

    def site(self, table: dict, key: tuple) -> str | None:
        name = self.v.string(table, key)
        if name is not None and name not in self.sites:
            known = ", ".join(self.sites) if self.sites else "none defined (add a [sites] table)"
            raise self.v.fail(key, f"site '{name}' in {_dotted(key[:-1])} is not defined under [sites] "
                                   f"(known: {known})")
        return name

    def profile_name(self, table: dict, key: tuple) -> str:
        """The required `name` of a pathway or isomer family, unique among both."""
        name = self.v.string(table, key + ("name",), required=True)
        if name in self.profile_names:
            raise self.v.fail(key + ("name",), f"name '{name}' is used twice (also at line "
                                               f"{self.v.loc.line_of(self.profile_names[name])}); "
                                               "give each pathway, family and transfer its own name")
        self.profile_names[name] = key + ("name",)
        return name


# ---------------------------------------------------------------------------
# One validator per table
# ---------------------------------------------------------------------------
def _temperatures(proj: dict, v: _Validator) -> list[float]:
    if "temperatures_k" not in proj:
        return [298.15]
    t = proj["temperatures_k"]
    if isinstance(t, (int, float)) and not isinstance(t, bool):
        t = [t]
    if (not isinstance(t, list) or not t
            or not all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in t)):
        raise v.fail(("project", "temperatures_k"),
                     f"project.temperatures_k must be a non-empty list of numbers in kelvin, e.g. [298.15]; "
                     f"got {_type_word(t)} {t!r}")
    low, high = TEMPERATURE_RANGE_K
    for i, x in enumerate(t):
        if not low <= x <= high:
            raise v.fail(("project", "temperatures_k", i),
                         f"project.temperatures_k has {x}; temperatures are in kelvin, from {low:g} to {high:g}")
    if len(set(t)) != len(t):
        raise v.fail(("project", "temperatures_k"), "project.temperatures_k lists a temperature twice; remove the repeat")
    return [float(x) for x in t]


def _project_table(raw: dict, v: _Validator, root: Path) -> tuple[str, list[str], Settings]:
    """[project]: (title, authors, settings)."""
    proj = v.table(raw.get("project", {}), ("project",), "title, authors, temperatures_k, ...")
    v.known_keys(proj, ("project",), _PROJECT_KEYS)
    title = v.string(proj, ("project", "title"), default=None) or root.name
    authors = v.string_list(proj, ("project", "authors"))
    temps = _temperatures(proj, v)
    settings = Settings(
        temperatures_k=temps,
        energy_unit=v.string(proj, ("project", "energy_unit"), choices=ENERGY_UNITS, default="kJ/mol"),
        standard_state=v.string(proj, ("project", "standard_state"), choices=STANDARD_STATES, default="1M"),
        qrrho=v.string(proj, ("project", "qrrho"), choices=QRRHO_MODES, default="grimme"),
        frequency_scale=v.number(proj, ("project", "frequency_scale"), 1.0, within=FREQUENCY_SCALE_RANGE),
        imaginary_threshold_cm1=v.number(proj, ("project", "imaginary_threshold_cm1"), 20.0, nonnegative=True),
    )
    return title, authors, settings


def _sites_table(raw: dict, v: _Validator) -> dict[str, list[int]]:
    """[sites]: site name -> 0-based atom indices."""
    sites_raw = v.table(raw.get("sites", {}), ("sites",), "site name = [atom numbers]")
    sites: dict[str, list[int]] = {}
    for name, atoms in sites_raw.items():
        key = ("sites", name)
        if (not isinstance(atoms, list) or not atoms
                or not all(isinstance(a, int) and not isinstance(a, bool) for a in atoms)):
            raise v.fail(key, f"sites.{name} must be a non-empty list of 1-based atom numbers, e.g. [7, 8, 9]; "
                              f"got {_type_word(atoms)} {atoms!r}")
        for i, a in enumerate(atoms):
            if a < 1:
                raise v.fail(key + (i,), f"sites.{name} has atom number {a}; atom numbers start at 1 "
                                         "(as the programs print them)")
        dup = sorted({a for a in atoms if atoms.count(a) > 1})
        if dup:
            raise v.fail(key, f"sites.{name} lists atom {dup[0]} twice; list each atom once")
        sites[name] = [a - 1 for a in atoms]
    return sites


def _state(st: Any, name: str, v: _Validator, files: _Files) -> StateSpec:
    """One [states.NAME] table."""
    key = ("states", name)
    st = v.table(st, key, "role, geometry, frequencies, ...")
    v.known_keys(st, key, _STATE_KEYS)
    role = v.string(st, key + ("role",), choices=ROLES)
    geometry = files.value(st, key + ("geometry",), required=True)
    frequencies = files.value(st, key + ("frequencies",))
    excited = files.value(st, key + ("excited_states",))
    sp_raw = st.get("single_points", {})
    sp_raw = v.table(sp_raw, key + ("single_points",), 'label = "FILE"')
    single_points: dict[str, Path] = {}
    for label in sp_raw:
        if label == "geometry":
            raise v.fail(key + ("single_points", label),
                         "single point label 'geometry' is reserved (it means the geometry job); rename it")
        single_points[label] = files.value(sp_raw, key + ("single_points", label), required=True)
    sym = None
    if "symmetry_number" in st:
        sym = st["symmetry_number"]
        if isinstance(sym, bool) or not isinstance(sym, int) or sym < 1:
            raise v.fail(key + ("symmetry_number",),
                         f"states.{name}.symmetry_number must be a whole number >= 1; got {sym!r}")
    return StateSpec(
        name=name, role=role, geometry=geometry, frequencies=frequencies, excited_states=excited,
        single_points=single_points, symmetry_number=sym, note=v.string(st, key + ("note",)),
        line=v.loc.line_of(key),
    )


def _states_table(raw: dict, v: _Validator, files: _Files) -> dict[str, StateSpec]:
    """[states.*]: at least one state, each with a geometry file."""
    states_raw = v.table(raw.get("states", {}), ("states",), "one [states.NAME] table per state")
    if not states_raw and not raw.get("transfers"):
        raise ManifestError("no states: add at least one [states.NAME] table with geometry = \"FILE\"",
                            where=f"{v.display}:1")
    return {name: _state(st, name, v, files) for name, st in states_raw.items()}


def _resolve_based_on(recipes: dict[str, Recipe], v: _Validator) -> dict[str, Recipe]:
    """Recipes with `based_on` inherit the keys they leave unset; references must exist and not loop."""
    for name, rc in recipes.items():
        if rc.based_on is not None and rc.based_on not in recipes:
            raise v.fail(("recipes", name, "based_on"),
                         f"recipes.{name}.based_on names recipe '{rc.based_on}', which is not defined under [recipes]")
    resolved: dict[str, Recipe] = {}
    for name in recipes:
        chain = [name]
        cur = recipes[name]
        while cur.based_on is not None:
            if cur.based_on in chain:
                loop = " -> ".join(chain + [cur.based_on])
                raise v.fail(("recipes", chain[-1], "based_on"),
                             f"recipes refer to each other in a loop ({loop}); remove one based_on")
            chain.append(cur.based_on)
            cur = recipes[cur.based_on]
        merged = Recipe(name=name, line=recipes[name].line, based_on=recipes[name].based_on,
                        note=recipes[name].note)
        for attr, default in (("electronic", "geometry"), ("thermal", "frequencies"), ("mixed_levels", False)):
            value = next((getattr(recipes[c], attr) for c in chain if getattr(recipes[c], attr) is not None), default)
            setattr(merged, attr, value)
        resolved[name] = merged
    return resolved


def _recipes_table(raw: dict, v: _Validator, states: dict[str, StateSpec]) -> tuple[dict[str, Recipe], bool]:
    """[recipes.*]: (recipes with based_on resolved, True when the implicit default recipe stands in)."""
    recipes_raw = v.table(raw.get("recipes", {}), ("recipes",), "one [recipes.NAME] table per recipe")
    recipes: dict[str, Recipe] = {}
    for name, rc in recipes_raw.items():
        key = ("recipes", name)
        rc = v.table(rc, key, "electronic, thermal")
        v.known_keys(rc, key, _RECIPE_KEYS)
        mixed = rc.get("mixed_levels", None)
        if mixed is not None and not isinstance(mixed, bool):
            raise v.fail(key + ("mixed_levels",), f"recipes.{name}.mixed_levels must be true or false; got {mixed!r}")
        recipes[name] = Recipe(
            name=name,
            electronic=v.string(rc, key + ("electronic",)),
            thermal=v.string(rc, key + ("thermal",), choices=THERMAL_SOURCES),
            mixed_levels=mixed,
            based_on=v.string(rc, key + ("based_on",)),
            note=v.string(rc, key + ("note",)),
            line=v.loc.line_of(key),
        )
    recipes = _resolve_based_on(recipes, v)
    all_labels = {label for s in states.values() for label in s.single_points}
    for name, rc in recipes.items():
        if rc.electronic != "geometry" and rc.electronic not in all_labels:
            key = ("recipes", name, "electronic") if "electronic" in recipes_raw[name] else ("recipes", name)
            known = ", ".join(sorted(all_labels)) or "none"
            raise v.fail(key, f"recipe '{name}' takes its electronic energy from single point '{rc.electronic}', "
                              f"but no state has single_points.\"{rc.electronic}\" (labels in use: {known}); "
                              "use \"geometry\" or a label of the states' single_points")
    if not recipes:
        return {DEFAULT_RECIPE: Recipe(name=DEFAULT_RECIPE, electronic="geometry", thermal="frequencies")}, True
    return recipes, False


def _four_point(pw: dict, key: tuple, name: str, v: _Validator,
                files: _Files) -> tuple[dict[str, Path] | None, str | None]:
    """A pathway's optional four_point table: (the four files, note)."""
    if "four_point" not in pw:
        return None, None
    fp = v.table(pw["four_point"], key + ("four_point",), "the four energies of the four-point scheme")
    v.known_keys(fp, key + ("four_point",), FOUR_POINT_KEYS + ("note",))
    missing = [k for k in FOUR_POINT_KEYS if k not in fp]
    if missing:
        raise v.fail(key + ("four_point",), f"pathway '{name}': four_point needs all of "
                                            f"{', '.join(FOUR_POINT_KEYS)}; missing {', '.join(missing)}")
    four_point = {k: files.value(fp, key + ("four_point", k), required=True) for k in FOUR_POINT_KEYS}
    return four_point, v.string(fp, key + ("four_point", "note"))


def _pathway(pw: Any, i: int, v: _Validator, refs: _Refs, files: _Files) -> PathwaySpec:
    """One [[pathways]] entry."""
    key = ("pathways", i)
    pw = v.table(pw, key, "name, reactant, transition_state, product, ...")
    v.known_keys(pw, key, _PATHWAY_KEYS)
    name = refs.profile_name(pw, key)
    reactant = refs.state(pw, key + ("reactant",), required=True)
    ts = refs.state(pw, key + ("transition_state",), required=False)
    product = refs.state(pw, key + ("product",), required=True)
    if ts is not None and ts in (reactant, product):
        raise v.fail(key + ("transition_state",),
                     f"pathway '{name}': transition_state '{ts}' is also its reactant or product; "
                     "name a separate transition-state state")
    if reactant == product:
        raise v.fail(key + ("product",),
                     f"pathway '{name}': product '{product}' is also its reactant; for a symmetric exchange "
                     "name the mirror-image minimum as a state of its own")
    donor = refs.site(pw, key + ("donor_site",))
    acceptor = refs.site(pw, key + ("acceptor_site",))
    bridge = refs.site(pw, key + ("bridge_site",))
    if donor is not None and donor == acceptor:
        raise v.fail(key + ("acceptor_site",),
                     f"pathway '{name}': donor_site and acceptor_site are both '{donor}'; name two sites")
    recipe = refs.recipe(pw, key + ("recipe",))
    levels_raw = v.table(pw.get("levels", {}), key + ("levels",), "parameter = \"recipe\"")
    v.known_keys(levels_raw, key + ("levels",), LEVEL_PARAMETERS)
    levels = {k: refs.recipe(levels_raw, key + ("levels", k)) for k in levels_raw}
    ladder = v.string_list(pw, key + ("ladder",))
    for j, rname in enumerate(ladder):
        if rname not in refs.recipes:
            raise v.fail(key + ("ladder", j), f"pathways[{i + 1}].ladder names recipe '{rname}', "
                                              f"which is not defined under [recipes]")
    if len(set(ladder)) != len(ladder):
        raise v.fail(key + ("ladder",), f"pathway '{name}': ladder lists a recipe twice; list each rung once")
    four_point, fp_note = _four_point(pw, key, name, v, files)
    symmetric = pw.get("symmetric")
    if symmetric is not None and not isinstance(symmetric, bool):
        raise v.fail(key + ("symmetric",), f"{_dotted(key + ('symmetric',))} must be true or false; got "
                                           f"{_type_word(symmetric)} {symmetric!r}")
    return PathwaySpec(
        name=name, reactant=reactant, product=product, transition_state=ts, donor_site=donor,
        acceptor_site=acceptor, bridge_site=bridge, recipe=recipe, levels=levels, ladder=ladder,
        four_point=four_point, four_point_note=fp_note, symmetric=symmetric, line=v.loc.line_of(key),
    )


def _pathways_table(raw: dict, v: _Validator, refs: _Refs, files: _Files) -> list[PathwaySpec]:
    """[[pathways]]."""
    pw_raw = raw.get("pathways", [])
    if not isinstance(pw_raw, list):
        raise v.fail(("pathways",), "pathways must be an array of tables: write each as [[pathways]]")
    return [_pathway(pw, i, v, refs, files) for i, pw in enumerate(pw_raw)]


def _families_table(raw: dict, v: _Validator, refs: _Refs) -> list[FamilySpec]:
    """[[isomer_families]]: named sets of at least two states."""
    fam_raw = raw.get("isomer_families", [])
    if not isinstance(fam_raw, list):
        raise v.fail(("isomer_families",), "isomer_families must be an array of tables: write each as [[isomer_families]]")
    families: list[FamilySpec] = []
    for i, fam in enumerate(fam_raw):
        key = ("isomer_families", i)
        fam = v.table(fam, key, "name, states, recipe")
        v.known_keys(fam, key, _FAMILY_KEYS)
        name = refs.profile_name(fam, key)
        if "states" not in fam:
            raise v.fail(key, f"isomer family '{name}' needs states = [\"a\", \"b\", ...]")
        members = v.string_list(fam, key + ("states",))
        if len(members) < 2:
            raise v.fail(key + ("states",), f"isomer family '{name}' needs at least two states; got {len(members)}")
        for j, s in enumerate(members):
            if s not in refs.states:
                raise v.fail(key + ("states", j),
                             f"state '{s}' in isomer family '{name}' is not defined under [states]")
        dup = [s for s in members if members.count(s) > 1]
        if dup:
            raise v.fail(key + ("states",), f"isomer family '{name}' lists state '{dup[0]}' twice")
        families.append(FamilySpec(name=name, states=members, recipe=refs.recipe(fam, key + ("recipe",)),
                                   line=v.loc.line_of(key)))
    return families


def _check_recipes_apply(v: _Validator, refs: _Refs, pathways: list[PathwaySpec],
                         families: list[FamilySpec]) -> None:
    """A recipe that names a single point: every state it is applied to must have that single point."""
    recipes, states = refs.recipes, refs.states
    first_recipe = next(iter(recipes))

    def check(rname: str | None, state_names: list[str], key: tuple) -> None:
        rc = recipes[rname or first_recipe]
        if rc.electronic == "geometry":
            return
        for s in state_names:
            if rc.electronic not in states[s].single_points:
                raise v.fail(key, f"recipe '{rc.name}' takes the electronic energy from single point "
                                  f"'{rc.electronic}', but state '{s}' has no single_points.\"{rc.electronic}\"; "
                                  "add that file to the state or use another recipe")

    for i, pw in enumerate(pathways):
        names = [s for s in (pw.reactant, pw.transition_state, pw.product) if s]
        check(pw.recipe, names, ("pathways", i, "recipe"))
        for k, rname in pw.levels.items():
            check(rname, names, ("pathways", i, "levels", k))
        for j, rname in enumerate(pw.ladder):
            check(rname, names, ("pathways", i, "ladder", j))
    for i, fam in enumerate(families):
        check(fam.recipe, fam.states, ("isomer_families", i, "recipe"))


def _passthrough_table(raw: dict, v: _Validator, section: str) -> dict[str, Any]:
    """[uncertainty] or [experiment]: must be a table; its content is validated by its own module."""
    if section in raw and not isinstance(raw[section], dict):
        raise v.fail((section,), f"{section} must be a table: write it as [{section}]")
    return dict(raw.get(section, {}))


def _refuse_non_finite(value: Any, v: _Validator, key: tuple = ()) -> None:
    """TOML allows inf and nan; no number of a manifest may be either (a threshold of nan or a
    scale of inf would silently flip results). Checked once, over every value, before the tables."""
    if isinstance(value, float) and not math.isfinite(value):
        raise v.fail(key, f"{_dotted(key)} is {value}; every number in a manifest must be finite")
    if isinstance(value, dict):
        for k, item in value.items():
            _refuse_non_finite(item, v, key + (k,))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            _refuse_non_finite(item, v, key + (i,))


def load_manifest(path: str | Path) -> Manifest:
    """Read and validate a manifest. Raises ManifestError (one line, names the line) on any problem."""
    display = str(path)
    abspath = _norm(Path(path))
    text = _read_text(abspath, display)
    raw = _parse_toml(text, display)
    loc = Locator(text)
    v = _Validator(display, loc)
    _refuse_non_finite(raw, v)
    root = abspath.parent
    files = _Files(v, root)

    v.known_keys(raw, (), _TOP_KEYS)
    title, authors, settings = _project_table(raw, v, root)
    sites = _sites_table(raw, v)
    states = _states_table(raw, v, files)
    recipes, implicit_recipe = _recipes_table(raw, v, states)
    refs = _Refs(v, states, sites, recipes, implicit_recipe)
    pathways = _pathways_table(raw, v, refs, files)
    families = _families_table(raw, v, refs)
    _check_recipes_apply(v, refs, pathways, families)
    transfers = transfers_table(raw, v, refs, files)
    uncertainty = _passthrough_table(raw, v, "uncertainty")
    experiment = _passthrough_table(raw, v, "experiment")

    return Manifest(
        path=abspath, display_name=display, root=root, title=title, authors=authors, settings=settings,
        sites=sites, states=states, recipes=recipes, pathways=pathways, isomer_families=families,
        uncertainty=uncertainty, experiment=experiment, raw=raw,
        file_labels=files.labels, file_lines=files.lines, warnings=[], transfers=transfers, _locator=loc,
    )
