"""Data folders shipped with the package (parameter sets, demo scenarios)."""

from __future__ import annotations

from importlib import resources
from pathlib import Path


def shipped_toml_files(folder: str) -> dict[str, Path]:
    """The ``*.toml`` files of a shipped folder, keyed by file stem.

    An installed wheel carries the folder inside the package (``planner/<folder>``);
    a source checkout or an editable install keeps it at the repository's top level.
    """
    packaged = resources.files("planner") / folder
    base = Path(str(packaged)) if packaged.is_dir() else Path(__file__).resolve().parent.parent / folder
    return {path.stem: path for path in sorted(base.glob("*.toml"))}


def read_shipped_toml(folder: str, name: str, what: str) -> dict:
    """The parsed contents of ``<folder>/<name>.toml`` shipped with the package; ``what`` names it in errors."""
    import tomllib

    from planner.errors import InputError

    files = shipped_toml_files(folder)
    if name not in files:
        raise InputError(f"unknown {what} {name!r}; allowed: {', '.join(files)}", field=what)
    return tomllib.loads(files[name].read_text(encoding="utf-8"))
