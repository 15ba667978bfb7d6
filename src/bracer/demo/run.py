"""Run the demo study into a folder: protocol, pre-trial reviews, simulated sessions, audits and reports.

Layout of the folder (paths as the study team would keep them)::

    bracer-demo.json               what the demo wrote (the marker of a demo folder)
    README.md                      what is here and the commands that made each file
    alder4-demo-study.yaml         the protocol
    reviews/<participant>.review.json
    sessions/<participant>/<session>/main.parquet, cuffs.parquet, truth.json, audit.json
    reports/<participant>/bracer-report_..._<participant>.{md,html,pdf,json}            pre-trial review
    reports/<participant>/bracer-report_..._<participant>_<session>.{md,html,pdf,json}  review and audit

The steps are the library calls the commands make (``bracer review --json``, ``bracer simulate``, ``bracer
audit --json``, ``bracer report --from-json``), so the files are the ones a team gets by running the commands
by hand.  A folder that is not empty is used only when an earlier demo wrote it; then only the files the demo
writes are replaced.
"""

from __future__ import annotations

import json
import shutil
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from bracer import __version__
from bracer.demo.study import PROTOCOL_FILE, STUDY, DemoSession, participant
from bracer.errors import InputError
from bracer.findings import Finding, Severity

__all__ = ["MANIFEST", "Counts", "DemoResult", "ReviewOutcome", "SessionOutcome", "Step", "run_demo"]

#: The file that marks a folder as written by the demo (and lists what it holds).
MANIFEST = "bracer-demo.json"
#: Everything the demo writes at the top of its folder; nothing else there is touched.
_OWNED = (MANIFEST, "README.md", PROTOCOL_FILE, "reviews", "sessions", "reports")
_FORMATS = ("md", "html", "pdf", "json")


@dataclass(frozen=True, slots=True)
class Step:
    """One finished step of the demo, for progress display."""

    number: int  # 1-based
    total: int
    action: str  # protocol, review, simulate, audit, report
    participant: str | None
    session: str | None
    seconds: float
    detail: str


@dataclass(frozen=True, slots=True)
class Counts:
    """Findings by severity."""

    error: int
    warning: int
    info: int

    @classmethod
    def of(cls, findings: tuple[Finding, ...]) -> Counts:
        def n(s: Severity) -> int:
            return sum(1 for f in findings if f.severity == s)

        return cls(n(Severity.ERROR), n(Severity.WARNING), n(Severity.INFO))

    def describe(self) -> str:
        total = self.error + self.warning + self.info
        return f"{total} finding(s): {self.error} error, {self.warning} warning, {self.info} info"


@dataclass(frozen=True, slots=True)
class ReviewOutcome:
    participant: str
    cautions: tuple[str, ...]
    record: Path
    reports: tuple[Path, ...]
    counts: Counts


@dataclass(frozen=True, slots=True)
class SessionOutcome:
    """One session: its files, the audit's counts and its analysed share of the session time."""

    spec: DemoSession
    folder: Path
    logs: tuple[Path, ...]
    truth: Path
    audit_record: Path
    reports: tuple[Path, ...]
    counts: Counts
    coverage: float  # fraction of session time analysed, 0..1
    statement: str

    def report(self, fmt: str) -> Path:
        """The report file of one format (md, html, pdf, json)."""
        return next(p for p in self.reports if p.suffix == f".{fmt}")


@dataclass(frozen=True, slots=True)
class DemoResult:
    folder: Path
    protocol: Path
    manifest: Path
    reviews: tuple[ReviewOutcome, ...]
    sessions: tuple[SessionOutcome, ...]


def prepare_folder(folder: Path) -> None:
    """Create ``folder``, or clear what an earlier demo wrote into it.

    Raises
    ------
    InputError
        ``folder`` is a file, is a folder that is not empty and holds no earlier demo, or cannot be created.
    """
    if folder.exists() and not folder.is_dir():
        raise InputError.single(
            "this is a file, not a folder; give a folder for the demo study (it is created when missing)",
            folder,
        )
    if folder.is_dir() and any(folder.iterdir()) and not (folder / MANIFEST).is_file():
        raise InputError.single(
            f"the folder is not empty and holds no earlier bracer demo (no {MANIFEST}); give a new or empty "
            "folder, e.g. ./bracer-demo",
            folder,
        )
    try:
        for name in _OWNED:
            path = folder / name
            if path.is_dir() and not path.is_symlink():
                shutil.rmtree(path)
            elif path.exists() or path.is_symlink():
                path.unlink()
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError.single(f"cannot prepare the demo folder: {exc.strerror or exc}", folder) from None


def run_demo(folder: str | Path, on_step: Callable[[Step], None] | None = None) -> DemoResult:
    """Write the demo study into ``folder`` and run review, simulation, audit and report on all of it.

    Parameters
    ----------
    folder
        Where to write; created when missing.  An earlier demo there is replaced.
    on_step
        Called after each step (for progress display).

    Raises
    ------
    InputError
        The folder cannot be used or written (see :func:`prepare_folder`).
    """
    folder = Path(folder)
    prepare_folder(folder)
    try:
        return _Run(folder, on_step).run()
    except OSError as exc:
        where = exc.filename or folder
        raise InputError.single(f"cannot write the demo study: {exc.strerror or exc}", where) from None


class _Run:
    """The steps of one demo run, numbered for progress."""

    def __init__(self, folder: Path, on_step: Callable[[Step], None] | None) -> None:
        from bracer.report.provenance import analysis_time

        self.folder = folder
        self.on_step = on_step
        self.codes = tuple(dict.fromkeys(s.participant for s in STUDY))
        self.total = 1 + len(self.codes) + 3 * len(STUDY)
        self.done = 0
        self.clock = time.perf_counter()
        self.when = analysis_time()  # one analysis time for every record and report of the run

    def step(self, action: str, who: str | None, session: str | None, detail: str) -> None:
        now = time.perf_counter()
        self.done += 1
        if self.on_step is not None:
            self.on_step(Step(self.done, self.total, action, who, session, now - self.clock, detail))
        self.clock = now

    def run(self) -> DemoResult:
        from bracer.protocol.load import load_protocol
        from bracer.resources import data_dir

        protocol = self.folder / PROTOCOL_FILE
        _write_manifest(self.folder, protocol, (), (), complete=False)
        shutil.copyfile(data_dir("protocols") / PROTOCOL_FILE, protocol)
        loaded = load_protocol(protocol)
        self.step(
            "protocol",
            None,
            None,
            f"wrote {protocol} ({len(self.codes)} participants, {len(STUDY)} sessions)",
        )
        reviews = {code: self.review(loaded, code) for code in self.codes}
        sessions = tuple(self.session(loaded, spec, reviews[spec.participant].record) for spec in STUDY)
        manifest = _write_manifest(self.folder, protocol, tuple(reviews.values()), sessions, complete=True)
        _write_readme(self.folder, protocol, tuple(reviews.values()), sessions)
        return DemoResult(self.folder, protocol, manifest, tuple(reviews.values()), sessions)

    def review(self, loaded, code: str) -> ReviewOutcome:  # type: ignore[no-untyped-def]
        from bracer.report.review_json import write_review_json
        from bracer.review import review

        result = review(loaded, code)
        record = self.folder / "reviews" / f"{code}.review.json"
        record.parent.mkdir(parents=True, exist_ok=True)
        write_review_json(result, record)
        reports = self.report(loaded.path, (), code, None, (record,), None)
        counts = Counts.of(result.findings)
        cautions = ", ".join(result.resolution.cautions) or "none"
        self.step("review", code, None, f"cautions: {cautions}; {counts.describe()}; {record}")
        return ReviewOutcome(code, tuple(result.resolution.cautions), record, reports, counts)

    def session(self, loaded, spec: DemoSession, review_record: Path) -> SessionOutcome:  # type: ignore[no-untyped-def]
        from bracer.audit.record import build_record, dumps
        from bracer.audit.run import audit
        from bracer.simulate import SimulationParameters, lookup, simulate

        who = participant(spec.participant)
        where = self.folder / "sessions" / spec.participant / spec.session
        sim = simulate(
            loaded,
            where,
            participant=spec.participant,
            duration=spec.duration,
            scenario=[lookup(text) for text in spec.incidents],
            seed=spec.seed,
            params=SimulationParameters(body_mass=who.body_mass, height=who.height),
        )
        scripted = ", ".join(spec.incidents) if spec.incidents else "clean session, no incidents"
        self.step("simulate", spec.participant, spec.session, f"{spec.duration:g} s: {scripted}")

        result = audit(loaded, sim.files, participant=spec.participant, session_id=spec.session)
        record = where / "audit.json"
        record.write_text(dumps(build_record(result, created=self.when.when)), encoding="utf-8")
        counts = Counts.of(result.findings)
        self.step("audit", spec.participant, spec.session, f"{counts.describe()}; {record}")

        reports = self.report(
            loaded.path, sim.files, spec.participant, spec.session, (review_record, record), spec.date
        )
        self.step("report", spec.participant, spec.session, f"{reports[0].with_suffix('.*')}")
        return SessionOutcome(
            spec,
            where,
            tuple(sim.files),
            sim.truth_path,
            record,
            reports,
            counts,
            result.coverage.fraction,
            result.statement,
        )

    def report(
        self,
        protocol: Path,
        logs: tuple[Path, ...],
        code: str,
        session: str | None,
        records: tuple[Path, ...],
        date: str | None,
    ) -> tuple[Path, ...]:
        from bracer.report.run import ReportRequest, make_report
        from bracer.report.write import write_report

        request = ReportRequest(Path(protocol), logs, code, session, records, date)
        doc = make_report(request, self.when)
        return tuple(write_report(doc, self.folder / "reports" / code, _FORMATS))


def _write_manifest(
    folder: Path,
    protocol: Path,
    reviews: tuple[ReviewOutcome, ...],
    sessions: tuple[SessionOutcome, ...],
    *,
    complete: bool,
) -> Path:
    """``bracer-demo.json``: what the demo wrote, with paths relative to the demo folder."""

    def rel(p: Path) -> str:
        return p.relative_to(folder).as_posix()

    data = {
        "bracer_demo": 1,
        "generator": f"bracer {__version__}",
        "complete": complete,
        "protocol": rel(protocol),
        "reviews": [
            {
                "participant": r.participant,
                "cautions": list(r.cautions),
                "record": rel(r.record),
                "reports": [rel(p) for p in r.reports],
                "findings": {"error": r.counts.error, "warning": r.counts.warning, "info": r.counts.info},
            }
            for r in reviews
        ],
        "sessions": [
            {
                "participant": s.spec.participant,
                "session": s.spec.session,
                "date": s.spec.date,
                "duration_s": s.spec.duration,
                "seed": s.spec.seed,
                "incidents": list(s.spec.incidents),
                "logs": [rel(p) for p in s.logs],
                "truth": rel(s.truth),
                "audit": rel(s.audit_record),
                "reports": [rel(p) for p in s.reports],
                "findings": {"error": s.counts.error, "warning": s.counts.warning, "info": s.counts.info},
                "analysed_fraction": s.coverage,
                "statement": s.statement,
            }
            for s in sessions
        ],
    }
    path = folder / MANIFEST
    path.write_text(json.dumps(data, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    return path


def _write_readme(
    folder: Path, protocol: Path, reviews: tuple[ReviewOutcome, ...], sessions: tuple[SessionOutcome, ...]
) -> None:
    """A short guide to the folder, with the command that makes each kind of file (paths as given)."""
    first = sessions[0]
    logs = " ".join(str(p) for p in first.logs)
    code, sid = first.spec.participant, first.spec.session
    who = participant(code)
    incidents = f"--incident {','.join(first.spec.incidents)}" if first.spec.incidents else "--clean"
    review = reviews[0]
    lines = [
        "# bracer demo study (invented)",
        "",
        "Written by `bracer demo`: an invented study of the invented Alder-4 arm exoskeleton at the invented "
        "Alder Vale Rehabilitation Unit. Three participants (post-stroke with spasticity and shoulder "
        "subluxation; spinal cord injury with low bone density; an unimpaired control), two simulated "
        "sessions each. The sessions contain scripted incidents, so their findings are expected; each "
        "session's `truth.json` lists them with exact times.",
        "",
        "| what | where |",
        "| --- | --- |",
        f"| protocol | `{protocol}` |",
        f"| pre-trial reviews (JSON records) | `{review.record.parent}/` |",
        "| session logs, ground truth, audit records | "
        f"`{first.folder.parent.parent}/<participant>/<session>/` |",
        f"| reports (Markdown, HTML, PDF, JSON) | `{first.reports[0].parent.parent}/<participant>/` |",
        "",
        "The same files by hand, for the first session (paths relative to the folder `bracer demo` ran in):",
        "",
        "```sh",
        f"bracer review {protocol} --participant {code} --json {review.record}",
        f"bracer simulate {protocol} --participant {code} --duration {first.spec.duration:g}s "
        f"--seed {first.spec.seed} {incidents} --body-mass {who.body_mass:g}kg --height {who.height:g}m "
        f"--out {first.folder}",
        f"bracer audit {protocol} {logs} --participant {code} --session {sid} --json {first.audit_record}",
        f"bracer report {protocol} {logs} --participant {code} --session {sid} "
        f"--from-json {review.record} --from-json {first.audit_record} --out {first.reports[0].parent}",
        f"bracer verify {first.report('json')}",
        "```",
        "",
        "bracer states what the analysed data show. It does not certify a device, a protocol or a session; "
        "decisions rest with the responsible clinician, the ethics committee and local regulations.",
        "",
    ]
    (folder / "README.md").write_text("\n".join(lines), encoding="utf-8")
