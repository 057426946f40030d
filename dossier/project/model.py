"""The project manifest (`dossier.toml`): loading, validation, and binding to records.

Data flow: ``load_manifest(path) -> Manifest`` checks the TOML text alone (types,
names, references, files present); ``bind(manifest, records) -> Project`` joins it to
the Calculation records of its files and checks what needs the records (atom numbers
against atom counts, recipes against the energies a state has); ``load_project``
does both, reading every file through ``dossier.reading.read_many``.

Every error is one line, ``<manifest>:<line>: <what is wrong>; <what to do>``.
tomllib reports syntax errors with a line and column; for everything else the line is
found in the raw text by :class:`_Locator` (tomllib keeps no positions).

Atom numbers are 1-based in the manifest (as programs print them) and 0-based in code.
The ``[uncertainty]`` and ``[experiment]`` tables are passed through raw; their own
modules validate them. Unknown keys in every other table are errors (a typo such as
``frequences`` would otherwise silently drop a file); the message suggests the nearest
known key. The format is documented in docs/manifest.md.
"""
from __future__ import annotations

import difflib
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from dossier.errors import ManifestError, ReadError
from dossier.records import Calculation

#: Temperatures the rate and thermochemistry models are used at (kelvin). Outside this range a
#: number is a typo, not an experiment (common practice, no source).
TEMPERATURE_RANGE_K = (1.0, 5000.0)

ROLES = ("minimum", "transition-state")
ENERGY_UNITS = ("kJ/mol", "kcal/mol", "eV")
STANDARD_STATES = ("1M", "1bar", "1atm")
QRRHO_MODES = ("none", "grimme", "truhlar")
THERMAL_SOURCES = ("frequencies", "none")
#: Parameters a pathway's `levels` table may route to a recipe.
LEVEL_PARAMETERS = ("driving_force", "barrier", "reorganization_energy", "coupling")
FOUR_POINT_KEYS = ("reactant_at_reactant", "reactant_at_product", "product_at_product", "product_at_reactant")
#: Name of the recipe used when the manifest defines none.
DEFAULT_RECIPE = "default"

_TOP_KEYS = ("project", "sites", "states", "recipes", "pathways", "isomer_families", "uncertainty", "experiment")
_PROJECT_KEYS = (
    "title", "authors", "temperatures_k", "energy_unit", "standard_state", "qrrho",
    "frequency_scale", "imaginary_threshold_cm1",
)
_STATE_KEYS = ("role", "geometry", "frequencies", "excited_states", "single_points", "symmetry_number", "note")
_RECIPE_KEYS = ("electronic", "thermal", "based_on", "mixed_levels", "note")
_PATHWAY_KEYS = (
    "name", "reactant", "transition_state", "product", "donor_site", "acceptor_site", "bridge_site",
    "recipe", "levels", "ladder", "four_point",
)
_FAMILY_KEYS = ("name", "states", "recipe")


# ---------------------------------------------------------------------------
# Data model
# ---------------------------------------------------------------------------
@dataclass
class Settings:
    temperatures_k: list[float] = field(default_factory=lambda: [298.15])
    energy_unit: str = "kJ/mol"
    standard_state: str = "1M"
    qrrho: str = "grimme"
    frequency_scale: float = 1.0
    imaginary_threshold_cm1: float = 20.0


@dataclass
class Recipe:
    """How a state's energy is composed.

    ``electronic``: "geometry" (the geometry job's final energy) or a key of the state's
    ``single_points``. ``thermal``: "frequencies" (the dossier's own RRHO correction from
    the frequency job) or "none". ``mixed_levels``: the recipe knowingly combines levels
    of theory along a profile (silences the one-level check).
    """

    name: str
    electronic: str = "geometry"
    thermal: str = "frequencies"
    mixed_levels: bool = False
    based_on: str | None = None
    note: str | None = None
    line: int = 0


@dataclass
class StateSpec:
    """A state as the manifest writes it (files resolved to absolute paths)."""

    name: str
    role: str | None
    geometry: Path
    frequencies: Path | None = None
    excited_states: Path | None = None
    single_points: dict[str, Path] = field(default_factory=dict)
    symmetry_number: int | None = None
    note: str | None = None
    line: int = 0


@dataclass
class PathwaySpec:
    name: str
    reactant: str
    product: str
    transition_state: str | None = None
    donor_site: str | None = None
    acceptor_site: str | None = None
    bridge_site: str | None = None
    recipe: str | None = None
    levels: dict[str, str] = field(default_factory=dict)
    ladder: list[str] = field(default_factory=list)
    four_point: dict[str, Path] | None = None
    four_point_note: str | None = None
    line: int = 0


@dataclass
class FamilySpec:
    name: str
    states: list[str]
    recipe: str | None = None
    line: int = 0


@dataclass
class Manifest:
    path: Path  # absolute
    display_name: str  # the path as the caller gave it, used in messages
    root: Path  # folder that relative paths start from
    title: str
    authors: list[str]
    settings: Settings
    sites: dict[str, list[int]]  # 0-based
    states: dict[str, StateSpec]
    recipes: dict[str, Recipe]
    pathways: list[PathwaySpec]
    isomer_families: list[FamilySpec]
    uncertainty: dict[str, Any]
    experiment: dict[str, Any]
    raw: dict[str, Any]
    #: absolute path -> the path as written in the manifest
    file_labels: dict[Path, str] = field(default_factory=dict)
    #: absolute path -> manifest line of the first key that names it
    file_lines: dict[Path, int] = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)
    _locator: "_Locator | None" = field(default=None, repr=False)

    def all_files(self) -> list[Path]:
        """Every output file the manifest names, absolute, each once, in manifest order."""
        return list(self.file_labels)

    def where(self, *key: Any) -> str:
        """`<manifest>:<line>` of a key path such as ("states", "min_a", "geometry")."""
        line = self._locator.line_of(key) if self._locator else 1
        return f"{self.display_name}:{line}"

    def line_of(self, *key: Any) -> int:
        return self._locator.line_of(key) if self._locator else 1


@dataclass
class State:
    name: str
    role: str  # "minimum" | "transition-state"
    geometry: Calculation
    frequencies: Calculation | None = None
    excited_states: Calculation | None = None
    single_points: dict[str, Calculation] = field(default_factory=dict)
    note: str | None = None
    symmetry_number: int | None = None
    role_source: str = "manifest"  # "manifest" | "imaginary count" | "default"
    files: dict[str, Any] = field(default_factory=dict)  # as written: geometry/frequencies/... -> path

    def records(self) -> list[tuple[str, Calculation]]:
        """(part, record) pairs: geometry, frequencies, excited_states, single_point:<key>."""
        out: list[tuple[str, Calculation]] = [("geometry", self.geometry)]
        if self.frequencies is not None:
            out.append(("frequencies", self.frequencies))
        if self.excited_states is not None:
            out.append(("excited_states", self.excited_states))
        out += [(f"single_point:{k}", v) for k, v in self.single_points.items()]
        return out


@dataclass
class Pathway:
    name: str
    reactant: str
    transition_state: str | None
    product: str
    donor_site: str | None = None
    acceptor_site: str | None = None
    bridge_site: str | None = None
    recipe: str = DEFAULT_RECIPE
    levels: dict[str, str] = field(default_factory=dict)  # every LEVEL_PARAMETERS key, defaulting to recipe
    ladder: list[str] = field(default_factory=list)
    four_point: dict[str, Calculation] | None = None
    four_point_note: str | None = None
    four_point_files: dict[str, str] | None = None  # as written

    @property
    def state_names(self) -> list[str]:
        return [s for s in (self.reactant, self.transition_state, self.product) if s]


@dataclass
class IsomerFamily:
    name: str
    states: list[str]
    recipe: str = DEFAULT_RECIPE


@dataclass
class Project:
    manifest_path: Path
    root: Path
    title: str
    authors: list[str]
    settings: Settings
    states: dict[str, State]
    sites: dict[str, list[int]]  # 0-based
    pathways: list[Pathway]
    isomer_families: list[IsomerFamily]
    recipes: dict[str, Recipe]
    uncertainty: dict[str, Any]
    experiment: dict[str, Any]
    manifest: Manifest | None = None
    records: dict[Path, Calculation] = field(default_factory=dict)  # absolute path -> record
    warnings: list[str] = field(default_factory=list)

    def label(self, item: Calculation | Path | str) -> str:
        """The path of a record or file as the manifest writes it (relative to the manifest)."""
        if isinstance(item, Calculation):
            cache = self.__dict__.setdefault("_label_by_id", {})
            if len(cache) != len(self.records):
                cache.clear()
                for p, rec in reversed(list(self.records.items())):
                    cache[id(rec)] = p
            if id(item) in cache and self.records.get(cache[id(item)]) is item:
                return self.label(cache[id(item)])
            path = Path(item.source.path)
        else:
            path = Path(item)
        labels = self.manifest.file_labels if self.manifest else {}
        if path in labels:  # the manifest's own (already normalized) paths: no file-system call
            return labels[path]
        if not path.is_absolute():
            path = self.root / path
        key = _norm(path)
        if key in labels:
            return labels[key]
        try:
            return str(key.relative_to(_norm(self.root)))
        except ValueError:
            return str(path)


def _norm(path: Path) -> Path:
    return Path(path).expanduser().resolve()


# ---------------------------------------------------------------------------
# Line locator: key path -> line number in the raw TOML text
# ---------------------------------------------------------------------------
class _Locator:
    """Finds the line of each table header and key in a TOML text tomllib has accepted.

    Paths are tuples of keys, with integer indices for arrays of tables and arrays:
    ("pathways", 0, "reactant"), ("states", "min_a", "single_points", "mp2").
    """

    def __init__(self, text: str):
        self.text = text
        self.lines: dict[tuple, int] = {}
        self._arrays: dict[tuple, int] = {}
        self._pos = 0
        self._line = 1
        try:
            self._scan()
        except (IndexError, ValueError, tomllib.TOMLDecodeError):  # pragma: no cover - best effort
            pass

    def line_of(self, key: tuple) -> int:
        key = tuple(key)
        while key:
            if key in self.lines:
                return self.lines[key]
            key = key[:-1]
        return 1

    # -- scanner helpers ---------------------------------------------------
    def _peek(self, n: int = 1) -> str:
        return self.text[self._pos : self._pos + n]

    def _advance(self, n: int = 1) -> None:
        chunk = self.text[self._pos : self._pos + n]
        self._line += chunk.count("\n")
        self._pos += n

    def _skip_ws(self, newlines: bool) -> None:
        while self._pos < len(self.text):
            c = self.text[self._pos]
            if c in " \t\r" or (newlines and c == "\n"):
                self._advance()
            elif c == "#" and newlines:
                end = self.text.find("\n", self._pos)
                self._advance((len(self.text) if end < 0 else end) - self._pos)
            else:
                break

    def _skip_line(self) -> None:
        end = self.text.find("\n", self._pos)
        self._advance((len(self.text) if end < 0 else end + 1) - self._pos)

    def _skip_string(self) -> None:
        for delim in ('"""', "'''"):
            if self._peek(3) == delim:
                self._advance(3)
                while self._pos < len(self.text):
                    if delim == '"""' and self._peek() == "\\":
                        self._advance(2)
                        continue
                    if self._peek(3) == delim:
                        self._advance(3)
                        while self._peek() == delim[0]:  # up to two extra quotes belong to the content
                            self._advance()
                        return
                    self._advance()
                return
        quote = self._peek()
        self._advance()
        while self._pos < len(self.text) and self._peek() != quote:
            if quote == '"' and self._peek() == "\\":
                self._advance()
            self._advance()
        self._advance()

    def _read_key(self, stop: str) -> tuple:
        """Read a (dotted, possibly quoted) key up to `stop`; return its parts."""
        start = self._pos
        while self._pos < len(self.text) and self._peek() not in stop:
            if self._peek() in "\"'":
                self._skip_string()
            else:
                self._advance()
        raw = self.text[start : self._pos].strip()
        parsed = tomllib.loads(f"{raw} = 0")
        parts = []
        while isinstance(parsed, dict):
            (k, parsed), = parsed.items()
            parts.append(k)
        return tuple(parts)

    def _resolve(self, parts: tuple) -> tuple:
        out: tuple = ()
        for p in parts:
            out += (p,)
            if out in self._arrays:
                out += (self._arrays[out] - 1,)
        return out

    def _record(self, path: tuple, line: int) -> None:
        self.lines.setdefault(path, line)

    def _scan(self) -> None:
        table: tuple = ()
        while True:
            self._skip_ws(newlines=True)
            if self._pos >= len(self.text):
                return
            line = self._line
            if self._peek(2) == "[[":
                self._advance(2)
                parts = self._read_key("]")
                self._advance(2)
                parent = self._resolve(parts[:-1])
                full = parent + (parts[-1],)
                self._arrays[full] = self._arrays.get(full, 0) + 1
                table = full + (self._arrays[full] - 1,)
                for i in range(1, len(parent) + 1):
                    self._record(parent[:i], line)
                self._record(full, line)
                self._record(table, line)
                self._skip_line()
            elif self._peek() == "[":
                self._advance()
                parts = self._read_key("]")
                self._advance()
                table = self._resolve(parts)
                for i in range(1, len(table) + 1):
                    self._record(table[:i], line)
                self._skip_line()
            else:
                parts = self._read_key("=")
                self._advance()
                path = table + parts
                for i in range(len(table) + 1, len(path) + 1):
                    self._record(path[:i], line)
                self._skip_ws(newlines=False)
                self._value(path)
                self._skip_line()

    def _value(self, path: tuple) -> None:
        c = self._peek()
        if c in "\"'":
            self._skip_string()
        elif c == "[":
            self._advance()
            index = 0
            while True:
                self._skip_ws(newlines=True)
                if self._peek() == "]":
                    self._advance()
                    return
                self._record(path + (index,), self._line)
                self._value(path + (index,))
                self._skip_ws(newlines=True)
                if self._peek() == ",":
                    self._advance()
                    index += 1
        elif c == "{":
            self._advance()
            while True:
                self._skip_ws(newlines=False)
                if self._peek() == "}":
                    self._advance()
                    return
                line = self._line
                parts = self._read_key("=")
                self._advance()
                sub = path + parts
                for i in range(len(path) + 1, len(sub) + 1):
                    self._record(sub[:i], line)
                self._skip_ws(newlines=False)
                self._value(sub)
                self._skip_ws(newlines=False)
                if self._peek() == ",":
                    self._advance()
        else:
            while self._pos < len(self.text) and self._peek() not in ",]}#\n":
                self._advance()


# ---------------------------------------------------------------------------
# Validation
# ---------------------------------------------------------------------------
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
    def __init__(self, display: str, locator: _Locator):
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
               nonnegative: bool = False) -> float:
        name = key[-1]
        if name not in table:
            return default
        value = table[name]
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(key, f"{_dotted(key)} must be a number; got {_type_word(value)} {value!r}")
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


def load_manifest(path: str | Path) -> Manifest:
    """Read and validate a manifest. Raises ManifestError (one line, names the line) on any problem."""
    display = str(path)
    abspath = _norm(Path(path))
    text = _read_text(abspath, display)
    raw = _parse_toml(text, display)
    loc = _Locator(text)
    v = _Validator(display, loc)
    root = abspath.parent
    warnings: list[str] = []

    v.known_keys(raw, (), _TOP_KEYS)

    # [project] ---------------------------------------------------------------
    proj = v.table(raw.get("project", {}), ("project",), "title, authors, temperatures_k, ...")
    v.known_keys(proj, ("project",), _PROJECT_KEYS)
    title = v.string(proj, ("project", "title"), default=None) or root.name
    authors = v.string_list(proj, ("project", "authors"))
    temps: list[float]
    if "temperatures_k" in proj:
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
        temps = [float(x) for x in t]
    else:
        temps = [298.15]
    settings = Settings(
        temperatures_k=temps,
        energy_unit=v.string(proj, ("project", "energy_unit"), choices=ENERGY_UNITS, default="kJ/mol"),
        standard_state=v.string(proj, ("project", "standard_state"), choices=STANDARD_STATES, default="1M"),
        qrrho=v.string(proj, ("project", "qrrho"), choices=QRRHO_MODES, default="grimme"),
        frequency_scale=v.number(proj, ("project", "frequency_scale"), 1.0, positive=True),
        imaginary_threshold_cm1=v.number(proj, ("project", "imaginary_threshold_cm1"), 20.0, nonnegative=True),
    )

    file_labels: dict[Path, str] = {}
    file_lines: dict[Path, int] = {}

    def file_value(table: dict, key: tuple, *, required: bool = False) -> Path | None:
        value = v.string(table, key, required=required)
        if value is None:
            return None
        if not value.strip():
            raise v.fail(key, f"{_dotted(key)} is empty; give the output file's path relative to {root}")
        p = Path(value).expanduser()
        full = _norm(p if p.is_absolute() else root / p)
        if not full.exists():
            raise v.fail(key, f"{_dotted(key)}: file '{value}' does not exist (paths are relative to the "
                              f"manifest's folder {root}); fix the path or add the file")
        if not full.is_file():
            raise v.fail(key, f"{_dotted(key)}: '{value}' is not a file; name the output file itself")
        file_labels.setdefault(full, value)
        file_lines.setdefault(full, loc.line_of(key))
        return full

    # [sites] -----------------------------------------------------------------
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

    # [states.*] --------------------------------------------------------------
    states_raw = v.table(raw.get("states", {}), ("states",), "one [states.NAME] table per state")
    if not states_raw:
        raise ManifestError("no states: add at least one [states.NAME] table with geometry = \"FILE\"",
                            where=f"{display}:1")
    states: dict[str, StateSpec] = {}
    for name, st in states_raw.items():
        key = ("states", name)
        st = v.table(st, key, "role, geometry, frequencies, ...")
        v.known_keys(st, key, _STATE_KEYS)
        role = v.string(st, key + ("role",), choices=ROLES)
        geometry = file_value(st, key + ("geometry",), required=True)
        frequencies = file_value(st, key + ("frequencies",))
        excited = file_value(st, key + ("excited_states",))
        sp_raw = st.get("single_points", {})
        sp_raw = v.table(sp_raw, key + ("single_points",), 'label = "FILE"')
        single_points: dict[str, Path] = {}
        for label in sp_raw:
            if label == "geometry":
                raise v.fail(key + ("single_points", label),
                             "single point label 'geometry' is reserved (it means the geometry job); rename it")
            single_points[label] = file_value(sp_raw, key + ("single_points", label), required=True)
        sym = None
        if "symmetry_number" in st:
            sym = st["symmetry_number"]
            if isinstance(sym, bool) or not isinstance(sym, int) or sym < 1:
                raise v.fail(key + ("symmetry_number",),
                             f"states.{name}.symmetry_number must be a whole number >= 1; got {sym!r}")
        states[name] = StateSpec(
            name=name,
            role=role,
            geometry=geometry,
            frequencies=frequencies,
            excited_states=excited,
            single_points=single_points,
            symmetry_number=sym,
            note=v.string(st, key + ("note",)),
            line=loc.line_of(key),
        )

    # [recipes.*] -------------------------------------------------------------
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
            line=loc.line_of(key),
        )
    # based_on: inherit unset keys; references must exist and must not loop.
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
    recipes = resolved
    all_labels = {label for s in states.values() for label in s.single_points}
    for name, rc in recipes.items():
        if rc.electronic != "geometry" and rc.electronic not in all_labels:
            key = ("recipes", name, "electronic") if "electronic" in recipes_raw[name] else ("recipes", name)
            known = ", ".join(sorted(all_labels)) or "none"
            raise v.fail(key, f"recipe '{name}' takes its electronic energy from single point '{rc.electronic}', "
                              f"but no state has single_points.\"{rc.electronic}\" (labels in use: {known}); "
                              "use \"geometry\" or a label of the states' single_points")
    implicit_recipe = not recipes
    if implicit_recipe:
        recipes = {DEFAULT_RECIPE: Recipe(name=DEFAULT_RECIPE, electronic="geometry", thermal="frequencies")}
    first_recipe = next(iter(recipes))

    def recipe_ref(table: dict, key: tuple) -> str | None:
        name = v.string(table, key)
        if name is not None and name not in recipes:
            known = ", ".join(recipes) if not implicit_recipe else "none defined (add a [recipes.NAME] table)"
            raise v.fail(key, f"{_dotted(key)} names recipe '{name}', which is not defined under [recipes] "
                              f"(known: {known})")
        return name

    def state_ref(table: dict, key: tuple, *, required: bool) -> str | None:
        name = v.string(table, key, required=required)
        if name is not None and name not in states:
            close = difflib.get_close_matches(name, list(states), n=1)
            hint = f"; did you mean '{close[0]}'?" if close else f"; known states: {', '.join(states)}"
            raise v.fail(key, f"state '{name}' in {_dotted(key[:-1])} is not defined under [states]{hint}")
        return name

    def site_ref(table: dict, key: tuple) -> str | None:
        name = v.string(table, key)
        if name is not None and name not in sites:
            known = ", ".join(sites) if sites else "none defined (add a [sites] table)"
            raise v.fail(key, f"site '{name}' in {_dotted(key[:-1])} is not defined under [sites] (known: {known})")
        return name

    # [[pathways]] --------------------------------------------------------------
    pw_raw = raw.get("pathways", [])
    if not isinstance(pw_raw, list):
        raise v.fail(("pathways",), "pathways must be an array of tables: write each as [[pathways]]")
    pathways: list[PathwaySpec] = []
    profile_names: dict[str, tuple] = {}
    for i, pw in enumerate(pw_raw):
        key = ("pathways", i)
        pw = v.table(pw, key, "name, reactant, transition_state, product, ...")
        v.known_keys(pw, key, _PATHWAY_KEYS)
        name = v.string(pw, key + ("name",), required=True)
        if name in profile_names:
            raise v.fail(key + ("name",), f"name '{name}' is used twice (also at line "
                                          f"{loc.line_of(profile_names[name])}); give each pathway and family its own name")
        profile_names[name] = key + ("name",)
        reactant = state_ref(pw, key + ("reactant",), required=True)
        ts = state_ref(pw, key + ("transition_state",), required=False)
        product = state_ref(pw, key + ("product",), required=True)
        if ts is not None and ts in (reactant, product):
            raise v.fail(key + ("transition_state",),
                         f"pathway '{name}': transition_state '{ts}' is also its reactant or product; "
                         "name a separate transition-state state")
        if reactant == product:
            raise v.fail(key + ("product",),
                         f"pathway '{name}': product '{product}' is also its reactant; for a symmetric exchange "
                         "name the mirror-image minimum as a state of its own")
        donor = site_ref(pw, key + ("donor_site",))
        acceptor = site_ref(pw, key + ("acceptor_site",))
        bridge = site_ref(pw, key + ("bridge_site",))
        if donor is not None and donor == acceptor:
            raise v.fail(key + ("acceptor_site",),
                         f"pathway '{name}': donor_site and acceptor_site are both '{donor}'; name two sites")
        recipe = recipe_ref(pw, key + ("recipe",))
        levels_raw = v.table(pw.get("levels", {}), key + ("levels",), "parameter = \"recipe\"")
        v.known_keys(levels_raw, key + ("levels",), LEVEL_PARAMETERS)
        levels = {k: recipe_ref(levels_raw, key + ("levels", k)) for k in levels_raw}
        ladder = v.string_list(pw, key + ("ladder",))
        for j, rname in enumerate(ladder):
            if rname not in recipes:
                raise v.fail(key + ("ladder", j), f"pathways[{i + 1}].ladder names recipe '{rname}', "
                                                  f"which is not defined under [recipes]")
        if len(set(ladder)) != len(ladder):
            raise v.fail(key + ("ladder",), f"pathway '{name}': ladder lists a recipe twice; list each rung once")
        four_point = None
        fp_note = None
        if "four_point" in pw:
            fp = v.table(pw["four_point"], key + ("four_point",), "the four energies of the four-point scheme")
            v.known_keys(fp, key + ("four_point",), FOUR_POINT_KEYS + ("note",))
            missing = [k for k in FOUR_POINT_KEYS if k not in fp]
            if missing:
                raise v.fail(key + ("four_point",), f"pathway '{name}': four_point needs all of "
                                                    f"{', '.join(FOUR_POINT_KEYS)}; missing {', '.join(missing)}")
            four_point = {k: file_value(fp, key + ("four_point", k), required=True) for k in FOUR_POINT_KEYS}
            fp_note = v.string(fp, key + ("four_point", "note"))
        pathways.append(PathwaySpec(
            name=name, reactant=reactant, product=product, transition_state=ts, donor_site=donor,
            acceptor_site=acceptor, bridge_site=bridge, recipe=recipe, levels=levels, ladder=ladder,
            four_point=four_point, four_point_note=fp_note, line=loc.line_of(key),
        ))

    # [[isomer_families]] -------------------------------------------------------
    fam_raw = raw.get("isomer_families", [])
    if not isinstance(fam_raw, list):
        raise v.fail(("isomer_families",), "isomer_families must be an array of tables: write each as [[isomer_families]]")
    families: list[FamilySpec] = []
    for i, fam in enumerate(fam_raw):
        key = ("isomer_families", i)
        fam = v.table(fam, key, "name, states, recipe")
        v.known_keys(fam, key, _FAMILY_KEYS)
        name = v.string(fam, key + ("name",), required=True)
        if name in profile_names:
            raise v.fail(key + ("name",), f"name '{name}' is used twice (also at line "
                                          f"{loc.line_of(profile_names[name])}); give each pathway and family its own name")
        profile_names[name] = key + ("name",)
        if "states" not in fam:
            raise v.fail(key, f"isomer family '{name}' needs states = [\"a\", \"b\", ...]")
        members = v.string_list(fam, key + ("states",))
        if len(members) < 2:
            raise v.fail(key + ("states",), f"isomer family '{name}' needs at least two states; got {len(members)}")
        for j, s in enumerate(members):
            if s not in states:
                raise v.fail(key + ("states", j),
                             f"state '{s}' in isomer family '{name}' is not defined under [states]")
        dup = [s for s in members if members.count(s) > 1]
        if dup:
            raise v.fail(key + ("states",), f"isomer family '{name}' lists state '{dup[0]}' twice")
        families.append(FamilySpec(name=name, states=members, recipe=recipe_ref(fam, key + ("recipe",)),
                                   line=loc.line_of(key)))

    # recipes that name a single point: every state they are applied to must have it
    def check_recipe_on(rname: str | None, state_names: list[str], key: tuple) -> None:
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
        check_recipe_on(pw.recipe, names, ("pathways", i, "recipe"))
        for k, rname in pw.levels.items():
            check_recipe_on(rname, names, ("pathways", i, "levels", k))
        for j, rname in enumerate(pw.ladder):
            check_recipe_on(rname, names, ("pathways", i, "ladder", j))
    for i, fam in enumerate(families):
        check_recipe_on(fam.recipe, fam.states, ("isomer_families", i, "recipe"))

    for section in ("uncertainty", "experiment"):
        if section in raw and not isinstance(raw[section], dict):
            raise v.fail((section,), f"{section} must be a table: write it as [{section}]")

    return Manifest(
        path=abspath, display_name=display, root=root, title=title, authors=authors, settings=settings,
        sites=sites, states=states, recipes=recipes, pathways=pathways, isomer_families=families,
        uncertainty=dict(raw.get("uncertainty", {})), experiment=dict(raw.get("experiment", {})), raw=raw,
        file_labels=file_labels, file_lines=file_lines, warnings=warnings, _locator=loc,
    )


# ---------------------------------------------------------------------------
# Binding to records
# ---------------------------------------------------------------------------
def _lookup(records: Mapping, path: Path) -> Calculation | None:
    rec = records.get(path)
    if rec is None:
        for k, r in records.items():
            if _norm(Path(k)) == path:
                rec = r
                break
    return rec


def bind(manifest: Manifest, records: Mapping[Path, Calculation]) -> Project:
    """Join a validated manifest to the records of its files.

    Raises ManifestError naming the manifest line when a file has no record (or a ReadError
    in its place), when a geometry job has no coordinates, or when a site's atom number is
    beyond the atom count of a state on a pathway that uses the site.
    """
    m = manifest
    by_path: dict[Path, Calculation] = {}
    for path in m.all_files():
        rec = _lookup(records, path)
        where = f"{m.display_name}:{m.file_lines.get(path, 1)}"
        if isinstance(rec, ReadError):
            raise ManifestError(f"'{m.file_labels[path]}' could not be read: {rec.reason}", where=where)
        if rec is None:
            raise ManifestError(f"no record for '{m.file_labels[path]}' (it was not read)", where=where)
        by_path[path] = rec

    def rec(path: Path | None) -> Calculation | None:
        return by_path[path] if path is not None else None

    warnings = list(m.warnings)
    states: dict[str, State] = {}
    for name, sp in m.states.items():
        geom = by_path[sp.geometry]
        if (not geom.elements or not geom.coordinates_angstrom) and geom.status.word == "ok":
            raise ManifestError(f"states.{name}.geometry: '{m.file_labels[sp.geometry]}' holds no geometry "
                                "(no atoms were read); name the job that gives the state's structure",
                                where=m.where("states", name, "geometry"))
        freq = rec(sp.frequencies)
        if freq is None and geom.vibrations is not None:
            freq = geom  # an optimisation + frequency job in one file
        if sp.role is not None:
            role, source = sp.role, "manifest"
        elif freq is not None and freq.vibrations is not None:
            n_big = sum(1 for w in freq.vibrations.wavenumbers_cm1 if w < -m.settings.imaginary_threshold_cm1)
            role, source = ("transition-state" if n_big == 1 else "minimum"), "imaginary count"
        else:
            role, source = "minimum", "default"
        files: dict[str, Any] = {"geometry": m.file_labels[sp.geometry]}
        if sp.frequencies is not None:
            files["frequencies"] = m.file_labels[sp.frequencies]
        elif freq is geom:
            files["frequencies"] = m.file_labels[sp.geometry]
        if sp.excited_states is not None:
            files["excited_states"] = m.file_labels[sp.excited_states]
        files["single_points"] = {k: m.file_labels[p] for k, p in sp.single_points.items()}
        states[name] = State(
            name=name, role=role, geometry=geom, frequencies=freq, excited_states=rec(sp.excited_states),
            single_points={k: by_path[p] for k, p in sp.single_points.items()}, note=sp.note,
            symmetry_number=sp.symmetry_number, role_source=source, files=files,
        )

    # recipes: the implicit default recipe adds thermal corrections only when every state has frequencies
    recipes = {k: Recipe(**vars(r)) for k, r in m.recipes.items()}
    first_recipe = next(iter(recipes))
    implicit = not m.raw.get("recipes")
    if implicit:
        if any(s.frequencies is None for s in states.values()):
            recipes[DEFAULT_RECIPE].thermal = "none"
    if not implicit:
        uses: list[tuple[str, list[str], tuple]] = []
        for i, pw in enumerate(m.pathways):
            names = [s for s in (pw.reactant, pw.transition_state, pw.product) if s]
            uses.append((pw.recipe or first_recipe, names, ("pathways", i, "recipe")))
            uses += [(r, names, ("pathways", i, "levels", k)) for k, r in pw.levels.items()]
            uses += [(r, names, ("pathways", i, "ladder", j)) for j, r in enumerate(pw.ladder)]
        for i, fam in enumerate(m.isomer_families):
            uses.append((fam.recipe or first_recipe, fam.states, ("isomer_families", i, "recipe")))
        for rname, names, key in uses:
            for s in names:
                if recipes[rname].thermal == "frequencies" and states[s].frequencies is None:
                    raise ManifestError(
                        f"recipe '{rname}' adds thermal corrections from frequencies, but state '{s}' has no "
                        "frequency job; add frequencies = \"FILE\" to the state or use a recipe with "
                        "thermal = \"none\"", where=m.where(*key))

    # sites: atom numbers within every state of each pathway that names the site
    for i, pw in enumerate(m.pathways):
        for role_key in ("donor_site", "acceptor_site", "bridge_site"):
            site = getattr(pw, role_key)
            if site is None:
                continue
            for s in (pw.reactant, pw.transition_state, pw.product):
                if not s:
                    continue
                n = states[s].geometry.n_atoms
                bad = [a + 1 for a in m.sites[site] if a >= n]
                if bad:
                    raise ManifestError(
                        f"sites.{site} has atom number {bad[0]}, but state '{s}' (used by pathway '{pw.name}') "
                        f"has only {n} atoms; atom numbers are 1-based, 1..{n}",
                        where=m.where("sites", site))

    pathways = []
    for pw in m.pathways:
        rname = pw.recipe or first_recipe
        levels = {k: pw.levels.get(k) or rname for k in LEVEL_PARAMETERS}
        fp = {k: by_path[p] for k, p in pw.four_point.items()} if pw.four_point else None
        fp_files = {k: m.file_labels[p] for k, p in pw.four_point.items()} if pw.four_point else None
        pathways.append(Pathway(
            name=pw.name, reactant=pw.reactant, transition_state=pw.transition_state, product=pw.product,
            donor_site=pw.donor_site, acceptor_site=pw.acceptor_site, bridge_site=pw.bridge_site, recipe=rname,
            levels=levels, ladder=list(pw.ladder), four_point=fp, four_point_note=pw.four_point_note,
            four_point_files=fp_files,
        ))
    families = [IsomerFamily(name=f.name, states=list(f.states), recipe=f.recipe or first_recipe)
                for f in m.isomer_families]

    return Project(
        manifest_path=m.path, root=m.root, title=m.title, authors=list(m.authors), settings=m.settings,
        states=states, sites={k: list(v) for k, v in m.sites.items()}, pathways=pathways,
        isomer_families=families, recipes=recipes, uncertainty=m.uncertainty, experiment=m.experiment,
        manifest=m, records=by_path, warnings=warnings,
    )


def load_project(path: str | Path, *, jobs: int | None = None, use_cache: bool = True,
                 progress=None) -> Project:
    """load_manifest + read every file (dossier.reading.read_many) + bind."""
    from dossier.reading import read_many

    manifest = load_manifest(path)
    files = manifest.all_files()
    results = read_many(files, jobs=jobs, use_cache=use_cache, progress=progress)
    return bind(manifest, dict(zip(files, results)))
