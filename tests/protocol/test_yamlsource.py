"""The YAML reader: plain values, and the line and column (1-based, in characters) of every key and value."""

from __future__ import annotations

from pathlib import Path

import pytest

from bracer.errors import InputError
from bracer.protocol.yamlsource import Located, load_yaml

# Every position below is counted by hand on this text (line numbers on the left are not part of it).
SAMPLE = """\
bracer_protocol: 1
joints:
  elbow:
    range: {min: 10 deg, max: 120 deg}
    list:
      - a
      -   b
    text: >-
      folded
      text
  "quoted key": yes
# a comment line
last: [1, 2.5, ~, 2027-01-15, 0x1F, 1_000, '1:20']
"""


@pytest.fixture
def sample(tmp_path: Path) -> Located:
    path = tmp_path / "sample.yaml"
    path.write_text(SAMPLE, encoding="utf-8")
    return load_yaml(path)


def test_plain_values(sample: Located) -> None:
    assert sample.data == {
        "bracer_protocol": 1,
        "joints": {
            "elbow": {
                "range": {"min": "10 deg", "max": "120 deg"},
                "list": ["a", "b"],
                "text": "folded text",
            },
            "quoted key": True,
        },
        # dates stay text (the model parses them), hex and underscores are YAML ints, '1:20' stays text
        "last": [1, 2.5, None, "2027-01-15", 31, 1000, "1:20"],
    }


@pytest.mark.parametrize(
    ("loc", "key", "value"),
    [
        ((), (1, 1), (1, 1)),
        (("bracer_protocol",), (1, 1), (1, 18)),
        (("joints",), (2, 1), (3, 3)),
        (("joints", "elbow"), (3, 3), (4, 5)),
        (("joints", "elbow", "range"), (4, 5), (4, 12)),
        (("joints", "elbow", "range", "min"), (4, 13), (4, 18)),
        (("joints", "elbow", "range", "max"), (4, 26), (4, 31)),
        (("joints", "elbow", "list"), (5, 5), (6, 7)),
        (("joints", "elbow", "list", 0), (6, 9), (6, 9)),
        (("joints", "elbow", "list", 1), (7, 11), (7, 11)),
        (("joints", "elbow", "text"), (8, 5), (8, 11)),
        (("joints", "quoted key"), (11, 3), (11, 17)),
        (("last",), (13, 1), (13, 7)),
        (("last", 3), (13, 19), (13, 19)),
        (("last", 6), (13, 44), (13, 44)),
    ],
)
def test_positions_of_keys_and_values(
    sample: Located, loc: tuple, key: tuple[int, int], value: tuple[int, int]
) -> None:  # type: ignore[type-arg]
    assert sample.where(loc) == key
    assert sample.where(loc, value=True) == value


def test_position_of_a_location_not_in_the_file_falls_back_to_the_nearest_enclosing_one(
    sample: Located,
) -> None:
    # e.g. a missing field: point at the mapping that should hold it.
    assert sample.where(("joints", "elbow", "speed")) == (3, 3)
    assert sample.where(("joints", "elbow", "range", "min", "deeper")) == (4, 13)
    assert sample.where(("nothing", "here")) == (1, 1)


def test_columns_count_characters_not_bytes(tmp_path: Path) -> None:
    path = tmp_path / "u.yaml"
    path.write_text("motion: {name: flexion–extension, unit: °}\n", encoding="utf-8")
    located = load_yaml(path)
    # 'u' of 'unit' is the 35th character; the en dash is three bytes in UTF-8.
    assert located.where(("motion", "unit")) == (1, 35)
    assert located.where(("motion", "unit"), value=True) == (1, 41)


def test_crlf_line_endings_give_the_same_positions(tmp_path: Path, sample: Located) -> None:
    path = tmp_path / "crlf.yaml"
    path.write_bytes(SAMPLE.replace("\n", "\r\n").encode("utf-8"))
    crlf = load_yaml(path)
    assert crlf.data == sample.data
    assert crlf.positions == sample.positions
    assert crlf.values == sample.values


def test_byte_order_mark_does_not_shift_columns(tmp_path: Path, sample: Located) -> None:
    path = tmp_path / "bom.yaml"
    path.write_bytes(b"\xef\xbb\xbf" + SAMPLE.encode("utf-8"))
    assert load_yaml(path).positions == sample.positions


def test_duplicate_key_names_both_lines(tmp_path: Path) -> None:
    path = tmp_path / "dup.yaml"
    path.write_text("joints:\n  elbow: {}\n  wrist: {}\n  elbow: {}\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        load_yaml(path)
    (p,) = info.value.problems
    assert (p.line, p.column, p.field) == (4, 3, "joints")
    assert p.message == "duplicate key 'elbow' (first defined on line 2)"


def test_duplicate_key_in_a_flow_mapping(tmp_path: Path) -> None:
    path = tmp_path / "dup.yaml"
    path.write_text("range: {min: 1 deg, min: 2 deg}\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        load_yaml(path)
    (p,) = info.value.problems
    assert (p.line, p.column) == (1, 21)
    assert "duplicate key 'min' (first defined on line 1)" in p.message


def test_aliases_are_expanded_when_they_do_not_loop(tmp_path: Path) -> None:
    path = tmp_path / "alias.yaml"
    path.write_text("a: &x {min: 1 deg}\nb: *x\n", encoding="utf-8")
    assert load_yaml(path).data == {"a": {"min": "1 deg"}, "b": {"min": "1 deg"}}


def test_file_too_large(tmp_path: Path) -> None:
    path = tmp_path / "big.yaml"
    path.write_bytes(b"# " + b"x" * 5_000_001 + b"\n")
    with pytest.raises(InputError, match="expected to be text under 5 MB"):
        load_yaml(path)


def test_unreadable_path(tmp_path: Path) -> None:
    # A path through a regular file cannot be read (works for every user, root included).
    (tmp_path / "plain").write_text("a: 1\n")
    with pytest.raises(InputError, match="cannot read file: Not a directory"):
        load_yaml(tmp_path / "plain" / "protocol.yaml")
