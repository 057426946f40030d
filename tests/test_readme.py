"""README's promises: the commented manifest example loads against the demo study, the quick start
is what CI runs, and the error example has the form the loader really gives."""
from __future__ import annotations

import re
import shutil

import pytest

from tests.conftest import DEMO, ROOT

README = (ROOT / "README.md").read_text()


def _toml_example() -> str:
    blocks = re.findall(r"```toml\n(.*?)```", README, flags=re.S)
    assert len(blocks) == 1, "README holds one commented manifest example"
    return blocks[0]


def test_readme_manifest_example_loads_against_the_demo_study(tmp_path):
    from dossier.project import load_project

    if not (DEMO / "dossier.toml").exists():
        pytest.skip("demo study absent")
    manifest = DEMO / ".readme-example.toml"  # same folder, so the example's relative paths resolve
    try:
        manifest.write_text(_toml_example())
        project = load_project(manifest, use_cache=False)
    finally:
        manifest.unlink(missing_ok=True)
    assert set(project.states) == {"min_a", "ts", "min_b"}
    assert project.pathways[0].four_point is not None
    assert project.sites["nitro_a"] == [6, 7, 8]  # 1-based in the manifest, 0-based inside


def test_readme_error_example_matches_the_real_message(tmp_path):
    from dossier.errors import ManifestError
    from dossier.project import load_manifest

    if not (DEMO / "dossier.toml").exists():
        pytest.skip("demo study absent")
    folder = tmp_path / "p"
    shutil.copytree(DEMO, folder, ignore=shutil.ignore_patterns("*.toml"))
    text = _toml_example().replace('product = "min_b"', 'product = "min_c"')
    (folder / "dossier.toml").write_text(text)
    with pytest.raises(ManifestError) as err:
        load_manifest(folder / "dossier.toml")
    message = str(err.value)
    assert re.match(r".*dossier\.toml:\d+: ", message) and "min_c" in message and "\n" not in message
    shown = re.search(r"`dossier: (dossier\.toml:\d+: .*?)`", README).group(1)
    assert message.endswith(shown), (shown, message)  # same line number, same words


def test_ci_runs_readme_quick_start_commands_letter_for_letter():
    quick = README.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    commands = re.findall(r"```\n(.*?)\n```", quick, flags=re.S)
    assert len(commands) == 2
    ci = (ROOT / ".ci" / "run").read_text()
    for cmd in commands:
        assert cmd in ci
