"""The project's data model: what a manifest says (``Manifest`` and its specs) and what it
becomes once joined to the records of its files (``Project``, ``State``, ``Pathway``, ...).

Constants here are the manifest's vocabulary (roles, energy units, standard states, ...);
``dossier.project.manifest`` validates against them and ``dossier.project.bind`` builds
the bound classes. Atom numbers are 0-based in code (1-based in the manifest).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from dossier.records import Calculation

if TYPE_CHECKING:
    from dossier.project.locator import Locator

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
    symmetric: bool | None = None  # reactant and product images of each other; None: detect
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
    transfers: list[Any] = field(default_factory=list)  # dossier.project.transfers.TransferSpec
    _locator: "Locator | None" = field(default=None, repr=False)

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
    symmetric: bool | None = None  # the manifest's word on a degenerate transfer; None: detected

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
    transfers: list[Any] = field(default_factory=list)  # dossier.project.transfers.Transfer

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
