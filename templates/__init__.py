"""The built-in report templates, installed as the package ``dossier.templates``.

They live in the repository's top-level templates/ folder (pyproject.toml maps the package
onto it) and ship inside the wheel; `dossier.render` finds them with importlib.resources.
"""
