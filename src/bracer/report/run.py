"""Make a report: run the review and/or the audit, or take their JSON records, then build the document.

* ``PROTOCOL`` alone: the pre-trial review is run, the report covers it.
* ``PROTOCOL LOG…``: the review and the audit are run; the plots are drawn from the logs.
* ``--from-json`` records replace the analyses they hold.  The protocol and logs the records name are used for
the
  title block and the plots only when their SHA-256 matches the record's; otherwise the report says what it
  could not show.  Files given on the command line must match the record they go with: a mismatch is an error.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from bracer.errors import InputError
from bracer.report.build import build_document
from bracer.report.provenance import AnalysisTime, analysis_time, display_path, sha256_of
from bracer.report.records import SourceRecord, read_record

if TYPE_CHECKING:
    from bracer.protocol.load import LoadedProtocol
    from bracer.report.document import Document

__all__ = ["ReportRequest", "make_report"]


@dataclass(frozen=True, slots=True)
class ReportRequest:
    protocol: Path | None
    logs: tuple[Path, ...] = ()
    participant: str | None = None
    session: str | None = None
    from_json: tuple[Path, ...] = ()
    session_date: str | None = None


def _records(paths: Sequence[Path]) -> tuple[SourceRecord | None, SourceRecord | None]:
    review = audit = None
    for p in paths:
        rec = read_record(p)
        if rec.kind == "report":
            raise InputError.single(
                "this is a report record; --from-json takes the review or audit record it was built from "
                "(bracer review --json, bracer audit --json)",
                p,
                field="record",
            )
        if rec.kind == "review":
            if review is not None:
                raise InputError.single(f"a second review record (the first: {review.path}); give one", p)
            review = rec
        else:
            if audit is not None:
                raise InputError.single(f"a second audit record (the first: {audit.path}); give one", p)
            audit = rec
    return review, audit


def _hash_matches(path: Path, sha: str) -> bool:
    try:
        return sha256_of(path) == sha
    except OSError:
        return False


def _record_files(rec: SourceRecord, role: str) -> list[dict[str, Any]]:
    return [i for i in rec.data.get("inputs") or [] if i.get("role") == role]


def _check_given(rec: SourceRecord, given: Sequence[Path], role: str) -> None:
    """Files given on the command line must be the ones the record names (by SHA-256)."""
    named = {str(i["sha256"]): str(i["path"]) for i in _record_files(rec, role)}
    for p in given:
        try:
            digest = sha256_of(p)
        except OSError as exc:
            raise InputError.single(f"cannot read the {role}: {exc.strerror or exc}", p) from None
        if digest not in named:
            listed = "; ".join(f"{path} (sha256 {sha[:12]}…)" for sha, path in named.items()) or "none"
            raise InputError.single(
                f"this {role} (sha256 {digest[:12]}…) is not one the {rec.kind} record {rec.path} names: "
                f"{listed}",
                p,
            )


def _protocol_from_record(rec: SourceRecord) -> Path | None:
    for item in _record_files(rec, "protocol"):
        p = Path(str(item["path"]))
        if p.is_file() and _hash_matches(p, str(item["sha256"])):
            return p
    return None


def _load(path: Path) -> LoadedProtocol:
    from bracer.protocol.load import load_protocol

    return load_protocol(path)


def make_report(req: ReportRequest, when: AnalysisTime | None = None) -> Document:
    """Run what is needed and build the report's document.

    Raises
    ------
    InputError
        An unreadable protocol, log or record; files that do not match the records; an unknown participant.
    """
    when = when or analysis_time()
    review_rec, audit_rec = _records(req.from_json)
    for rec in (review_rec, audit_rec):
        if rec is not None and req.participant is not None and rec.data.get("participant") != req.participant:
            raise InputError.single(
                f"--participant {req.participant} but the {rec.kind} record is for "
                f"{rec.data.get('participant')!r}",
                rec.path,
                field="participant",
            )
    participant = req.participant
    if participant is None:
        participant = next(
            (r.data.get("participant") for r in (audit_rec, review_rec) if r is not None), None
        )

    protocol_path = req.protocol
    for rec in (review_rec, audit_rec):
        if rec is not None and protocol_path is not None:
            _check_given(rec, [protocol_path], "protocol")
    if protocol_path is None:
        protocol_path = next(
            (p for p in (_protocol_from_record(r) for r in (audit_rec, review_rec) if r is not None) if p),
            None,
        )
    loaded = _load(protocol_path) if protocol_path is not None else None
    if loaded is not None and participant is not None and participant not in loaded.protocol.participants:
        import difflib

        known = list(loaded.protocol.participants)
        hint = difflib.get_close_matches(participant, known, n=1)
        raise InputError.single(
            f"participant '{participant}' is not in the protocol (participants: {', '.join(known) or 'none'})"
            + (f"; did you mean '{hint[0]}'?" if hint else ""),
            protocol_path,
            field="participant",
        )
    if review_rec is None and audit_rec is None and loaded is None:
        raise InputError.single("give a protocol file, or --from-json with a review or audit record")

    if review_rec is None and loaded is not None:
        from bracer.report.review_json import review_record
        from bracer.review import review as run_review

        review_rec = SourceRecord("review", review_record(run_review(loaded, participant)))

    logs = list(req.logs)
    notes: list[str] = []
    if audit_rec is None and logs:
        if loaded is None:
            raise InputError.single("auditing logs needs the protocol file")
        from bracer.audit.record import build_record
        from bracer.audit.run import audit as run_audit

        result = run_audit(loaded, logs, participant=participant, session_id=req.session)
        audit_rec = SourceRecord("audit", build_record(result, created=when.when))
    elif audit_rec is not None:
        if logs:
            _check_given(audit_rec, logs, "log")
        else:
            named = _record_files(audit_rec, "log")
            found = [
                Path(str(i["path"]))
                for i in named
                if Path(str(i["path"])).is_file() and _hash_matches(Path(str(i["path"])), str(i["sha256"]))
            ]
            if named and len(found) == len(named):
                logs = found
            elif named:
                absent = [display_path(str(i["path"])) for i in named if Path(str(i["path"])) not in found]
                notes.append(
                    "plots not drawn: the logs the audit record names are not at their recorded paths or "
                    "differ "
                    f"from them ({', '.join(absent)}); give them after the protocol to draw the plots"
                )
    context = None
    if audit_rec is not None and logs:
        if loaded is None:
            notes.append("plots not drawn: the protocol file the audit record names was not found unchanged")
        else:
            from bracer.report.signals import session_context

            context = session_context(loaded.protocol, logs, participant)
    if audit_rec is not None and req.session is not None and audit_rec.data.get("session") is None:
        audit_rec = SourceRecord(audit_rec.kind, {**audit_rec.data, "session": req.session}, audit_rec.path)
    return build_document(
        review=review_rec,
        audit=audit_rec,
        when=when,
        protocol=loaded.protocol if loaded is not None else None,
        context=context,
        session_date=req.session_date,
        figure_notes=notes,
    )
