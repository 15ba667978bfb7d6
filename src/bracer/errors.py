"""Errors a person can act on.

Every error about an input names the file, the line and column where known, the field, what was expected and
what was found.  The command line turns an :class:`InputError` into exit code 2 and a message, never a
traceback.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

__all__ = ["InputError", "Problem"]


@dataclass(frozen=True, slots=True)
class Problem:
    """One thing wrong with an input file."""

    message: str
    path: str | None = None
    line: int | None = None  # 1-based
    column: int | None = None  # 1-based
    field: str | None = None  # dotted location inside the file, e.g. "joints.elbow_flexion.range"

    def render(self) -> str:
        where = self.path or "<input>"
        if self.line is not None:
            where += f":{self.line}"
            if self.column is not None:
                where += f":{self.column}"
        at = f" [{self.field}]" if self.field else ""
        return f"{where}:{at} {self.message}"


@dataclass(eq=False)
class InputError(Exception):
    """An input (protocol, log, table, report record) that cannot be used as it is."""

    problems: list[Problem] = field(default_factory=list)

    @classmethod
    def single(
        cls,
        message: str,
        path: str | Path | None = None,
        line: int | None = None,
        column: int | None = None,
        field: str | None = None,
    ) -> InputError:
        return cls([Problem(message, str(path) if path is not None else None, line, column, field)])

    def __str__(self) -> str:
        return "\n".join(p.render() for p in self.problems)
