"""Fail closed: whatever one value of the example is replaced by (or if it is deleted), loading either
succeeds or raises an :class:`~bracer.errors.InputError` whose every problem names the file and a line --
never another exception."""

from __future__ import annotations

import copy
from pathlib import Path
from typing import Any

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bracer.errors import InputError
from bracer.protocol.load import load_protocol
from bracer.protocol.resolve import resolve
from bracer.protocol.yamlsource import load_yaml

EXAMPLE = Path(__file__).resolve().parents[2] / "protocols" / "alder4-upper-limb.yaml"
_DATA = load_yaml(EXAMPLE).data


def _locations(value: Any, loc: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
    out = [loc] if loc else []
    if isinstance(value, dict):
        for key, item in value.items():
            out.extend(_locations(item, (*loc, key)))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            out.extend(_locations(item, (*loc, i)))
    return out


LOCATIONS = _locations(_DATA)

junk_scalar = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(min_value=-(10**12), max_value=10**12),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.sampled_from(
        [
            "-10 deg",
            "0 N",
            "1e400 N",
            "5 Nm",
            "90 deg/s",
            "not modelled",
            "main",
            "elbow_flexion",
            "2027-02-30",
            "planned",
            "N/cm^2",
            "1/s",
            "°",
        ]
    ),
)
junk = st.recursive(
    junk_scalar,
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=8), inner, max_size=3),
    max_leaves=6,
)


DELETE = object()


def _replaced(loc: tuple[Any, ...], value: Any) -> dict[str, Any]:
    data = copy.deepcopy(_DATA)
    node = data
    for part in loc[:-1]:
        node = node[part]
    if value is DELETE:
        del node[loc[-1]]
    else:
        node[loc[-1]] = value
    return data  # type: ignore[no-any-return]


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(loc=st.sampled_from(LOCATIONS), value=junk | st.just(DELETE))
def test_any_single_replacement_loads_or_fails_with_positions(
    tmp_path: Path, loc: tuple[Any, ...], value: Any
) -> None:
    path = tmp_path / "fuzzed.yaml"
    path.write_text(
        yaml.safe_dump(_replaced(loc, value), allow_unicode=True, sort_keys=False), encoding="utf-8"
    )
    try:
        loaded = load_protocol(path)
    except InputError as exc:
        assert exc.problems
        for problem in exc.problems:
            assert problem.path == str(path)
            assert problem.line is not None and problem.line >= 1
            assert problem.message and "Traceback" not in problem.message
    else:
        # A protocol that loads can be resolved for every participant (problems are data, not exceptions).
        for code in loaded.protocol.participants:
            resolve(loaded.protocol, code)
