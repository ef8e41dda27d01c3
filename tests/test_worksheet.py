"""Worksheet files: round trip, validation with field-naming messages, atomic saves."""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

from app.documents import worksheet as wsmod
from app.documents.worksheet import Parameter, Settings, Worksheet, WorksheetError

SAMPLES = sorted((Path(__file__).resolve().parent.parent / "samples").glob("*.json"))


def _sheet() -> Worksheet:
    return Worksheet(
        equation="x^2 = c",
        unknown="x",
        parameters=(Parameter("c", 2.0, "invented test value"),),
        settings=Settings(x0=1.0, bracket=(0.0, 3.0), xtol=1e-13, max_iter=50),
        scan=(-3.0, 3.0),
        title="Ünïcode title",
        notes="line one\nline two",
    )


def _valid_dict() -> dict:
    return wsmod.to_dict(_sheet())


def test_round_trip_keeps_every_field(tmp_path: Path) -> None:
    path = tmp_path / "sheet with spaces ä.json"
    wsmod.save(_sheet(), path)
    assert wsmod.load(path) == _sheet()


def test_floats_round_trip_exactly(tmp_path: Path) -> None:
    value = 0.1 + 0.2  # not representable in few digits: repr must survive JSON
    ws = _sheet().with_changes(parameters=(Parameter("c", value),))
    wsmod.save(ws, tmp_path / "w.json")
    assert wsmod.load(tmp_path / "w.json").parameters[0].value == value


@pytest.mark.parametrize("path", SAMPLES, ids=[p.stem for p in SAMPLES])
def test_every_sample_loads_and_says_its_numbers_are_invented(path: Path) -> None:
    ws = wsmod.load(path)
    assert ws.scan is not None
    assert "invented" in ws.notes.lower()


def test_at_least_six_samples_ship() -> None:
    assert len(SAMPLES) >= 6


# Each broken document and the field its message must name.
BROKEN = [
    ({"format": "something-else"}, "format"),
    ({"version": 99}, "version"),
    ({"version": "1"}, "version"),
    ({"equation": 42}, "equation"),
    ({"equation": "   "}, "equation"),
    ({"unknown": "x y"}, "unknown"),
    ({"unknown": "__class__"}, "unknown"),
    ({"parameters": {"c": 1}}, "parameters"),
    ({"parameters": [{"name": "c"}]}, "parameters[0].value"),
    ({"parameters": [{"name": "c", "value": "2"}]}, "parameters[0].value"),
    ({"parameters": [{"name": "c", "value": True}]}, "parameters[0].value"),
    ({"parameters": [{"name": "c", "value": 10**400}]}, "parameters[0].value"),
    ({"parameters": [{"name": "c", "value": 1}, {"name": "c", "value": 2}]}, "parameters[1].name"),
    ({"parameters": [{"name": "os.system", "value": 1}]}, "parameters[0].name"),
    ({"settings": {"xtol": -1}}, "settings.xtol"),
    ({"settings": {"max_iter": 0}}, "settings.max_iter"),
    ({"settings": {"max_iter": 2.5}}, "settings.max_iter"),
    ({"settings": {"damping": 1.5}}, "settings.damping"),
    ({"settings": {"methods": ["newton", "magic"]}}, "settings.methods[1]"),
    ({"settings": {"bracket": [1, 1]}}, "settings.bracket"),
    ({"settings": {"bracket": [1]}}, "settings.bracket"),
    ({"settings": {"x0": None, "xtol": 0, "rtol": 0, "ftol": 0}}, "settings"),
    ({"scan": {"from": 3, "to": 1}}, "scan"),
    ({"scan": {"from": 1, "to": None}}, "scan.to"),
    ({"scan": [0, 1]}, "scan"),
    ({"calc": {"number": ["x"]}}, "calc.number"),
    ({"selection": {"root": "near one"}}, "selection.root"),
]


# How the message names a field inside a list: by the entry's own name once that is read
# (the file's terms), else by its place counted from 1; ``field`` keeps the JSON path.
SHOWN = {"parameters[0].value": 'parameter "c", value', "parameters[1].name": "parameter 2, name",
         "parameters[0].name": "parameter 1, name", "settings.methods[1]": "settings.methods"}


@pytest.mark.parametrize(("change", "field"), BROKEN, ids=[f for _, f in BROKEN])
def test_invalid_field_is_refused_with_its_name(change: dict, field: str) -> None:
    data = _valid_dict()
    for key, value in change.items():
        if isinstance(value, dict) and isinstance(data.get(key), dict):
            data[key] = {**data[key], **value}
        else:
            data[key] = value
    with pytest.raises(WorksheetError) as info:
        wsmod.from_dict(data)
    assert info.value.field == field
    assert str(info.value).startswith(SHOWN.get(field, field) + ": ")
    assert "[" not in str(info.value).split(": ")[0]  # no index to count in the file
    assert "\n" not in str(info.value)


def test_missing_equation_is_named() -> None:
    data = _valid_dict()
    del data["equation"]
    with pytest.raises(WorksheetError, match="^equation: missing"):
        wsmod.from_dict(data)


@pytest.mark.parametrize(
    "text",
    [
        "",
        "{",
        '{"format": "zerotrace-worksheet", "version": 1, "equation": "x"',  # truncated
        "[1, 2, 3]",
        "not json at all",
        '{"format": "zerotrace-worksheet", "version": 1, "equation": "x", "scan": NaN}',
        "[" * 100_000 + "]" * 100_000,  # nesting bomb
    ],
)
def test_unreadable_text_is_a_worksheet_error(text: str) -> None:
    with pytest.raises(WorksheetError):
        wsmod.loads(text)


def test_file_problems_are_worksheet_errors(tmp_path: Path) -> None:
    with pytest.raises(WorksheetError, match="no such file"):
        wsmod.load(tmp_path / "absent.json")
    with pytest.raises(WorksheetError, match="folder"):
        wsmod.load(tmp_path)
    (tmp_path / "latin1.json").write_bytes(b'{"equation": "\xe9"}')
    with pytest.raises(WorksheetError, match="UTF-8"):
        wsmod.load(tmp_path / "latin1.json")
    big = tmp_path / "big.json"
    big.write_bytes(b" " * (wsmod.MAX_FILE_BYTES + 1))
    with pytest.raises(WorksheetError, match="too large"):
        wsmod.load(big)


def test_future_version_says_newer_zerotrace() -> None:
    data = _valid_dict()
    data["version"] = wsmod.VERSION + 1
    with pytest.raises(WorksheetError, match="newer zerotrace"):
        wsmod.from_dict(data)


def test_a_failed_write_leaves_the_previous_file_intact(tmp_path, monkeypatch) -> None:
    path = tmp_path / "w.json"
    wsmod.save(_sheet(), path)
    before = path.read_bytes()

    def disk_full(fd: int) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", disk_full)
    changed = _sheet().with_changes(equation="x^3 = c")
    with pytest.raises(OSError):
        wsmod.save(changed, path)
    assert path.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["w.json"]  # temp file removed


def test_a_failed_rename_leaves_the_previous_file_intact(tmp_path, monkeypatch) -> None:
    path = tmp_path / "w.json"
    wsmod.save(_sheet(), path)
    before = path.read_bytes()

    def crash(src, dst) -> None:
        raise KeyboardInterrupt  # stands for the process dying between write and rename

    monkeypatch.setattr(os, "replace", crash)
    with pytest.raises(KeyboardInterrupt):
        wsmod.save(_sheet().with_changes(equation="x = 1"), path)
    assert path.read_bytes() == before
    assert len(list(tmp_path.iterdir())) == 1


def test_saving_into_a_missing_folder_raises_oserror(tmp_path: Path) -> None:
    with pytest.raises(OSError):
        wsmod.save(_sheet(), tmp_path / "no" / "such" / "w.json")


def test_saved_file_is_strict_json(tmp_path: Path) -> None:
    wsmod.save(_sheet(), tmp_path / "w.json")
    json.loads((tmp_path / "w.json").read_text("utf-8"), parse_constant=pytest.fail)


def test_equation_length_limit_matches_the_parser() -> None:
    from solvers.equation import MAX_LENGTH

    assert wsmod.MAX_TEXT == MAX_LENGTH
    data = _valid_dict()
    data["equation"] = "x" + " + x" * MAX_LENGTH
    with pytest.raises(WorksheetError, match="^equation: too long"):
        wsmod.from_dict(data)


def test_errors_from_a_file_name_the_file_and_the_field(tmp_path: Path) -> None:
    data = _valid_dict()
    data["settings"]["xtol"] = -1
    path = tmp_path / "pump check.json"
    path.write_text(json.dumps(data), "utf-8")
    with pytest.raises(WorksheetError) as info:
        wsmod.load(path)
    assert str(info.value).startswith("pump check.json: settings.xtol:")
    assert info.value.field == "settings.xtol"
