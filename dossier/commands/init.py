"""`dossier init FOLDER [--out FILE] [--force]`: draft a manifest from a folder of outputs.

Reads every output (dossier.reading.find_outputs + read_many) and writes the draft that
dossier.project.drafting makes of the records (what it guesses is described there).
Every guess carries a `# guess: ... — confirm` comment. The draft is written atomically,
and an existing manifest is never replaced without --force.
"""
from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

from dossier.errors import DossierError, ManifestError
from dossier.report.targets import INPUT_SUFFIXES, check_file_target

HELP = "draft a project manifest (dossier.toml) from a folder of output files"


def add_arguments(parser) -> None:
    parser.add_argument("folder", metavar="FOLDER", help="folder with the project's output files (searched recursively)")
    parser.add_argument("--out", metavar="FILE", default=None, help="where to write the draft (default: FOLDER/dossier.toml)")
    parser.add_argument("--force", action="store_true", help="replace an existing manifest")
    parser.add_argument("--jobs", type=int, default=None, metavar="N", help="parallel readers (default: all cores)")
    parser.add_argument("--no-cache", action="store_true", help="parse every file again; neither use nor write the cache")


def _file_mode() -> int:
    """0666 less the umask: the mode a plain open() would give (mkstemp's own is 0600)."""
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


def write_atomically(path: Path, text: str) -> None:
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except OSError as exc:
        raise DossierError(f"cannot be written ({exc.strerror or exc})", where=str(path)) from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        os.chmod(tmp, _file_mode())
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def run(args) -> int:
    from dossier.commands._progress import StageProgress
    from dossier.project.drafting import draft_manifest
    from dossier.reading import every_job, find_outputs, read_many

    folder = Path(args.folder)
    if not folder.is_dir():
        raise DossierError("not a folder; give the folder that holds the output files", where=str(folder))
    out = Path(args.out) if args.out else folder / "dossier.toml"
    if os.path.lexists(out) and not args.force:
        raise ManifestError("already exists; not replaced (use --force to replace it, or --out FILE)", where=str(out))
    notes: list[str] = []
    paths = [Path(os.path.abspath(p)) for p in find_outputs(folder, notes=notes)]
    if not paths:
        raise DossierError("no output files (*.out, *.log, *.output) found in this folder", where=str(folder))
    # never over an output or an input beside one, a device, a pipe or a folder, even with --force
    inputs = [p for p in paths + [p.with_suffix(s) for p in paths for s in INPUT_SUFFIXES] if os.path.lexists(p)]
    check_file_target(out, inputs, hint="give the manifest's file name")
    with StageProgress("init", lines=False, delay_s=1.0) as progress:  # a bar on a terminal only
        progress("reading output files")
        read = read_many(paths, jobs=args.jobs, use_cache=not args.no_cache, progress=progress.step)
    results = every_job(paths, read, use_cache=not args.no_cache)
    draft = draft_manifest(folder.resolve().name, Path(os.path.abspath(out)).parent, results)
    check_file_target(out, inputs, hint="give the manifest's file name")  # again: the reading took a while
    write_atomically(out, draft.text)
    print(f"wrote {out}: {draft.n_states} state(s) from {len(paths)} file(s); {draft.n_guesses} guess(es) to confirm",
          file=sys.stderr)
    for n in notes:
        print(f"note: {n}", file=sys.stderr)
    return 0
