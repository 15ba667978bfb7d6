"""R104 contact reference: each contact's force and pressure limits against ISO/TS 15066 Annex A values.

For the body region a contact loads, the reference table (``limits/iso_ts_15066_force_pressure.csv``, Table
A.2) gives a quasi-static force and pressure; the transient reference is ``transient_factor`` times the
quasi-static one, and a factor of 0 means transient contact is not permissible in that region (face,
skull/forehead), so any transient limit there is an error.

Compared, each as a ratio to its reference value:

* the force limits (quasi-static, transient);
* the pressure limits the protocol declares, and the pressure the force limits imply when spread over the
  contact area (force ÷ area).

The reference pressure is that of the specific area the contact names; when it names none (or one the table
does not hold) the lowest pressure of the region is used -- the conservative choice, and the review says so.
A region with no row in the table gets an info finding "no reference value" rather than a guess.

These are reference values from healthy adults, for collaborative industrial robots; they are not clinical
limits and are not validated for patients or children.  A ratio above 1 is a warning for the responsible
clinician, not a verdict.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import Any

from bracer.findings import Check, Finding, Severity, register
from bracer.protocol.model import Contact
from bracer.protocol.resolve import Resolution
from bracer.reference import BodyRegionLimit, body_region_limits
from bracer.review.checks._base import CheckResult, fmt, in_unit, review_finding

__all__ = ["CHECK", "ContactReference", "ContactReferenceResult", "reference_for", "run"]

CHECK = register(
    Check(
        code="R104",
        name="contact-reference",
        summary="Contact force and pressure limits as ratios to the ISO/TS 15066 Annex A body-region values.",
        severity=Severity.WARNING,
        needs=("contacts.force", "contacts.pressure", "contacts.area", "contacts.body_region"),
    )
)

#: Said wherever a ratio is reported.
CAVEAT = "reference values from healthy adults (ISO/TS 15066:2016 Annex A), not clinical limits"
_PRESSURE_UNIT = "N/cm^2"  # the unit of Table A.2


@dataclass(frozen=True, slots=True)
class RegionReference:
    """The reference values that apply to one contact, and how they were chosen."""

    region: str
    specific_area: str
    matched: bool  # True: the contact's specific area; False: the lowest of the region (conservative)
    force_n: float
    pressure_pa: float
    transient_factor: float
    confidence: str
    source: str


@dataclass(frozen=True, slots=True)
class ContactReference:
    """One limit of one contact against its reference value.

    ``basis`` is ``limit`` (the limit as declared) or ``force ÷ area`` (the pressure a force limit implies).
    ``value`` and ``reference`` are in ``unit``; ``ratio`` is value / reference, None where the reference is 0
    (transient contact not permissible).
    """

    contact: str
    region: str
    specific_area: str
    quantity: str
    item: str
    basis: str
    value: float
    reference: float
    unit: str
    ratio: float | None
    note: str


@dataclass(frozen=True, slots=True)
class ContactReferenceResult(CheckResult):
    references: tuple[ContactReference, ...] = ()

    def tables(self) -> dict[str, tuple[Any, ...]]:
        return {"references": self.references}


def reference_for(contact: Contact) -> tuple[RegionReference | None, str | None]:
    """The reference values for ``contact`` and, when the specific area did not match, a note saying so.

    Returns ``(None, None)`` when the table has no row for the contact's body region.
    """
    rows = [r for r in body_region_limits() if r.region == contact.body_region]
    if not rows:
        return None, None
    wanted = (contact.specific_area or "").strip().lower()
    match = next((r for r in rows if r.specific_area.lower() == wanted), None) if wanted else None
    if match is not None:
        return _region(match, rows, matched=True), None
    lowest = min(rows, key=lambda r: r.pressure_n_per_cm2)
    if not wanted:
        note = (
            f"no specific area given: the lowest reference pressure of region '{contact.body_region}' "
            f"({lowest.specific_area}, {fmt(lowest.pressure_n_per_cm2, _PRESSURE_UNIT)}) is used "
            "(conservative)"
        )
    else:
        areas = [r.specific_area for r in rows]
        hint = difflib.get_close_matches(wanted, areas, n=1, cutoff=0.6)
        did = f" (did you mean '{hint[0]}'?)" if hint else f" (areas of this region: {', '.join(areas)})"
        note = (
            f"specific area '{contact.specific_area}' is not in the reference table for region "
            f"'{contact.body_region}'{did}, so the lowest reference pressure of the region "
            f"({lowest.specific_area}, {fmt(lowest.pressure_n_per_cm2, _PRESSURE_UNIT)}) is used "
            "(conservative)"
        )
    return _region(lowest, rows, matched=False), note


def _region(row: BodyRegionLimit, rows: list[BodyRegionLimit], *, matched: bool) -> RegionReference:
    # Force and transient factor: the row's own where the area matched, else the region's most conservative.
    force = row.force_n if matched else min(r.force_n for r in rows)
    factor = row.transient_factor if matched else min(r.transient_factor for r in rows)
    return RegionReference(
        row.region, row.specific_area, matched, force, row.pressure_pa, factor, row.confidence, row.source
    )


def run(resolution: Resolution) -> ContactReferenceResult:
    """Ratios of every contact's force and pressure limits to the body-region reference values."""
    findings: list[Finding] = []
    rows: list[ContactReference] = []
    for name, contact in resolution.protocol.contacts.items():
        rows += _contact(findings, name, contact)
    return ContactReferenceResult(CHECK, tuple(findings), tuple(rows))


def _contact(findings: list[Finding], name: str, contact: Contact) -> list[ContactReference]:
    def add(severity: Severity, message: str, **fields: Any) -> None:
        findings.append(
            review_finding(CHECK, severity, message, subject=name, subject_kind="contact", **fields)
        )

    ref, note = reference_for(contact)
    if ref is None:
        add(
            Severity.INFO,
            f"contact '{name}': no reference value for body region '{contact.body_region}' in the "
            "ISO/TS 15066 Annex A table; its force and pressure limits are not compared with one",
            quantity="force",
        )
        return []
    if note is not None:
        add(
            Severity.INFO if not contact.specific_area else Severity.WARNING,
            f"contact '{name}': {note}",
            quantity="pressure",
        )

    # (quantity, item, basis, value SI, value unit, reference SI)
    candidates: list[tuple[str, str, str, float, str, float]] = []
    force = contact.force
    area = contact.area.si
    forces = [
        (item, limit, factor)
        for item, limit, factor in (
            ("quasi_static", force.quasi_static, 1.0),
            ("transient", force.transient, ref.transient_factor),
        )
        if limit is not None
    ]
    for item, limit, factor in forces:
        candidates.append(("force", item, "limit", limit.si, limit.unit, factor * ref.force_n))
    for item, limit, factor in forces:
        candidates.append(
            ("pressure", item, "force ÷ area", limit.si / area, _PRESSURE_UNIT, factor * ref.pressure_pa)
        )
    if contact.pressure is not None:
        for item, limit, factor in (
            ("quasi_static", contact.pressure.quasi_static, 1.0),
            ("transient", contact.pressure.transient, ref.transient_factor),
        ):
            if limit is not None:
                candidates.append(("pressure", item, "limit", limit.si, limit.unit, factor * ref.pressure_pa))

    rows = []
    area_label = ref.specific_area if ref.matched else f"{ref.specific_area}, the lowest of the region"
    for quantity, item, basis, value_si, unit, ref_si in candidates:
        ratio = value_si / ref_si if ref_si > 0 else None
        row_note = "" if ref_si > 0 else "transient contact not permissible in this region"
        row = ContactReference(
            name,
            ref.region,
            area_label,
            quantity,
            item,
            basis,
            in_unit(value_si, unit),
            in_unit(ref_si, unit),
            unit,
            ratio,
            row_note,
        )
        rows.append(row)
        what = f"{item.replace('_', '-')} {quantity} " + (
            "limit"
            if basis == "limit"
            else f"implied by the force limit over the contact area ({contact.area})"
        )
        if ratio is None and basis == "limit":
            add(
                Severity.ERROR,
                f"contact '{name}': a {what} of {fmt(row.value, unit)} is declared, but transient contact is "
                "not "
                f"permissible in body region '{ref.region}' ({CAVEAT})",
                quantity=quantity,
                value=row.value,
                limit=0.0,
                unit=unit,
                extra=(("item", item), ("basis", basis)),
            )
        elif ratio is not None and ratio > 1:
            add(
                Severity.WARNING,
                f"contact '{name}': the {what} ({fmt(row.value, unit)}) is {ratio:.2f}× the reference value "
                "of "
                f"{fmt(row.reference, unit)} for region '{ref.region}' ({area_label}); these are {CAVEAT}",
                quantity=quantity,
                value=row.value,
                limit=row.reference,
                margin=row.reference - row.value,
                unit=unit,
                extra=(("item", item), ("basis", basis), ("ratio", ratio)),
            )
    return rows
