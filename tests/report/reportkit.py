"""Shared helpers of the report tests: a fixed session in a folder of its own, and report building.

Reports are built with ``SOURCE_DATE_EPOCH`` set and from inside the session's folder, so that the paths they
record (``protocol.yaml``, ``main.csv``, ``cuffs.csv``) and their analysis time are the same on every machine.
"""

from __future__ import annotations

import os
import shutil
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path

import sessionkit

#: 2027-01-15T08:00:00Z: the analysis time of every report built here
EPOCH = "1800000000"


@contextmanager
def inside(folder: Path, epoch: str | None = EPOCH) -> Iterator[None]:
    """Run a block from ``folder`` with ``SOURCE_DATE_EPOCH`` set (restored afterwards)."""
    before_dir = Path.cwd()
    before_epoch = os.environ.get("SOURCE_DATE_EPOCH")
    os.chdir(folder)
    if epoch is None:
        os.environ.pop("SOURCE_DATE_EPOCH", None)
    else:
        os.environ["SOURCE_DATE_EPOCH"] = epoch
    try:
        yield
    finally:
        os.chdir(before_dir)
        if before_epoch is None:
            os.environ.pop("SOURCE_DATE_EPOCH", None)
        else:
            os.environ["SOURCE_DATE_EPOCH"] = before_epoch


@dataclass(frozen=True)
class KitSession:
    folder: Path
    protocol: Path  # relative to folder
    logs: tuple[Path, ...]  # relative to folder


def make_kit(folder: Path) -> KitSession:
    folder.mkdir(parents=True, exist_ok=True)
    shutil.copy(sessionkit.PROTOCOL, folder / "protocol.yaml")
    logs = sessionkit.write_session(folder)
    return KitSession(folder, Path("protocol.yaml"), tuple(Path(p.name) for p in logs))


def build(kit: KitSession, *, participant: str | None = "AV-P01", audit: bool = True, session: str = "S01"):  # type: ignore[no-untyped-def]
    """The report's document for the kit session (review and audit, or the review only)."""
    from bracer.report.run import ReportRequest, make_report

    with inside(kit.folder):
        return make_report(
            ReportRequest(
                kit.protocol,
                kit.logs if audit else (),
                participant,
                session if audit else None,
                session_date="2027-02-03" if audit else None,
            )
        )
