"""Body-segment parameters from Winter's anthropometric table (limits/segments_winter.csv).

Winter, *Biomechanics and Motor Control of Human Movement*, 4th ed.: Table 4.1 gives each segment's mass as a
fraction of body mass, its centre of mass and radii of gyration as fractions of segment length; Fig. 4.1 gives
segment lengths as fractions of body height.  The CSV carries each value's source and confidence mark.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from functools import cache
from pathlib import Path

from bracer.errors import InputError
from bracer.resources import data_dir

__all__ = ["SEGMENTS_FILE", "SegmentInertia", "WinterSegment", "segment_inertia", "winter_segments"]

SEGMENTS_FILE = "segments_winter.csv"

#: Radius of gyration about a segment's long axis, as a fraction of its length.  Table 4.1 gives transverse
# radii : only; 0.1 is the value of a solid cylinder whose diameter is 0.28 of its length (I = m r²/2) -- an
# assumption : of this simulator, no source.  It matters only for the torque about a long axis (forearm or
# humeral rotation).
LONG_AXIS_GYRATION = 0.1


@dataclass(frozen=True, slots=True)
class WinterSegment:
    """One row of the table: fractions, as published."""

    segment: str
    definition: str
    mass_fraction: float
    com_proximal: float
    com_distal: float
    rg_com: float
    rg_proximal: float
    rg_distal: float
    length_fraction_of_height: float
    confidence: str
    source: str
    length_confidence: str
    length_source: str


@dataclass(frozen=True, slots=True)
class SegmentInertia:
    """A segment scaled to one body: SI units.

    Attributes
    ----------
    mass : float
        kg.
    length : float
        Proximal to distal joint, m.
    com : float
        Centre of mass from the proximal joint along the segment, m.
    inertia_transverse : float
        Moment of inertia about a transverse axis through the centre of mass, kg·m².
    inertia_long : float
        Moment of inertia about the segment's long axis, kg·m² (see ``LONG_AXIS_GYRATION``).
    """

    name: str
    mass: float
    length: float
    com: float
    inertia_transverse: float
    inertia_long: float


def _path() -> Path:
    return data_dir("limits") / SEGMENTS_FILE


@cache
def winter_segments() -> dict[str, WinterSegment]:
    """Every row of limits/segments_winter.csv by segment name.

    Raises
    ------
    InputError
        The file is missing or a numeric cell is not a number (file, line, column named).
    """
    path = _path()
    try:
        lines = path.read_text(encoding="utf-8").splitlines()
    except OSError as exc:
        raise InputError.single(f"cannot read reference table: {exc.strerror}", path) from None
    numbered = [
        (i, ln) for i, ln in enumerate(lines, start=1) if ln.strip() and not ln.lstrip().startswith("#")
    ]
    reader = csv.DictReader([ln for _, ln in numbered])
    out: dict[str, WinterSegment] = {}
    numeric = (
        "mass_fraction",
        "com_proximal",
        "com_distal",
        "rg_com",
        "rg_proximal",
        "rg_distal",
        "length_fraction_of_height",
    )
    for (line_no, _), row in zip(numbered[1:], reader, strict=True):
        values: dict[str, float] = {}
        for key in numeric:
            try:
                values[key] = float(row[key])
            except (KeyError, TypeError, ValueError):
                raise InputError.single(
                    f"expected a number in column '{key}', found {row.get(key)!r}", path, line_no, None, key
                ) from None
        out[row["segment"]] = WinterSegment(
            row["segment"],
            row["definition"],
            confidence=row["confidence"],
            source=row["source"],
            length_confidence=row["length_confidence"],
            length_source=row["length_source"],
            **values,
        )
    return out


def segment_inertia(name: str, body_mass: float, height: float) -> SegmentInertia:
    """Scale Winter's fractions for segment ``name`` to a body of ``body_mass`` kg and ``height`` m.

    mass = fraction·M, length = fraction·H, centre of mass = com_proximal·length, transverse inertia about the
    centre of mass = mass·(rg_com·length)².
    """
    rows = winter_segments()
    if name not in rows:
        raise KeyError(f"segment '{name}' is not in {SEGMENTS_FILE} (segments: {', '.join(rows)})")
    r = rows[name]
    mass = r.mass_fraction * body_mass
    length = r.length_fraction_of_height * height
    return SegmentInertia(
        name=name,
        mass=mass,
        length=length,
        com=r.com_proximal * length,
        inertia_transverse=mass * (r.rg_com * length) ** 2,
        inertia_long=mass * (LONG_AXIS_GYRATION * length) ** 2,
    )
