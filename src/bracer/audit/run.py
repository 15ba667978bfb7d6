"""The post-session audit: read the logs, check the data, then replay them against the effective limits.

:func:`audit` is the one entry point (the command line and ``bracer.audit(...)`` in a notebook both call it):

1. load the protocol and resolve the participant's effective limits;
2. read the logs on the protocol's channel map (:func:`bracer.session.read.read_session`);
3. the data-quality pass (:mod:`bracer.audit.quality`): findings, the masks of samples fit to analyse, the
   analysed coverage;
4. the limit checks (:data:`bracer.audit.checks.ALL`) and the session's summary figures.

Fail closed: a limit check that is not available or that fails is an error-level "not assessable" finding,
never a silent pass.
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from bracer import __version__
from bracer.errors import InputError
from bracer.findings import Check, Finding, Kind, Severity, register, worst

if TYPE_CHECKING:
    import pandas as pd

    from bracer.audit.context import AuditContext
    from bracer.audit.quality.base import StreamTiming
    from bracer.audit.quality.coverage import Coverage
    from bracer.protocol.load import LoadedProtocol
    from bracer.protocol.model import Protocol
    from bracer.protocol.resolve import ResolveProblem
    from bracer.session.model import InputFile

__all__ = ["CAUTION", "AuditResult", "audit"]

#: Said under every audit, in every format.
CAUTION = (
    "This audit is verification evidence about the analysed data, not a certification of the device or the "
    "session. Decisions rest with the responsible clinician, the ethics committee and local regulations."
)

UNRESOLVED = register(
    Check(
        "Q197",
        "limit-not-resolved",
        "A caution or override of the participant could not be applied: the limits audited are not the ones "
        "intended.",
        Severity.ERROR,
    )
)
UNAVAILABLE = register(
    Check(
        "Q198",
        "limit-checks-unavailable",
        "The limit checks could not be loaded: no statement about limits can be made.",
        Severity.ERROR,
    )
)
FAILED = register(
    Check(
        "Q199",
        "check-failed",
        "A limit check stopped with an internal error: what it checks is not assessable.",
        Severity.ERROR,
    )
)

#: Columns of :meth:`AuditResult.to_dataframe`, in order.
FINDING_COLUMNS = (
    "code",
    "name",
    "severity",
    "kind",
    "subject",
    "quantity",
    "direction",
    "layer",
    "channel",
    "t_start",
    "t_end",
    "t_peak",
    "i_start",
    "i_end",
    "peak",
    "limit",
    "margin",
    "unit",
    "message",
    "extra",
)


@dataclass(frozen=True, eq=False)
class AuditResult:
    """Everything one audit found, with the provenance to trace it back.

    ``inputs`` lists the protocol file first (when the audit was given a path), then the logs, each with its
    SHA-256.  ``summary`` holds the session's summary figures when the limit checks provide them.
    """

    findings: tuple[Finding, ...]
    coverage: Coverage
    streams: tuple[StreamTiming, ...]
    inputs: tuple[InputFile, ...]
    protocol_id: str
    protocol_version: str
    protocol_title: str
    participant: str | None
    session: str | None
    checks: tuple[str, ...]  # codes of the checks that ran
    limit_checks: bool  # False when the limit checks were not available
    summary: Any = None
    tool_version: str = __version__

    @property
    def worst(self) -> Severity | None:
        return worst(self.findings)

    def count(self, kind: Kind) -> int:
        return sum(1 for f in self.findings if f.kind == kind)

    @property
    def caution(self) -> str:
        return CAUTION

    @property
    def statement(self) -> str:
        """What the audit can say, in one sentence; never "safe" or "passed"."""
        analysed = f"analysed: {_percent(self.coverage.fraction)} of session time"
        channels = self.coverage.channels
        dead = len(self.coverage.not_analysed)
        if dead:
            analysed += f" on {len(channels) - dead} of {len(channels)} channels"
        exceedances = self.count(Kind.VIOLATION)
        if not self.limit_checks:
            head = "the limit checks did not run: this audit makes no statement about limits"
        elif self.coverage.analysed_s <= 0:
            head = "no data could be analysed: this audit makes no statement about limits"
        elif exceedances:
            head = f"{exceedances} exceedance(s) found in the analysed data ({analysed})"
        else:
            head = f"no exceedance found in the analysed data ({analysed})"
        tails = []
        if dead and (not self.limit_checks or self.coverage.analysed_s <= 0):
            tails.append(f"{dead} of {len(channels)} channels not analysed at all")
        na = self.count(Kind.NOT_ASSESSABLE)
        if na:
            tails.append(f"{na} not-assessable finding(s)")
        return head + ("; " + "; ".join(tails) if tails else "")

    def exit_code(self, fail_on: Severity) -> int:
        """0 when no finding is at or above ``fail_on``, else 1."""
        w = self.worst
        return 1 if w is not None and w >= fail_on else 0

    def to_dataframe(self) -> pd.DataFrame:
        """The findings as a pandas DataFrame, one row per finding (columns: :data:`FINDING_COLUMNS`)."""
        import pandas as pd

        rows = [f.to_dict() for f in self.findings]
        return pd.DataFrame(rows, columns=list(FINDING_COLUMNS))

    def to_record(self) -> dict[str, Any]:
        """The JSON record (see :mod:`bracer.audit.record` and its published JSON Schema)."""
        from bracer.audit.record import build_record

        return build_record(self)


def _percent(fraction: float) -> str:
    """Rounded down, so that 99.96 % of the time never reads as 100 %."""
    return f"{math.floor(fraction * 1000 + 1e-9) / 10:.1f} %"


# ------------------------------------------------------------------------------------------------ the audit


def audit(
    protocol: str | Path | LoadedProtocol | Protocol,
    log_paths: str | Path | Sequence[str | Path],
    participant: str | None = None,
    session_id: str | None = None,
) -> AuditResult:
    """Audit a session's logs against a protocol's effective limits for one participant.

    Parameters
    ----------
    protocol
        Path of the protocol file, or a protocol already loaded.
    log_paths
        One log file or several (CSV, Parquet, Arrow IPC/Feather); each stream may be in its own file.
    participant
        Participant code from the protocol (their cautions and overrides apply); None: the nominal limits.
    session_id
        Free text naming the session, carried into the record.

    Raises
    ------
    InputError
        Unreadable protocol or log, unknown participant: the input cannot be used as it is.
    """
    from bracer.audit.context import AuditContext
    from bracer.audit.quality import run_quality
    from bracer.protocol.resolve import resolve
    from bracer.session.model import InputFile
    from bracer.session.read import read_session, sha256_file

    proto, path = _protocol(protocol)
    if participant is not None and participant not in proto.participants:
        import difflib

        known = list(proto.participants)
        hint = difflib.get_close_matches(participant, known, n=1)
        did = f"; did you mean '{hint[0]}'?" if hint else ""
        raise InputError.single(
            f"participant '{participant}' is not in the protocol (participants: "
            f"{', '.join(known) or 'none'}){did}",
            path,
            field="participant",
        )
    resolution = resolve(proto, participant)
    session = read_session(resolution.protocol, log_paths)
    quality = run_quality(resolution, session)
    ctx = AuditContext(resolution, quality.session, coverage=quality.coverage)
    limit_findings, limit_codes, available = _limit_checks(ctx)
    inputs = session.inputs
    if path is not None:
        inputs = (InputFile(str(path), sha256_file(path), path.stat().st_size, "yaml"), *inputs)
    summary, trouble = _summary(ctx) if available else (None, [])
    unresolved = [_unresolved(p) for p in resolution.problems]
    findings = sorted((*unresolved, *quality.findings, *limit_findings, *trouble), key=_order)
    return AuditResult(
        findings=tuple(findings),
        coverage=quality.coverage,
        streams=quality.timings,
        inputs=inputs,
        protocol_id=proto.protocol.id,
        protocol_version=proto.protocol.version,
        protocol_title=proto.protocol.title,
        participant=participant,
        session=session_id,
        checks=(*quality.codes, *limit_codes),
        limit_checks=available,
        summary=summary,
    )


def _protocol(protocol: str | Path | LoadedProtocol | Protocol) -> tuple[Protocol, Path | None]:
    from bracer.protocol.load import LoadedProtocol, load_protocol
    from bracer.protocol.model import Protocol

    if isinstance(protocol, Protocol):
        return protocol, None
    if isinstance(protocol, LoadedProtocol):
        return protocol.protocol, Path(protocol.path)
    path = Path(protocol)
    return load_protocol(path).protocol, path


def _order(f: Finding) -> tuple[float, str, int]:
    return (
        f.t_start if f.t_start is not None else -math.inf,
        f.code,
        f.i_start if f.i_start is not None else -1,
    )


def _limit_checks(ctx: AuditContext) -> tuple[list[Finding], tuple[str, ...], bool]:
    """Run every limit check; a missing check package or a failing check becomes an error finding."""
    try:
        from bracer.audit import checks

        modules = tuple(checks.ALL)
    except Exception as exc:  # an ImportError, or any error raised while the check modules load
        if os.environ.get("BRACER_DEBUG"):
            raise
        return [_unavailable(f"{type(exc).__name__}: {exc}")], (), False
    if not modules:
        return [_unavailable("bracer.audit.checks.ALL is empty")], (), False
    findings: list[Finding] = []
    codes: list[str] = []
    for module in modules:
        check = getattr(module, "CHECK", None)
        code = check.code if isinstance(check, Check) else module.__name__.rsplit(".", 1)[-1]
        codes.append(code)
        try:
            found = list(module.run(ctx))
        except Exception as exc:  # a bug in a check must not hide what it checks
            if os.environ.get("BRACER_DEBUG"):
                raise
            findings.append(
                Finding(
                    FAILED.code,
                    FAILED.name,
                    FAILED.severity,
                    Kind.NOT_ASSESSABLE,
                    f"check {code} ({module.__name__}) stopped with an internal error ({type(exc).__name__}: "
                    f"{exc}); "
                    "what it checks is not assessable. This is a bug in bracer: run again with "
                    "BRACER_DEBUG=1 and "
                    "report it",
                    extra=(("check", code),),
                )
            )
            continue
        bad = [f for f in found if not isinstance(f, Finding)]
        if bad:
            raise TypeError(f"check {code} returned {type(bad[0]).__name__}, expected Finding")
        findings += found
    return findings, tuple(codes), True


def _unresolved(problem: ResolveProblem) -> Finding:
    severity = Severity.ERROR if problem.severity == "error" else Severity.WARNING
    return Finding(
        UNRESOLVED.code,
        UNRESOLVED.name,
        severity,
        Kind.NOT_ASSESSABLE,
        f"{problem.source_kind} '{problem.source}' could not be applied to {problem.target}: "
        f"{problem.message}; "
        "the limits this audit used there are not the ones the protocol intends for this participant",
        subject=problem.target,
        extra=(("source", problem.source), ("source_kind", problem.source_kind)),
    )


def _unavailable(reason: str) -> Finding:
    return Finding(
        UNAVAILABLE.code,
        UNAVAILABLE.name,
        UNAVAILABLE.severity,
        Kind.NOT_ASSESSABLE,
        f"limit checks not available ({reason}): range, speed, torque, force, stop and protection limits "
        "were "
        "not assessed; only the data-quality findings are reported",
    )


def _summary(ctx: AuditContext) -> tuple[Any, list[Finding]]:
    """The checks' summary figures, if the checks provide them (None otherwise)."""
    try:
        from bracer.audit.summary import summarise
    except ImportError:
        return None, []
    try:
        return summarise(ctx), []
    except Exception as exc:  # figures are extra; a bug in them must not stop the audit
        if os.environ.get("BRACER_DEBUG"):
            raise
        message = (
            f"the session's summary figures could not be computed ({type(exc).__name__}: {exc}); the "
            "findings "
            "are complete. This is a bug in bracer: run again with BRACER_DEBUG=1 and report it"
        )
        return None, [Finding(FAILED.code, FAILED.name, Severity.WARNING, Kind.NOT_ASSESSABLE, message)]
