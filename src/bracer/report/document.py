"""The report as one typed document.

A report is built once (:func:`bracer.report.build.build_document`) from the JSON records of a pre-trial
review and/or a post-session audit -- the records a run writes, or that ``--from-json`` reads back, so a
report made from a record and one made by running the analysis are the same document -- and every format
(Markdown, HTML, PDF, JSON) renders this one model.  The formats cannot disagree because none of them computes
anything: they lay out the rows below.

Numbers stay numbers here (with their unit beside them) until a writer renders them with
:mod:`bracer.report.wording`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from bracer.report.plots import BarChart, Chart
from bracer.report.provenance import AnalysisTime, InputDigest, Software

__all__ = [
    "STANDARDS",
    "STATEMENTS",
    "CautionEntry",
    "ClassSummary",
    "ContactReferenceRow",
    "CoverageBlock",
    "Document",
    "Figure",
    "FindingRow",
    "Incident",
    "LimitChange",
    "Provenance",
    "RangeRow",
    "RecordNote",
    "ReviewCheckLine",
    "ReviewFindingRow",
    "ReviewSection",
    "SignOff",
    "StopJointRow",
    "StopRow",
    "TitleBlock",
]

#: What every report says about itself, in every format.
STATEMENTS: tuple[str, ...] = (
    "This report is verification evidence: it states what the protocol declares and what the analysed data "
    "show. It is not a certification of the device, the protocol or the session.",
    "Decisions about the device, the limits, the participant and further sessions rest with the responsible "
    "clinician, the ethics committee and local regulations.",
    "Findings cover the analysed data only; whatever was not analysed is named in this report and is not "
    "counted as within limits.",
)

#: Standards whose vocabulary the report uses, and how.
STANDARDS: tuple[tuple[str, str], ...] = (
    (
        "IEC 80601-2-78:2019",
        "particular requirements for rehabilitation robots (the device class of this report)",
    ),
    (
        "ISO 14971:2019",
        "risk management vocabulary: a limit is a risk control; this report is evidence of its verification",
    ),
    (
        "ISO 14155:2020",
        "clinical-investigation vocabulary for the candidate incidents: adverse event, device "
        "deficiency; seriousness and relatedness are assessed by the clinician",
    ),
    (
        "ISO/TS 15066:2016",
        "Annex A body-region contact values, used as reference values from healthy adults, "
        "not as clinical limits",
    ),
    ("IEC 60204-1:2016", "clause 9.2.2 stop categories 0, 1 and 2"),
)


@dataclass(frozen=True, slots=True)
class TitleBlock:
    """Who and what the report is about.  A field the inputs do not state is None (rendered "not stated")."""

    kind: str  # "Pre-trial review", "Session audit", "Pre-trial review and session audit"
    study: str | None
    protocol_id: str
    protocol_version: str
    protocol_date: str | None
    protocol_title: str | None
    site: str | None
    device: str | None
    participant: str | None
    session: str | None
    session_date: str | None
    analysis_date: str  # ISO 8601, UTC


@dataclass(frozen=True, slots=True)
class RecordNote:
    """A JSON record the report was built from: its kind, the file it was read from (None: this run), when it
    was created and by which bracer."""

    kind: str  # "review" or "audit"
    path: str | None
    created: str | None
    tool_version: str | None


@dataclass(frozen=True, slots=True)
class Provenance:
    inputs: tuple[InputDigest, ...]
    software: Software
    analysis: AnalysisTime
    records: tuple[RecordNote, ...]
    notes: tuple[str, ...] = ()  # e.g. two records naming different versions of one file


@dataclass(frozen=True, slots=True)
class ClassSummary:
    """One limit class: counts and the careful sentence that states what the analysed data show."""

    key: str
    label: str
    violations: int
    near_misses: int
    not_assessable: int
    events: int  # stops analysed (stops class), data-quality findings (data-quality class), else 0
    statement: str
    not_analysed: tuple[str, ...]  # what was not analysed, each with its reason
    refs: tuple[str, ...]  # numbers of the findings of this class


@dataclass(frozen=True, slots=True)
class CoverageBlock:
    session_start: float | None
    session_end: float | None
    session_s: float
    analysed_s: float
    fraction: float
    streams: tuple[
        tuple[str, str, int, float | None, float | None], ...
    ]  # name, path, samples, declared, measured Hz
    not_analysed: tuple[str, ...]  # channels with no analysed time, with the reason


@dataclass(frozen=True, slots=True)
class FindingRow:
    """One audit finding as the findings table shows it; ``plot`` is the id of the figure that shows it."""

    ref: str
    code: str
    name: str
    severity: str
    kind: str
    subject: str | None
    quantity: str | None
    direction: str | None
    layer: str | None
    channel: str | None
    t_start: float | None
    t_end: float | None
    t_peak: float | None
    peak: float | None
    limit: float | None
    margin: float | None
    unit: str | None
    message: str
    extra: tuple[tuple[str, Any], ...] = ()
    plot: str | None = None

    @property
    def duration(self) -> float | None:
        if self.t_start is None or self.t_end is None:
            return None
        return self.t_end - self.t_start

    def get(self, key: str) -> Any:
        return dict(self.extra).get(key)


@dataclass(frozen=True, slots=True)
class ReviewCheckLine:
    code: str
    name: str
    summary: str
    errors: int
    warnings: int
    infos: int


@dataclass(frozen=True, slots=True)
class ReviewFindingRow:
    ref: str
    code: str
    severity: str
    subject: str | None
    message: str


@dataclass(frozen=True, slots=True)
class LimitChange:
    """One limit a caution or override changed (or could not change), ``before`` → ``after`` in ``unit``."""

    target: str
    limit: str
    before: float
    after: float
    unit: str
    status: str  # "applied", "not applied: ...", "applied; loosens the limit"
    justification: str | None


@dataclass(frozen=True, slots=True)
class CautionEntry:
    source: str  # "caution spasticity", "override 1"
    population: str | None
    text: str | None
    applied: bool
    changes: tuple[LimitChange, ...]


@dataclass(frozen=True, slots=True)
class RangeRow:
    """One end of a joint's range: every layer's limit and the participant's range, in ``unit``."""

    joint: str
    direction: str
    planned: float | None
    device: float | None
    mechanical: float | None
    participant: float | None
    source: str | None  # measured, normative, or None when unknown
    unit: str
    layers: str  # what keeps the joint inside the participant's range: "controller only", ...


@dataclass(frozen=True, slots=True)
class ContactReferenceRow:
    """A contact limit against its ISO/TS 15066 Annex A reference value (healthy adults, not clinical)."""

    contact: str
    area: str | None
    limit: str  # "force quasi_static"
    basis: str
    value: float
    reference: float
    unit: str
    ratio: float | None  # None: no transient contact permissible in the region


@dataclass(frozen=True, slots=True)
class ReviewSection:
    participant: str | None
    counts: tuple[int, int, int]  # error, warning, info
    checks: tuple[ReviewCheckLine, ...]
    findings: tuple[ReviewFindingRow, ...]
    cautions: tuple[CautionEntry, ...]
    statement: str
    ranges: tuple[RangeRow, ...] = ()
    contact_references: tuple[ContactReferenceRow, ...] = ()


@dataclass(frozen=True, slots=True)
class StopJointRow:
    joint: str
    distance: float | None
    predicted: float | None  # distance the declared stop predicts
    unit: str | None
    speed_at_trigger: float | None
    speed_unit: str | None
    ref: str  # the finding


@dataclass(frozen=True, slots=True)
class StopRow:
    """One stop episode, from the stop findings (A201–A204) that share its trigger."""

    ref: str
    trigger: str  # emergency_stop, protective_stop, safety_state, exceedance
    label: str
    t_trigger: float
    t_standstill: float | None
    latency: float | None
    latency_budget: float | None
    latency_unit: str | None
    latency_status: str
    torque_off: float | None
    torque_budget: float | None
    torque_unit: str | None
    torque_status: str
    category: int | None
    category_status: str
    joints: tuple[StopJointRow, ...]
    refs: tuple[str, ...]
    outside: bool = False  # some finding of this stop is an exceedance of the declared stop behaviour
    plot: str | None = None


@dataclass(frozen=True, slots=True)
class Incident:
    """A candidate incident for the clinician to assess.  Seriousness and relatedness are left blank on
    purpose."""

    ref: str
    t: float | None
    finding: str  # the finding's number
    event: str
    categories: tuple[str, ...]  # "adverse event", "device deficiency" (ISO 14155:2020 vocabulary)
    basis: str  # why these categories are suggested


@dataclass(frozen=True, eq=False)
class Figure:
    """One plot: an id to link to, a title, a caption saying what it shows, and the chart itself."""

    id: str
    title: str
    caption: str
    chart: Chart | BarChart
    group: str  # "overview", "zoom", "stop", "latency"


@dataclass(frozen=True, slots=True)
class SignOff:
    roles: tuple[str, ...]
    lines: tuple[str, ...] = ("Name", "Signature", "Date")


@dataclass(frozen=True, eq=False)
class Document:
    title: TitleBlock
    provenance: Provenance
    statement: str | None  # the audit's one-sentence statement (None: no audit)
    summary: tuple[ClassSummary, ...]
    coverage: CoverageBlock | None
    review: ReviewSection | None
    findings: tuple[FindingRow, ...]
    stops: tuple[StopRow, ...]
    incidents: tuple[Incident, ...]
    figures: tuple[Figure, ...]
    figure_notes: tuple[str, ...]
    sign_off: SignOff
    #: the review and audit records the document was built from (None where absent), for the JSON record
    sources: dict[str, dict[str, Any] | None] = field(default_factory=dict)
    statements: tuple[str, ...] = STATEMENTS
    standards: tuple[tuple[str, str], ...] = STANDARDS

    @property
    def has_audit(self) -> bool:
        return self.statement is not None

    def figure(self, fid: str) -> Figure | None:
        return next((f for f in self.figures if f.id == fid), None)
