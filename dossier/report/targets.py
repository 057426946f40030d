"""Where outputs may be written: checks every ``--out`` passes before any work starts.

Every writer in dossier replaces its target with a rename. A rename replaces whatever is
at the name, so the target is checked first:

- a file target (``archive --out``, ``init --out``) may be absent or a regular file; a
  folder, device, pipe, socket or symbolic link at that name is refused;
- a folder target (``build --out``) may be absent, empty, or a dossier build this tool made;
- no target may be one of the project's inputs (the manifest, an output it names, an input
  beside one), nor, for a folder, contain one;
- the parent folders must exist as folders or be creatable (the nearest existing one must
  be a writable folder; nothing is created before the work is done), so a bad ``--out`` fails in a second, not after the analysis.

Each refusal is a one-line error naming the path (exit status 2).
"""
from __future__ import annotations

import os
import stat
from pathlib import Path
from typing import Iterable

from dossier.errors import ArchiveError, BuildError
from dossier.reading.jobs import split_name

_KINDS = (
    (stat.S_ISDIR, "a folder"),
    (stat.S_ISLNK, "a symbolic link"),
    (stat.S_ISFIFO, "a named pipe"),
    (stat.S_ISCHR, "a character device"),
    (stat.S_ISBLK, "a block device"),
    (stat.S_ISSOCK, "a socket"),
)


class TargetError(BuildError, ArchiveError):
    """An output path that must not be written (a build or an archive error, whichever the caller expects)."""


def _kind(mode: int) -> str:
    for test, name in _KINDS:
        if test(mode):
            return name
    return "not a regular file"


def _real(p: str | os.PathLike) -> str:
    return os.path.realpath(split_name(str(p))[0])


def check_parent(target: Path, flag: str = "--out") -> None:
    """The folders above `target` exist as folders, or the nearest existing one is a writable folder."""
    parent = Path(os.path.abspath(target)).parent
    probe = parent
    while not os.path.lexists(probe):
        if probe.parent == probe:
            break
        probe = probe.parent
    if not probe.is_dir():
        raise TargetError(f"cannot be written: {probe} is not a folder", where=str(target))
    if not os.access(probe, os.W_OK | os.X_OK):
        raise TargetError(f"cannot be written: no permission to write in {probe}", where=str(target))


def check_not_input(target: Path, inputs: Iterable[str | os.PathLike], *, folder: bool = False) -> None:
    """Refuse a target that is (or, for a folder, contains) one of the project's inputs."""
    real = os.path.realpath(target)
    for p in inputs:
        rp = _real(p)
        if rp == real:
            raise TargetError(f"is one of the project's inputs ({p}); it is never overwritten: choose another --out",
                              where=str(target))
        if folder and rp.startswith(real.rstrip(os.sep) + os.sep):
            raise TargetError(f"holds one of the project's inputs ({p}) and would be replaced as a whole; "
                              "choose a folder of its own", where=str(target))


def _lstat(path: Path) -> os.stat_result | None:
    """The target's own status (a link is not followed), None when nothing is there."""
    try:
        return os.lstat(path)
    except FileNotFoundError:
        return None
    except OSError as exc:
        raise TargetError(f"cannot be used as output ({exc.strerror or exc})", where=str(path)) from None


def check_file_target(target: str | os.PathLike, inputs: Iterable[str | os.PathLike] = (), *,
                      hint: str = "give a file name", parent_must_exist: bool = False) -> Path:
    """Absolute path of a file target that may be replaced by a rename (see module docstring)."""
    path = Path(os.path.abspath(target))
    st = _lstat(path)
    if st is not None and not stat.S_ISREG(st.st_mode):
        raise TargetError(f"exists and is {_kind(st.st_mode)}, not a regular file; not replaced ({hint})",
                          where=str(path))
    check_not_input(path, inputs)
    if parent_must_exist and not path.parent.is_dir():
        raise TargetError("the folder to write into does not exist", where=str(path))
    check_parent(path)
    return path


def check_folder_target(target: str | os.PathLike, inputs: Iterable[str | os.PathLike], marker: str) -> Path:
    """Absolute path of an output folder that may be replaced as a whole (absent, empty, or a build)."""
    path = Path(os.path.abspath(target))
    st = _lstat(path)
    if st is not None:
        if not stat.S_ISDIR(st.st_mode):
            raise TargetError(f"exists and is {_kind(st.st_mode)}, not a folder; not replaced", where=str(path))
        try:
            entries = os.listdir(path)
        except OSError as exc:
            raise TargetError(f"cannot be listed ({exc.strerror or exc})", where=str(path)) from None
        if entries and not (path / marker).is_file():
            raise TargetError(f"exists, is not empty and is not a dossier build (no {marker} file); "
                              "choose another --out or empty it", where=str(path))
    check_not_input(path, inputs, folder=True)
    check_parent(path)
    return path


#: Inputs that sit beside an output of the same stem (archived with it, never overwritten).
INPUT_SUFFIXES = (".nw", ".inp", ".in", ".com", ".gjf", ".xyz")


def project_inputs(manifest_path: str | os.PathLike) -> list[Path]:
    """The manifest, every file it names, and the inputs found beside those files."""
    from dossier.project import load_manifest

    manifest_path = Path(os.path.abspath(manifest_path))
    named = [Path(split_name(str(p))[0]) for p in load_manifest(manifest_path).all_files()]
    beside = [p.with_suffix(s) for p in named for s in INPUT_SUFFIXES]
    return [manifest_path, *named, *(p for p in beside if os.path.lexists(p))]
