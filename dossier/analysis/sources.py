"""The files a dossier used: one entry per output file with its SHA-256, program, level and use."""
from __future__ import annotations

import dataclasses
from pathlib import Path


def source_entries(project) -> list[dict]:
    """One entry per file the dossier used: path (as the manifest names it), SHA-256, program, level."""
    used_for: dict[Path, list[str]] = {}
    for name, state in project.states.items():
        for part, rec in state.records():
            used_for.setdefault(Path(rec.source.path), []).append(f"{name} {part.replace('_', ' ')}")
    for pw in project.pathways:
        for key, rec in (pw.four_point or {}).items():
            used_for.setdefault(Path(rec.source.path), []).append(f"{pw.name} four-point {key.replace('_', ' ')}")
    entries = []
    for path, rec in project.records.items():
        entry = {
            "path": project.label(path),
            "sha256": rec.source.sha256,
            "size_bytes": rec.source.size_bytes,
            "program": rec.program,
            "program_version": rec.program_version,
            "status": rec.status.word,
            "level_of_theory": rec.level.label(),
            "level": dataclasses.asdict(rec.level),
            "job_kinds": list(rec.job_kinds),
            "used_for": sorted(set(used_for.get(Path(rec.source.path), []))),
        }
        # how the text was got, and which job of a multi-job file: only when it is not the plain case
        if rec.source.encoding:
            entry["encoding"] = rec.source.encoding  # e.g. "gzip", "UTF-16LE"
        if rec.source.jobs_in_file > 1:
            entry["job"], entry["jobs_in_file"] = rec.source.job, rec.source.jobs_in_file
        entries.append(entry)
    entries.sort(key=lambda e: e["path"])
    return entries
