"""How a report writes numbers and labels: one set of functions every format uses, so that the Markdown, HTML
and PDF of one report show the same figures in the same words.

Numbers are rendered with up to four significant digits and their unit; times on the log clock with the
millisecond; percentages of session time are rounded *down* (99.96 % reads 99.9 %, never 100 %).
"""

from __future__ import annotations

import math

__all__ = [
    "KIND_LABELS",
    "SEVERITY_LABELS",
    "duration",
    "percent",
    "plural",
    "signed",
    "time_s",
    "value",
]

SEVERITY_LABELS = {"error": "ERROR", "warning": "WARNING", "info": "info"}
KIND_LABELS = {
    "violation": "exceedance",
    "near_miss": "near miss",
    "stop": "stop",
    "data_quality": "data quality",
    "not_assessable": "not assessable",
    "review": "review",
}


def _number(v: float, digits: int = 4) -> str:
    if v == 0:
        return "0"
    if not math.isfinite(v):
        return str(v)
    text = f"{v:.{digits}g}"
    if "e" in text:
        mantissa, exp = text.split("e")
        return f"{mantissa}e{int(exp)}"
    return text


def value(v: float | None, unit: str | None = None, digits: int = 4) -> str:
    """``51.4 N``; an en dash for a missing value."""
    if v is None:
        return "–"
    text = _number(float(v), digits)
    return f"{text} {unit}" if unit else text


def signed(v: float | None, unit: str | None = None) -> str:
    """A margin with its sign: ``+12 deg`` inside the limit, ``−11.4 N`` beyond it."""
    if v is None:
        return "–"
    text = value(abs(v), unit)
    if v > 0:
        return "+" + text
    if v < 0:
        return "−" + text
    return text


def time_s(t: float | None) -> str:
    """A time on the log clock: ``12.345 s`` (millisecond resolution)."""
    if t is None:
        return "–"
    return f"{t:.3f} s"


def duration(d: float | None) -> str:
    """A duration: ``196 ms`` below 10 s, else ``12.3 s`` / ``4 min 05 s``."""
    if d is None:
        return "–"
    if d < 10:
        return f"{_number(d * 1e3, 4)} ms" if d < 1 else f"{d:.3f} s"
    if d < 600:
        return f"{d:.1f} s"
    minutes, seconds = divmod(round(d), 60)
    return f"{minutes} min {seconds:02d} s"


def percent(fraction: float | None) -> str:
    """A fraction as a percentage rounded down to 0.1 %."""
    if fraction is None:
        return "–"
    return f"{math.floor(fraction * 1000 + 1e-9) / 10:.1f} %"


def plural(n: int, word: str, many: str | None = None) -> str:
    """``1 exceedance``, ``3 exceedances``."""
    return f"{n} {word if n == 1 else (many or word + 's')}"
