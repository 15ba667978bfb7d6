"""Where bracer's data files are: the reference tables (limits/) and the example protocols (protocols/).

In a regular install they travel inside the package as ``bracer/_data/...`` (see pyproject.toml,
``force-include``); in an editable install or a source checkout they are read from the repository's top level.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path

__all__ = ["data_dir"]


@cache
def data_dir(name: str) -> Path:
    """The folder holding ``name`` ("limits" or "protocols")."""
    packaged = Path(__file__).resolve().parent / "_data" / name
    if packaged.is_dir():
        return packaged
    checkout = Path(__file__).resolve().parents[2] / name
    if checkout.is_dir():
        return checkout
    raise FileNotFoundError(
        f"bracer's '{name}' data folder is missing (looked in {packaged} and {checkout}); reinstall bracer"
    )
