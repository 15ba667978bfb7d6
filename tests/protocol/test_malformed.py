"""Malformed protocols: every one is refused by ``bracer review`` with exit code 2 and a message that names
the file, the line and column, the field, what was expected and what was found -- never a traceback.

Three sources of cases:

* small files in ``malformed/`` for problems of the file as a whole (syntax, encoding-free text problems);
* bytes and paths made in the test (binary, not UTF-8, a directory, a missing file, alias bombs);
* named edits of the example protocol, one mistake each.  The expected line and column are found by locating
  the edited text in the file (a ``|`` in ``at`` marks the exact spot), independently of the loader.

Only the load stage is exercised: a valid protocol goes on to the review, which is tested elsewhere.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import pytest

from bracer.errors import InputError
from bracer.protocol.load import load_protocol

HERE = Path(__file__).resolve().parent
MALFORMED = HERE / "malformed"


def _assert_refused(result, path: Path, line: int | None, col: int | None, *fragments: str) -> None:  # type: ignore[no-untyped-def]
    """Exit 2, no traceback, ``path:line:col:`` at the start of the message, and each fragment present."""
    out = result.output
    assert result.code == 2, out
    assert "Traceback" not in out
    assert "internal error" not in out
    where = str(path)
    if line is not None:
        where += f":{line}"
        if col is not None:
            where += f":{col}"
    assert f"error: {where}:" in out, out
    for fragment in fragments:
        assert fragment in out, (fragment, out)


# ------------------------------------------------------------------------------ files in malformed/

FILE_CASES = [
    # (file, line, column, fragments)
    (
        "yaml_syntax_error.yaml",
        6,
        10,
        ["YAML syntax error", "expected ',' or ']'", "flow sequence started on line 5, column 10"],
    ),
    ("tab_indented.yaml", 3, 1, ["YAML syntax error", "indentation must use spaces", "tab character"]),
    ("merge_key.yaml", 7, 5, ["[contacts.upper_arm_cuff]", "merge keys ('<<') are not supported"]),
    ("several_documents.yaml", 5, 1, ["second YAML document", "holds exactly one"]),
    ("top_level_list.yaml", 2, 1, ["expected a mapping of protocol sections at the top level, found a list"]),
    ("scalar_document.yaml", 1, 1, ["found the text 'just one line of text'"]),
    ("missing_bracer_protocol.yaml", 2, 1, ["missing 'bracer_protocol: 1'", "format version"]),
    ("empty.yaml", 1, None, ["empty file; expected a YAML protocol document"]),
    ("comments_only.yaml", 1, None, ["empty file"]),
    ("alias_loop.yaml", 2, 7, ["[loop[0]]", "alias", "loop"]),
    ("complex_key.yaml", 3, 5, ["[joints]", "mapping keys must be plain names"]),
]


@pytest.mark.parametrize(("name", "line", "col", "fragments"), FILE_CASES, ids=[c[0] for c in FILE_CASES])
def test_malformed_file_is_refused(
    run_bracer, name: str, line: int, col: int | None, fragments: list[str]
) -> None:  # type: ignore[no-untyped-def]
    path = MALFORMED / name
    _assert_refused(run_bracer("review", path), path, line, col, *fragments)


def test_every_file_in_malformed_has_a_case() -> None:
    assert sorted(p.name for p in MALFORMED.iterdir()) == sorted(c[0] for c in FILE_CASES)


def test_empty_file_is_really_empty() -> None:
    assert (MALFORMED / "empty.yaml").read_bytes() == b""


# ------------------------------------------------------------------------------ bytes and paths made here


def test_binary_file(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    path = tmp_path / "logo.yaml"
    path.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR")
    _assert_refused(run_bracer("review", path), path, None, None, "binary file", "expected a YAML text file")


def test_not_utf8(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    path = tmp_path / "latin1.yaml"
    path.write_bytes("bracer_protocol: 1\nprotocol:\n  title: Café\n".encode("latin-1"))
    # 'é' is byte 0xe9 on line 3, at offset 18 + 10 + 13 = 41.
    _assert_refused(
        run_bracer("review", path),
        path,
        3,
        None,
        "not UTF-8 text",
        "byte 0xe9 at offset 41",
        "save the file as UTF-8",
    )


def test_utf8_with_bom_is_read(tmp_path: Path, example_text: str) -> None:
    path = tmp_path / "bom.yaml"
    path.write_bytes(b"\xef\xbb\xbf" + example_text.encode("utf-8"))
    assert load_protocol(path).protocol.protocol.id == "AVRU-EXO-01"


def test_directory_instead_of_file(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    _assert_refused(run_bracer("review", tmp_path), tmp_path, None, None, "is a directory")


def test_nonexistent_file(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    path = tmp_path / "no-such-protocol.yaml"
    _assert_refused(run_bracer("review", path), path, None, None, "file not found")


def test_alias_bomb_is_refused_quickly(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    # Each level repeats the one before nine times: 9**7 values from a 300-byte file.
    lines = ["bracer_protocol: 1", "a0: &a0 [1, 1, 1, 1, 1, 1, 1, 1, 1]"]
    for i in range(1, 7):
        lines.append(f"a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * 9) + "]")
    path = tmp_path / "bomb.yaml"
    path.write_text("\n".join(lines) + "\n")
    result = run_bracer("review", path)
    assert result.code == 2
    assert "expands to more than 50,000 values" in result.output
    assert "Traceback" not in result.output


def test_deep_nesting_is_refused(run_bracer, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    # Deeper than the recursion limit of a naive tree walk, shallower than libyaml's own limit (1000).
    path = tmp_path / "deep.yaml"
    path.write_text("bracer_protocol: 1\nx: " + "[" * 900 + "]" * 900 + "\n")
    _assert_refused(run_bracer("review", path), path, 2, 67, "nested more than 64 levels deep")


# ------------------------------------------------------------------------------ named edits of the example


@dataclass(frozen=True)
class Edit:
    """Replace ``old`` (must occur in the example) by ``new``; ``at`` is a text unique in the edited file with
    a ``|`` where the message must point; ``field`` the dotted field; ``fragments`` what the message says."""

    name: str
    old: str
    new: str
    at: str
    field: str
    fragments: tuple[str, ...]

    def apply(self, text: str) -> str:
        assert text.count(self.old) >= 1, f"{self.name}: the example no longer contains {self.old!r}"
        return text.replace(self.old, self.new, 1)

    def position(self, edited: str) -> tuple[int, int]:
        needle = self.at.replace("|", "")
        assert edited.count(needle) == 1, f"{self.name}: {needle!r} is not unique in the edited file"
        offset = edited.index(needle) + self.at.index("|")
        line = edited.count("\n", 0, offset) + 1
        col = offset - (edited.rfind("\n", 0, offset) + 1) + 1
        return line, col


EDITS = [
    Edit(
        "missing_unit",
        "planned: {min: -10 deg, max: 120 deg}",
        "planned: {min: -10, max: 120 deg}",
        "planned: {min: |-10, max",
        "joints.shoulder_flexion.range.planned.min",
        ("number without a unit: found -10", "such as '120 deg'"),
    ),
    Edit(
        "wrong_dimension",
        "planned: {min: -10 deg, max: 120 deg}",
        "planned: {min: -10 N*m, max: 120 deg}",
        "{min: |-10 N*m",
        "joints.shoulder_flexion.range.planned.min",
        ("wrong dimension: expected angle (deg, rad), found '-10 N*m' (torque)",),
    ),
    Edit(
        "min_above_max",
        "planned: {min: -10 deg, max: 120 deg}",
        "planned: {min: 130 deg, max: 120 deg}",
        "planned: |{min: 130 deg",
        "joints.shoulder_flexion.range.planned",
        ("min (130 deg) must be below max (120 deg)",),
    ),
    Edit(
        "negative_area",
        "area: 40 cm^2",
        "area: -40 cm^2",
        "area: |-40 cm^2",
        "contacts.upper_arm_cuff.area",
        ("contact area must be above zero, found '-40 cm^2'",),
    ),
    Edit(
        "duplicate_joint",
        "  shoulder_abduction:\n    motion:",
        "  shoulder_flexion:\n    motion:",
        "|shoulder_flexion:\n    motion: shoulder abduction",
        "joints",
        ("duplicate key 'shoulder_flexion' (first defined on line {first_shoulder_flexion})",),
    ),
    Edit(
        "caution_unknown_joint",
        "{joint: elbow_flexion, quantity: speed, scale: 0.5}",
        "{joint: elbow_flex, quantity: speed, scale: 0.5}",
        "{joint: |elbow_flex,",
        "cautions.spasticity.effects[0].joint",
        ("unknown joint 'elbow_flex'; did you mean 'elbow_flexion'?",),
    ),
    Edit(
        "unknown_field",
        "    stop_deceleration: 600 deg/s^2\n    channels:\n      position: {column: sh_flex_pos",
        "    stop_decelration: 600 deg/s^2\n    channels:\n      position: {column: sh_flex_pos",
        "|stop_decelration",
        "joints.shoulder_flexion.stop_decelration",
        ("unknown field 'stop_decelration'; did you mean 'stop_deceleration'?",),
    ),
    Edit(
        "unknown_body_region",
        "body_region: upper_arm_elbow",
        "body_region: upper_arm",
        "body_region: |upper_arm\n",
        "contacts.upper_arm_cuff.body_region",
        ("found 'upper_arm'; did you mean 'upper_arm_elbow'?", "'lower_arm_wrist'"),
    ),
    Edit(
        "bad_stop_category",
        "  category: 1",
        "  category: 3",
        "category: |3",
        "stop.category",
        ("expected one of 0, 1 or 2, found 3",),
    ),
    Edit(
        "unknown_stream",
        "unit: N, stream: cuffs}\n\n  forearm_cuff",
        "unit: N, stream: cufs}\n\n  forearm_cuff",
        "stream: |cufs}",
        "contacts.upper_arm_cuff.channels.force.stream",
        ("unknown stream 'cufs'; did you mean 'cuffs'?",),
    ),
    Edit(
        "unknown_participant_caution",
        "cautions: [low_bone_density]",
        "cautions: [low_bone_densty]",
        "cautions: [|low_bone_densty]",
        "participants.AV-P02.cautions[0]",
        ("unknown caution 'low_bone_densty'; did you mean 'low_bone_density'?",),
    ),
    Edit(
        "override_set_and_scale",
        "      - joint: elbow_flexion\n        quantity: torque\n        set: 6 N*m",
        "      - joint: elbow_flexion\n        quantity: torque\n        set: 6 N*m\n        scale: 0.5",
        "      - |joint: elbow_flexion\n        quantity: torque",
        "participants.AV-P01.overrides[0]",
        ("give exactly one of 'set', 'scale' or 'measured_minus'",),
    ),
    Edit(
        "channel_unit",
        "position: {column: sh_flex_pos, unit: deg}",
        "position: {column: sh_flex_pos, unit: N*m}",
        "sh_flex_pos, unit: |N*m}",
        "joints.shoulder_flexion.channels.position.unit",
        ("wrong dimension: expected a unit of angle (deg, rad), found 'N*m' (torque)",),
    ),
    Edit(
        "channel_unknown_unit",
        "velocity: {column: elb_vel, unit: deg/s}",
        "velocity: {column: elb_vel, unit: degs/s}",
        "elb_vel, unit: |degs/s}",
        "joints.elbow_flexion.channels.velocity.unit",
        ("unknown unit 'degs' in 'degs/s'; did you mean 'deg'?",),
    ),
    Edit(
        "force_channel_unit",
        "force: {columns: [ua_fx, ua_fy, ua_fz], unit: N,",
        "force: {columns: [ua_fx, ua_fy, ua_fz], unit: kg,",
        "ua_fz], unit: |kg,",
        "contacts.upper_arm_cuff.channels.force.unit",
        ("wrong dimension: expected a unit of force (N, kN), found 'kg' (mass)",),
    ),
    Edit(
        "time_unit",
        "main: {time: {column: t, unit: s}",
        "main: {time: {column: t, unit: Hz}",
        "column: t, unit: |Hz}",
        "logging.streams.main.time.unit",
        ("expected a unit of time (s, ms), found 'Hz' (frequency)",),
    ),
    Edit(
        "lever_arm_dimension",
        "      shoulder_flexion: 0.16 m",
        "      shoulder_flexion: 0.16 deg",
        "shoulder_flexion: |0.16 deg",
        "contacts.upper_arm_cuff.lever_arms.shoulder_flexion",
        ("expected length (m, cm, mm), found '0.16 deg' (angle); or write 'not modelled'",),
    ),
    Edit(
        "lever_arm_unknown_joint",
        "      shoulder_abduction: 0.16 m",
        "      shoulder_abducton: 0.16 m",
        "      |shoulder_abducton: 0.16 m",
        "contacts.upper_arm_cuff.lever_arms.shoulder_abducton",
        ("unknown joint 'shoulder_abducton'; did you mean 'shoulder_abduction'?",),
    ),
    Edit(
        "format_version",
        "bracer_protocol: 1",
        "bracer_protocol: 2",
        "bracer_protocol: |2",
        "bracer_protocol",
        ("reads protocol format version 1, the file says 2",),
    ),
    Edit(
        "quoted_format_version",
        "bracer_protocol: 1",
        'bracer_protocol: "1"',
        'bracer_protocol: |"1"',
        "bracer_protocol",
        ("the file says '1'", "no quotes"),
    ),
    Edit(
        "version_as_number",
        'version: "1.2"',
        "version: 1.2",
        "version: |1.2",
        "protocol.version",
        ("expected text, found the number 1.2; put it in quotes",),
    ),
    Edit(
        "bad_date",
        "date: 2027-01-15",
        "date: 2027-13-15",
        "  date: |2027-13-15",
        "protocol.date",
        ("expected a date as YYYY-MM-DD, found '2027-13-15'", "month"),
    ),
    Edit(
        "negative_speed",
        "speed: {planned: 60 deg/s, device: 90 deg/s}",
        "speed: {planned: -60 deg/s, device: 90 deg/s}",
        "planned: |-60 deg/s",
        "joints.shoulder_flexion.speed.planned",
        ("an angular speed limit is a magnitude and must be above zero, found '-60 deg/s'",),
    ),
    Edit(
        "per_direction_typo",
        "speed: {planned: 60 deg/s, device: 90 deg/s}",
        "speed: {planned: {positive: 60 deg/s, negatve: 40 deg/s}, device: 90 deg/s}",
        "speed: {planned: |{positive: 60 deg/s",
        "joints.shoulder_flexion.speed.planned",
        ("unknown key(s) 'negatve'", "did you mean 'negative'?"),
    ),
    Edit(
        "set_wrong_dimension",
        "{joint: shoulder_abduction, quantity: range, direction: positive, set: 80 deg}",
        "{joint: shoulder_abduction, quantity: range, direction: positive, set: 80 N}",
        "direction: positive, set: |80 N}",
        "cautions.shoulder_subluxation.effects[0].set",
        ("wrong dimension: the range limit needs an angle (deg, rad), found '80 N' (force)",),
    ),
    Edit(
        "unknown_trigger",
        "    emergency_stop: {column: estop",
        "    emergncy_stop: {column: estop",
        "    |emergncy_stop:",
        "logging.triggers.emergncy_stop",
        ("found 'emergncy_stop'; did you mean 'emergency_stop'?",),
    ),
    Edit(
        "margin_fraction",
        "  speed: {fraction: 0.1}",
        "  speed: {fraction: 1.5}",
        "speed: {fraction: |1.5}",
        "near_miss.speed.fraction",
        ("expected a value below 1, found 1.5",),
    ),
    Edit(
        "unknown_layer",
        "stop_on_exceedance: [device]",
        "stop_on_exceedance: [devise]",
        "stop_on_exceedance: [|devise]",
        "stop.stop_on_exceedance[0]",
        ("expected one of 'planned', 'device' or 'mechanical', found 'devise'; did you mean 'device'?",),
    ),
    Edit(
        "missing_required_field",
        "  latency_budget: 300 ms\n",
        "",
        "\n|stop:\n",
        "stop.latency_budget",
        ("missing required field 'latency_budget' (Longest allowed time from trigger to standstill)",),
    ),
    Edit(
        "bad_participant_code",
        "  AV-P02:",
        "  2AV-P02:",
        "  |2AV-P02:",
        "participants.2AV-P02",
        ("'2AV-P02' is not a valid name",),
    ),
    Edit(
        "empty_roles",
        "roles: [responsible clinician, responsible engineer, trial coordinator]",
        "roles: []",
        "roles: |[]",
        "protocol.roles",
        ("expected at least 1 item, found 0",),
    ),
    Edit(
        "trigger_value_not_scalar",
        "emergency_stop: {column: estop, active: [1]}",
        "emergency_stop: {column: estop, active: [[1]]}",
        "active: [|[1]]}",
        "logging.triggers.emergency_stop.active[0]",
        ("expected a whole number, a number or text, found a list",),
    ),
    Edit(
        "yes_read_as_true",
        "kind: upper-limb exoskeleton",
        "kind: yes",
        "  kind: |yes",
        "device.kind",
        ("expected text, found true (YAML reads yes/no/on/off", "put the word in quotes"),
    ),
    Edit(
        "range_not_a_mapping",
        "planned: {min: -10 deg, max: 120 deg}",
        'planned: "-10 deg"',
        'planned: |"-10 deg"',
        "joints.shoulder_flexion.range.planned",
        ("expected a mapping, found the text '-10 deg'",),
    ),
    Edit(
        "speed_as_list",
        "speed: {planned: 60 deg/s, device: 90 deg/s}",
        "speed: {planned: [60 deg/s], device: 90 deg/s}",
        "speed: {planned: |[60 deg/s]",
        "joints.shoulder_flexion.speed.planned",
        ("expected a quantity with a unit such as '90 deg/s', found a list",),
    ),
    Edit(
        "participant_cautions_not_a_list",
        "cautions: [low_bone_density]",
        "cautions: low_bone_density",
        "    cautions: |low_bone_density",
        "participants.AV-P02.cautions",
        ("expected a list, found the text 'low_bone_density'",),
    ),
    Edit(
        "contact_quantity_on_a_joint",
        "{joint: elbow_flexion, quantity: speed, scale: 0.5}",
        "{joint: elbow_flexion, quantity: force, scale: 0.5}",
        "      - |{joint: elbow_flexion, quantity: force",
        "cautions.spasticity.effects[0]",
        ("a joint's quantity is one of acceleration, range, speed, torque, found 'force'",),
    ),
    Edit(
        "effect_with_two_targets",
        "{joint: elbow_flexion, quantity: speed, scale: 0.5}",
        "{joint: elbow_flexion, contact: forearm_cuff, quantity: speed, scale: 0.5}",
        "      - |{joint: elbow_flexion, contact",
        "cautions.spasticity.effects[0]",
        ("name exactly one target: 'joint' or 'contact'",),
    ),
    Edit(
        "missing_channel_unit",
        "position: {column: sh_flex_pos, unit: deg}",
        "position: {column: sh_flex_pos}",
        "      |position: {column: sh_flex_pos}",
        "joints.shoulder_flexion.channels.position.unit",
        ("missing required field 'unit'",),
    ),
]


def _first_line_of(text: str, snippet: str) -> int:
    return text.count("\n", 0, text.index(snippet)) + 1


@pytest.mark.parametrize("edit", EDITS, ids=[e.name for e in EDITS])
def test_edited_example_is_refused(run_bracer, tmp_path: Path, example_text: str, edit: Edit) -> None:  # type: ignore[no-untyped-def]
    edited = edit.apply(example_text)
    path = tmp_path / f"{edit.name}.yaml"
    path.write_text(edited, encoding="utf-8")
    line, col = edit.position(edited)
    first = _first_line_of(example_text, "\n  shoulder_flexion:\n") + 1
    fragments = [f.format(first_shoulder_flexion=first) for f in edit.fragments]
    result = run_bracer("review", path)
    _assert_refused(result, path, line, col, f"[{edit.field}]", *fragments)
    # One mistake, one message.
    assert result.stderr.count(str(path)) == 1, result.stderr


def test_edit_names_are_unique() -> None:
    assert len({e.name for e in EDITS}) == len(EDITS)


def test_several_mistakes_are_all_reported_in_file_order(tmp_path: Path, example_text: str) -> None:
    edits = [e for e in EDITS if e.name in ("missing_unit", "negative_area", "bad_stop_category")]
    text = example_text
    for e in edits:
        text = e.apply(text)
    path = tmp_path / "three.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as info:
        load_protocol(path)
    got = [(p.line, p.column, p.field) for p in info.value.problems]
    want = [(*e.position(text), e.field) for e in edits]
    assert got == want


def test_problems_are_structured_and_render_as_file_line_col(tmp_path: Path, example_text: str) -> None:
    edit = next(e for e in EDITS if e.name == "caution_unknown_joint")
    text = edit.apply(example_text)
    path = tmp_path / "p.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as info:
        load_protocol(path)
    (problem,) = info.value.problems
    line, col = edit.position(text)
    assert (problem.path, problem.line, problem.column, problem.field) == (str(path), line, col, edit.field)
    assert re.fullmatch(
        rf"{re.escape(str(path))}:{line}:{col}: \[{re.escape(edit.field)}\] unknown joint .*",
        problem.render(),
    )


def test_console_script_in_a_separate_process(tmp_path: Path, example_text: str) -> None:
    """The installed ``bracer`` entry point (not only the in-process call) exits 2 without a traceback."""
    import subprocess
    import sys

    edit = EDITS[0]
    path = tmp_path / "p.yaml"
    path.write_text(edit.apply(example_text), encoding="utf-8")
    proc = subprocess.run(
        [sys.executable, "-m", "bracer", "review", str(path)], capture_output=True, text=True, timeout=60
    )
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr + proc.stdout
    line, col = edit.position(edit.apply(example_text))
    assert f"{path}:{line}:{col}: [{edit.field}]" in proc.stderr
