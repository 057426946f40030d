"""Compatibility names: the archive code lives in dossier.archive.common, .write, .verify and .sign."""
from __future__ import annotations

from dossier.archive.common import (  # noqa: F401
    ARCHIVE_ROOT, CHECKSUMS_NAME, DOSSIER_DIR, ENVIRONMENT_NAME, INPUT_SUFFIXES, PROJECT_DIR, README_NAME, sha256_file,
    unsafe_reason,
)
from dossier.archive.verify import VerifyReport, json_differences, verify_archive  # noqa: F401
from dossier.archive.write import ArchiveResult, _manifest_files, build_is_current, write_archive  # noqa: F401
