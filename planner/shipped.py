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
