"""`dossier check MANIFEST [--json] [--against DOSSIER_JSON]`: physics-aware project checks.

Exit status: 0 no error found (warnings and infos allowed), 1 at least one error
finding, 2 the manifest (or a file it names) could not be loaded.
"""
from __future__ import annotations

import json
import sys
from pathlib import Path

from dossier.errors import ManifestError
from dossier.reading.files import refuse_special

HELP = "check a project's manifest and outputs for physics and bookkeeping errors"

EXIT_CLEAN = 0
EXIT_ERRORS_FOUND = 1


def add_arguments(parser) -> None:
    parser.add_argument("manifest", metavar="MANIFEST", help="the project manifest (dossier.toml)")
    parser.add_argument("--json", action="store_true",
                        help="print a JSON list of findings (keys severity, code, state, file, message)")
    parser.add_argument("--against", metavar="DOSSIER_JSON", default=None,
                        help="a previous build's dossier.json (or its folder): report source files changed since that build")
    parser.add_argument("--jobs", type=int, default=None, metavar="N", help="parallel readers (default: all cores)")
    parser.add_argument("--no-cache", action="store_true", help="parse every file again; neither use nor write the cache")


def previous_sources(path: str | Path) -> list[dict]:
    """The `sources` list of a previous dossier.json (path + sha256 per file)."""
    path = Path(path)
    if path.is_dir():
        path = path / "dossier.json"  # a build folder
    where = str(path)
    refuse_special(path, ManifestError, "dossier.json")
    try:
        data = json.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise ManifestError("no such file (give a previous build's dossier.json)", where=where) from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise ManifestError(f"is not a readable dossier.json ({exc})", where=where) from None
    sources = data.get("sources") if isinstance(data, dict) else None
    if not isinstance(sources, list) or not all(isinstance(s, dict) and "path" in s and "sha256" in s
                                                for s in sources):
        raise ManifestError("has no 'sources' list with path and sha256 per file; is it a dossier.json?", where=where)
    return sources


def format_findings(findings) -> str:
    """Readable text: one block per severity, one line per finding."""
    if not findings:
        return "no findings: every check passed\n"
    out = []
    for sev, title in (("error", "Errors"), ("warning", "Warnings"), ("info", "Notes")):
        group = [f for f in findings if f.severity == sev]
        if not group:
            continue
        out.append(f"{title} ({len(group)}):")
        out += [f"  {f.line()}" for f in group]
        out.append("")
    n = {s: sum(1 for f in findings if f.severity == s) for s in ("error", "warning", "info")}
    out.append(f"{n['error']} error(s), {n['warning']} warning(s), {n['info']} note(s)")
    return "\n".join(out) + "\n"


def run(args) -> int:
    from dossier.commands._progress import StageProgress
    from dossier.project.checks import run_checks
    from dossier.project import load_project

    prev = previous_sources(args.against) if args.against else None
    with StageProgress("check", lines=False, delay_s=1.0) as progress:  # a bar on a terminal only
        progress("reading output files")
        project = load_project(args.manifest, jobs=args.jobs, use_cache=not args.no_cache, progress=progress.step)
    findings = run_checks(project, previous_sources=prev)
    if args.json:
        json.dump([f.to_dict() for f in findings], sys.stdout, indent=2)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(format_findings(findings))
    return EXIT_ERRORS_FOUND if any(f.severity == "error" for f in findings) else EXIT_CLEAN
