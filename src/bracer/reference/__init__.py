"""Reference limit tables: normative range of motion and ISO/TS 15066 Annex A body-region values.

The tables are CSV data files in limits/ (every row carries its source and confidence mark); this module only
reads them.  They are reference values for review, not clinical limits.
"""

from __future__ import annotations

import csv
import hashlib
from dataclasses import dataclass
from functools import cache
from pathlib import Path

from bracer.errors import InputError
from bracer.resources import data_dir

__all__ = [
    "BodyModelRow",
    "BodyRegionLimit",
    "RomRow",
    "body_model",
    "body_region_limits",
    "rom_reference",
    "rom_rows",
    "sha256",
    "table_paths",
]

ROM_FILE = "upper_limb_rom.csv"
FORCE_FILE = "iso_ts_15066_force_pressure.csv"
BODY_FILE = "iso_ts_15066_body_model.csv"


@dataclass(frozen=True, slots=True)
class RomRow:
    motion: str
    source: str
    degrees: float
    confidence: str
    population: str
    citation: str


@dataclass(frozen=True, slots=True)
class BodyRegionLimit:
    """Quasi-static limits of one specific area (Table A.2), in N/cm^2 and N.

    The transient limit is ``transient_factor`` times the quasi-static one (0: no transient contact allowed).
    """

    region: str
    specific_area: str
    pressure_n_per_cm2: float
    force_n: float
    transient_factor: float
    confidence: str
    source: str

    @property
    def pressure_pa(self) -> float:
        return self.pressure_n_per_cm2 * 1e4


@dataclass(frozen=True, slots=True)
class BodyModelRow:
    region: str
    k_n_per_mm: float
    m_h_kg: float
    confidence: str
    source: str


def _rows(name: str) -> list[dict[str, str]]:
    path = data_dir("limits") / name
    try:
        lines = path.read_text(encoding="utf-8").splitlines()
    except OSError as exc:
        raise InputError.single(f"cannot read reference table: {exc.strerror}", path) from None
    body = [ln for ln in lines if ln.strip() and not ln.lstrip().startswith("#")]
    return list(csv.DictReader(body))


def _float(row: dict[str, str], key: str, name: str) -> float:
    try:
        return float(row[key])
    except (KeyError, TypeError, ValueError):
        raise InputError.single(
            f"reference table row {row}: expected a number in column '{key}', found {row.get(key)!r}",
            data_dir("limits") / name,
        ) from None


@cache
def rom_rows() -> tuple[RomRow, ...]:
    return tuple(
        RomRow(r["motion"], r["source"], _float(r, "degrees", ROM_FILE), r["confidence"], r["population"],
               r["citation"])
        for r in _rows(ROM_FILE)
    )


def rom_reference(motion: str, source: str = "AAOS") -> RomRow | None:
    """The normative value of ``motion`` (e.g. 'elbow flexion') from ``source``; None if not tabulated."""
    for row in rom_rows():
        if row.motion == motion and row.source == source:
            return row
    return None


@cache
def body_region_limits() -> tuple[BodyRegionLimit, ...]:
    return tuple(
        BodyRegionLimit(
            r["region"], r["specific_area"], _float(r, "pressure_N_per_cm2", FORCE_FILE),
            _float(r, "force_N", FORCE_FILE), _float(r, "transient_factor", FORCE_FILE), r["confidence"],
            r["source"],
        )
        for r in _rows(FORCE_FILE)
    )


@cache
def body_model() -> dict[str, BodyModelRow]:
    return {
        r["region"]: BodyModelRow(
            r["region"],
            _float(r, "k_N_per_mm", BODY_FILE),
            _float(r, "m_H_kg", BODY_FILE),
            r["confidence"],
            r["source"],
        )
        for r in _rows(BODY_FILE)
    }


def table_paths() -> dict[str, Path]:
    """Every reference table with its path (for provenance)."""
    folder = data_dir("limits")
    return {name: folder / name for name in (ROM_FILE, FORCE_FILE, BODY_FILE)}


def sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()
