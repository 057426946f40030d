"""`dossier read PATH...`: read output files into records; print a table or JSON."""
from __future__ import annotations

import json
import sys
from pathlib import Path

from dossier.commands._json import json_safe
from dossier.errors import ReadError

HELP = "read quantum-chemistry output files (or folders of them) and show what was found"

#: Exit codes: 0 every file gave a record (whatever its status), 1 some file could not be
#: read at all (its line names the file and the reason; the others are still shown).
EXIT_ALL_READ = 0
EXIT_SOME_UNREADABLE = 1


def add_arguments(parser) -> None:
    parser.add_argument("paths", nargs="+", metavar="PATH", help="output file, or folder searched recursively")
    parser.add_argument("--json", action="store_true", help="print one JSON list of records on stdout")
    parser.add_argument("--jobs", type=int, default=None, metavar="N", help="parallel readers (default: all cores)")
    parser.add_argument("--no-cache", action="store_true", help="parse every file again; neither use nor write the cache")
    parser.add_argument("--cache-dir", default=None, metavar="DIR", help="cache folder (default: see README)")


def _expand(paths, notes):
    from dossier.reading import find_outputs

    out = []
    for p in paths:
        path = Path(p)
        if path.is_dir():
            found = find_outputs(path, notes=notes)
            if not found:
                notes.append(f"{p}: no output files (*.out, *.log, *.output) found in this folder")
            out.extend(found)
        else:
            out.append(path)
    return out


def _fmt_energy(e):
    return "" if e is None else f"{e:.8f}"


def _table(records) -> str:
    head = ("file", "program", "level", "chg/mult", "E_final/Eh", "imag", "status", "problems")
    rows = []
    for r in records:
        rows.append(
            (
                r.source.path,
                f"{r.program or '?'} {r.program_version or ''}".strip(),
                r.level.label(),
                f"{'' if r.charge is None else r.charge}/{'' if r.multiplicity is None else r.multiplicity}",
                _fmt_energy(r.energy_hartree),
                "" if r.n_imaginary is None else str(r.n_imaginary),
                r.status.word,
                "; ".join(r.problems),
            )
        )
    widths = [max(len(h), *(len(row[i]) for row in rows)) if rows else len(h) for i, h in enumerate(head)]
    widths[-1] = len(head[-1])
    lines = ["  ".join(h.ljust(w) for h, w in zip(head, widths)).rstrip()]
    for row in rows:
        lines.append("  ".join(c.ljust(w) for c, w in zip(row, widths)).rstrip())
    return "\n".join(lines)


def run(args) -> int:
    from dossier.commands._progress import StageProgress
    from dossier.reading import every_job, read_many

    notes: list[str] = []
    files = _expand(args.paths, notes)
    for note in notes:
        print(f"dossier: {note}", file=sys.stderr)
    # a bar on a terminal once reading takes more than a second; no lines for scripts to skip
    with StageProgress("read", lines=False, delay_s=1.0) as progress:
        progress("reading output files")
        results = read_many(files, jobs=args.jobs, use_cache=not args.no_cache, cache_dir=args.cache_dir,
                            progress=progress.step)
    records = []
    failed = 0
    # a file holding several jobs: one record per job (FILE#job1, FILE#job2, ...)
    results = [r for _, r in every_job(files, results, use_cache=not args.no_cache, cache_dir=args.cache_dir)]
    for res in results:
        if isinstance(res, ReadError):
            failed += 1
            if getattr(args, "debug", False) and res.__cause__ is not None:
                raise res
            print(f"dossier: {res}", file=sys.stderr)
        else:
            records.append(res)
    if args.json:
        data = [r.summary_dict() for r in records]
        try:
            out = json.dumps(data, allow_nan=False)
        except ValueError:  # a NaN somewhere: JSON has none, write null
            out = json.dumps(json_safe(data), allow_nan=False)
        sys.stdout.write(out + "\n")
    elif records:
        print(_table(records))
    return EXIT_SOME_UNREADABLE if failed or (notes and not records) else EXIT_ALL_READ
