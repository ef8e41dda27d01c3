"""Files a user opens, types or leaves behind: nothing hangs, crashes or loses work.

Each test pins one way a file went wrong: a FIFO or /dev/zero given as a worksheet,
a 5000-digit integer, over-long fields that Save wrote and Open refused, a lone
surrogate, a recovery record from the year 1e300, file modes on a shared folder,
temporary files left by kill -9, a sheet half written on a full disk, a sheet taller
than a page, and command-line numbers Python reads but the equation parser refuses.

A hang is detected by running the reader in a child process with a timeout (the
child is killed if it blocks), never by timing anything. Worksheets here are
invented scenarios with made-up numbers.
"""

from __future__ import annotations

import errno
import json
import os
import re
import stat
import subprocess
import sys
import textwrap
import time
from pathlib import Path
from typing import Any

import pypdf
import pytest
from PySide6.QtWidgets import QMessageBox

from app.cli import main as cli_main
from app.documents import files
from app.documents import worksheet as wsmod
from app.documents.worksheet import (
    CalcInfo,
    Parameter,
    Selection,
    Settings,
    Worksheet,
    WorksheetError,
)
from solvers import pipeline

pytest_plugins = ("gui_helpers",)  # fixtures: window, dialogs, isolated

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "samples" / "cooling-water-friction.json"
CHILD_TIMEOUT_S = 60  # a blocked read never returns; anything that returns is far quicker
posix_only = pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs FIFOs (POSIX)")


def handed(ws):
    """What a caller hands the sheet: the worksheet's solution and scan (it never solves)."""
    solution, scan = pipeline.solve_and_scan(ws)
    return {"solution": solution, "scan": scan}


def _sheet(**changes: Any) -> Worksheet:
    base = Worksheet(
        equation="h^3 + a*h - q", unknown="h",
        parameters=(Parameter("a", 2.0, "invented coefficient"), Parameter("q", 9.0)),
        settings=Settings(x0=1.0, bracket=(0.0, 3.0)),
        title="Invented check", notes="made-up numbers",
    )
    return base.with_changes(**changes)


def _child(code: str, *args: str, env: dict[str, str] | None = None) -> subprocess.CompletedProcess:
    """Run ``code`` in a fresh interpreter; a hang fails the test instead of blocking it."""
    full_env = {**os.environ, "QT_QPA_PLATFORM": "offscreen", **(env or {})}
    try:
        return subprocess.run([sys.executable, "-c", textwrap.dedent(code), *args],
                              capture_output=True, text=True, timeout=CHILD_TIMEOUT_S,
                              cwd=ROOT, env=full_env, stdin=subprocess.DEVNULL)
    except subprocess.TimeoutExpired:
        pytest.fail(f"hung: no answer within {CHILD_TIMEOUT_S} s (child killed)")


def _cli(*argv: str) -> subprocess.CompletedProcess:
    return _child("import sys\nfrom app.cli import main\nraise SystemExit(main(sys.argv[1:]))",
                  *argv)


# ------------------------------------------------------------------ FIFOs and devices


@posix_only
def test_a_fifo_given_as_a_worksheet_is_refused_not_waited_on(tmp_path: Path) -> None:
    fifo = tmp_path / "calc.json"
    os.mkfifo(fifo)
    done = _cli("solve", "--worksheet", str(fifo))
    assert done.returncode == 2, done.stderr
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "pipe (FIFO)" in lines[0] and "Traceback" not in done.stderr
    done = _cli("report", str(fifo), "--pdf", str(tmp_path / "out.pdf"))
    assert done.returncode == 2 and "pipe (FIFO)" in done.stderr
    assert not (tmp_path / "out.pdf").exists()


@posix_only
def test_a_link_to_dev_zero_is_refused_before_reading(tmp_path: Path) -> None:
    link = tmp_path / "calc.json"
    link.symlink_to("/dev/zero")
    done = _child("""
        import resource, sys
        from app.documents import worksheet
        resource.setrlimit(resource.RLIMIT_AS, (2 * 1024**3, 2 * 1024**3))  # no swallowing
        try:
            worksheet.load(sys.argv[1])
        except worksheet.WorksheetError as exc:
            print(exc)
    """, str(link))
    assert done.returncode == 0, done.stderr
    assert "character device" in done.stdout and "not a regular worksheet file" in done.stdout


def test_a_file_over_the_size_limit_is_refused_by_its_size(tmp_path: Path) -> None:
    big = tmp_path / "big.json"
    big.write_bytes(b" " * (wsmod.MAX_FILE_BYTES + 1))
    with pytest.raises(WorksheetError, match="too large"):
        wsmod.load(big)
    with pytest.raises(files.FileRefused, match="is a folder"):
        files.read_limited(tmp_path, 10)


@posix_only
def test_file_open_in_the_window_refuses_a_fifo_without_freezing(tmp_path: Path) -> None:
    """File ▸ Open (Ctrl+O, a real key event) on a FIFO: one-line warning, window alive."""
    fifo = tmp_path / "shared.json"
    os.mkfifo(fifo)
    done = _child("""
        import sys
        from PySide6.QtCore import QSettings, Qt
        from PySide6.QtTest import QTest
        from PySide6.QtWidgets import QApplication, QFileDialog, QMessageBox
        from app.window import MainWindow
        from app.window.recovery import RecoveryStore
        from pathlib import Path
        app = QApplication([])
        seen = []
        QMessageBox.warning = lambda *a, **k: seen.append(a[2]) or QMessageBox.StandardButton.Ok
        QMessageBox.question = lambda *a, **k: QMessageBox.StandardButton.Discard
        QFileDialog.getOpenFileName = lambda *a, **k: (sys.argv[1], "")
        folder = Path(sys.argv[2])
        w = MainWindow(settings=QSettings(str(folder / "s.ini"), QSettings.Format.IniFormat),
                       recovery=RecoveryStore(folder / "recovery"))
        w.show()
        QTest.qWaitForWindowExposed(w)
        QTest.keyClick(w, Qt.Key.Key_O, Qt.KeyboardModifier.ControlModifier)
        print(repr(w.last_error))
        print(len(seen))
        w.runner.stop()
    """, str(fifo), str(tmp_path))
    assert done.returncode == 0, done.stderr[-2000:]
    message, shown = done.stdout.strip().splitlines()[-2:]
    assert "pipe (FIFO)" in message and "\\n" not in message and shown == "1"


@posix_only
def test_the_recovery_check_at_start_up_skips_fifos_in_its_folder(tmp_path: Path) -> None:
    folder = tmp_path / "recovery"
    folder.mkdir()
    os.mkfifo(folder / "unsaved-1-aaaa.json")
    good = folder / "unsaved-2-bbbb.json"
    wsmod.save(_sheet(), good)
    os.mkfifo(folder / "unsaved-2-bbbb.meta.json")
    done = _child("""
        import sys
        from pathlib import Path
        from app.window.recovery import RecoveryStore
        store = RecoveryStore(Path(sys.argv[1]))
        left = store.left_behind()
        print([r.path.name for r in left], [p.name for p, _ in store.unreadable])
    """, str(folder))
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "['unsaved-2-bbbb.json'] ['unsaved-1-aaaa.json']"


# ------------------------------------------------------------------ huge integers


@pytest.mark.parametrize("field, place", [
    ('parameter "a", value', lambda d, n: d["parameters"][0].__setitem__("value", n)),
    ("settings.max_iter", lambda d, n: d["settings"].__setitem__("max_iter", n)),
    ("version", lambda d, n: d.__setitem__("version", n)),
    ("title", lambda d, n: d.__setitem__("title", n)),  # a number where text belongs
])
def test_a_5000_digit_integer_is_a_worksheet_error_naming_the_field(field, place) -> None:
    data = json.loads(wsmod.dumps(_sheet()))
    place(data, "@@")
    text = json.dumps(data).replace('"@@"', "7" * 5000)  # past Python's 4300-digit limit
    with pytest.raises(WorksheetError) as info:
        wsmod.loads(text)
    assert str(info.value).startswith(f"{field}: ")
    assert info.value.field == field.replace('parameter "a", value', "parameters[0].value")
    assert len(str(info.value).splitlines()) == 1 and len(str(info.value)) < 200


@pytest.mark.parametrize("digits", ["1" + "0" * 309, "-1" + "0" * 309, "-" + "9" * 399])
@pytest.mark.parametrize("field, place", [
    ('parameter "a", value', lambda d, n: d["parameters"][0].__setitem__("value", n)),
    ("settings.max_iter", lambda d, n: d["settings"].__setitem__("max_iter", n)),
    ("settings.x0", lambda d, n: d["settings"].__setitem__("x0", n)),
    ("version", lambda d, n: d.__setitem__("version", n)),
])
def test_an_integer_past_the_doubles_but_within_the_digit_limit_is_named(field, place,
                                                                         digits) -> None:
    """Integers of 310 to 400 digits are read as Python integers (the 5000-digit ones are
    not), so each check must compare before it converts: -10^309 as the iteration cap was
    an OverflowError out of the loader."""
    data = json.loads(wsmod.dumps(_sheet()))
    place(data, "@@")
    text = json.dumps(data).replace('"@@"', digits)
    with pytest.raises(WorksheetError) as info:
        wsmod.loads(text)
    assert str(info.value).startswith(f"{field}: ")
    assert len(str(info.value).splitlines()) == 1 and len(str(info.value)) < 200


def test_the_window_says_so_in_one_line(qtbot, window, dialogs, tmp_path) -> None:
    path = tmp_path / "huge.json"
    text = wsmod.dumps(_sheet()).replace('"value": 9.0', '"value": ' + "9" * 5000)
    path.write_text(text, "utf-8")
    before = window.strip.text()
    dialogs.open_name = str(path)
    assert not window.open_file()
    assert window.last_error == 'huge.json: parameter "q", value: number too large (5000 digits)'
    assert window.last_error in dialogs.titles("warning")[-1]
    assert window.strip.text() == before


# ------------------------------------------------------------------ one set of limits


LIMITED = [  # (field, limit, worksheet with the field at a given length)
    ("title", wsmod.MAX_TITLE, lambda n: _sheet(title="t" * n)),
    ("notes", wsmod.MAX_NOTE, lambda n: _sheet(notes="n" * n)),
    ('parameter "a", note', wsmod.MAX_NOTE,
     lambda n: _sheet(parameters=(Parameter("a", 2.0, "p" * n), Parameter("q", 9.0)))),
    ("calc.number", wsmod.MAX_CALC_FIELD, lambda n: _sheet(calc=CalcInfo(number="c" * n))),
    ("selection.reason", wsmod.MAX_NOTE,
     lambda n: _sheet(selection=Selection(2.0, "r" * n))),
    ("equation", wsmod.MAX_EQUATION,
     lambda n: _sheet(equation="h - q" + " " * (n - 5))),
]


@pytest.mark.parametrize("field, limit, make", LIMITED, ids=[f for f, _, _ in LIMITED])
def test_whatever_can_be_saved_can_be_opened(tmp_path: Path, field, limit, make) -> None:
    path = tmp_path / "w.json"
    wsmod.save(make(limit), path)
    assert wsmod.load(path) == make(limit)  # at the limit: saved and opened again
    path.write_bytes(b"previous")
    pattern = "^" + re.escape(field) + ": too long"
    with pytest.raises(WorksheetError, match=pattern) as saving:
        wsmod.save(make(limit + 1), path)
    assert path.read_bytes() == b"previous" and sorted(os.listdir(tmp_path)) == ["w.json"]
    path.write_text(json.dumps(wsmod.to_dict(make(limit + 1))), "utf-8")
    with pytest.raises(WorksheetError) as opening:
        wsmod.load(path)
    assert str(opening.value) == f"w.json: {saving.value}"  # the same rule, the same words


def test_save_refuses_a_file_over_the_size_limit_before_writing(tmp_path: Path) -> None:
    many = tuple(Parameter(f"p{i}", 1.0, "x" * 5000) for i in range(450))
    with pytest.raises(WorksheetError, match="over the 2000000-byte limit"):
        wsmod.save(_sheet(parameters=many), tmp_path / "w.json")
    assert not list(tmp_path.iterdir())


def test_the_equation_editor_stops_at_the_limit(qtbot, window) -> None:
    from PySide6.QtCore import Qt
    from PySide6.QtWidgets import QApplication

    editor = window.strip.editor
    editor.setFocus()
    qtbot.keyClick(editor, Qt.Key.Key_End, Qt.KeyboardModifier.ControlModifier)
    kept = editor.toPlainText()
    pasted = " + 0*h" * 1000  # 6000 characters pasted at the end
    QApplication.clipboard().setText(pasted)
    qtbot.keyClick(editor, Qt.Key.Key_V, Qt.KeyboardModifier.ControlModifier)
    text = editor.toPlainText()
    assert len(text) == wsmod.MAX_EQUATION
    assert text == (kept + pasted)[: wsmod.MAX_EQUATION]  # what was there is all kept
    assert "limited to 2000 characters" in editor.property("limitMessage")
    wsmod.validate(window.worksheet())  # and so it can be saved


def test_the_calculation_details_stop_at_the_limits(qtbot, window) -> None:
    from app.window.dialogs import CalcDialog

    dialog = CalcDialog(window.worksheet(), window)
    qtbot.addWidget(dialog)
    qtbot.keyClicks(dialog.title, "T" * (wsmod.MAX_TITLE + 20))
    qtbot.keyClicks(dialog.number, "N" * (wsmod.MAX_CALC_FIELD + 5))
    assert len(dialog.title.text()) == wsmod.MAX_TITLE
    assert len(dialog.number.text()) == wsmod.MAX_CALC_FIELD
    wsmod.validate(dialog.apply(_sheet()))  # what was typed can be saved


def test_recovery_keeps_work_at_the_limits_and_never_drops_a_copy_silently(tmp_path) -> None:
    from app.window.recovery import RecoveryStore

    folder = tmp_path / "recovery"
    crashed = RecoveryStore(folder)
    assert crashed.write(_sheet(notes="n" * wsmod.MAX_NOTE, title="t" * wsmod.MAX_TITLE), None)
    # a copy an older version wrote past the limits: kept, and named, not skipped quietly
    old = folder / "unsaved-9-old.json"
    old.write_text(json.dumps(wsmod.to_dict(_sheet(title="t" * 600))), "utf-8")
    store = RecoveryStore(folder)
    left = store.left_behind()
    assert [r.worksheet.notes for r in left] == ["n" * wsmod.MAX_NOTE]
    assert [(p.name, "title: too long" in why) for p, why in store.unreadable] == [
        ("unsaved-9-old.json", True)]
    assert old.exists()


# ------------------------------------------------------------------ lone surrogates


def test_a_lone_surrogate_is_refused_on_open_and_on_save(tmp_path: Path) -> None:
    path = tmp_path / "w.json"
    path.write_text(json.dumps(wsmod.to_dict(_sheet())).replace(
        '"notes": "made-up numbers"', '"notes": "made-up \\ud800 numbers"'), "utf-8")
    with pytest.raises(WorksheetError, match=r"^w\.json: notes: holds an unpaired surrogate "
                                             r"U\+D800 at character 9"):
        wsmod.load(path)
    with pytest.raises(WorksheetError, match='^parameter "a", note: holds an unpaired'):
        wsmod.save(_sheet(parameters=(Parameter("a", 1.0, "\udcff"),)), tmp_path / "x.json")
    assert not (tmp_path / "x.json").exists()
    # a valid pair written as escapes is ordinary text
    path.write_text(json.dumps(wsmod.to_dict(_sheet(notes="pump \U0001f527 ok"))), "utf-8")
    assert wsmod.load(path).notes == "pump \U0001f527 ok"


@pytest.mark.skipif(sys.platform != "linux", reason="needs a file system that takes any bytes")
def test_a_worksheet_whose_name_is_not_utf8_can_be_reported(tmp_path: Path) -> None:
    from app.documents.report import write_report

    path = Path(os.fsdecode(bytes(tmp_path) + b"/calc-\xff.json"))  # a name from a Latin-1 system
    wsmod.save(_sheet(settings=Settings(methods=("newton",), x0=1.0)), path)
    ws = wsmod.load(path)
    result = write_report(ws, tmp_path / "calc.pdf", csv_dir=tmp_path / "csv",
                          worksheet_path=path, **handed(ws))
    assert "calc-\ufffd.json" in _text_of(result.pdf_path)
    assert "# worksheet: calc-\ufffd.json" in result.csv_paths[0].read_text("utf-8")


# ------------------------------------------------------------------ recovery record times


@pytest.mark.parametrize("saved_at", ["1e300", "NaN", "-1e300", '"yesterday"', "null",
                                      "1e20", "[1]"])
def test_a_bad_recovery_time_never_breaks_the_offer(qtbot, window, dialogs, isolated,
                                                    saved_at) -> None:
    from app.window.recovery import RecoveryStore

    folder = isolated / "recovery"
    store = RecoveryStore(folder)
    assert store.write(_sheet(equation="h^2 - q"), None)
    meta = store.path.with_name(store.path.name.replace(".json", ".meta.json"))
    meta.write_text(f'{{"origin": null, "saved_at": {saved_at}, "session": "x"}}', "utf-8")
    left = RecoveryStore(folder).left_behind()
    assert len(left) == 1 and abs(left[0].saved_at - time.time()) < 3600
    dialogs.question = QMessageBox.StandardButton.Yes
    assert window.offer_recovery()
    assert window.strip.text() == "h^2 - q"
    window._saved_text = wsmod.dumps(window.worksheet())
    window._touched = False


# ------------------------------------------------------------------ file modes


@pytest.fixture
def umask_022():
    old = os.umask(0o022)
    yield
    os.umask(old)


def _mode(path: Path) -> int:
    return stat.S_IMODE(os.stat(path).st_mode)


WRITERS = {
    "worksheet": lambda p: wsmod.save(_sheet(), p),
    "csv": lambda p: _write_csv(p),
    "pdf": lambda p: _write_pdf(p),
}


def _write_csv(path: Path) -> None:
    from app.documents import export
    from solvers import pipeline

    solution = pipeline.solve(_sheet())
    export.runs_csv(solution.runs, path, meta=export.solution_meta(solution))


def _write_pdf(path: Path) -> None:
    from app.documents.report import write_report

    ws = _sheet(settings=Settings(methods=("newton",), x0=1.0))
    write_report(ws, path, overwrite=True, **handed(ws))


@posix_only
@pytest.mark.parametrize("kind", sorted(WRITERS))
def test_new_files_follow_the_umask_and_replaced_files_keep_their_mode(
        tmp_path: Path, umask_022, kind) -> None:
    write = WRITERS[kind]
    new = tmp_path / f"new.{kind}"
    write(new)
    assert _mode(new) == 0o644  # 0666 less umask 022, as for any new file
    os.umask(0o002)
    write(tmp_path / f"group.{kind}")
    assert _mode(tmp_path / f"group.{kind}") == 0o664
    shared = tmp_path / f"shared.{kind}"
    shared.write_bytes(b"old")
    for mode in (0o664, 0o640, 0o600):
        shared.chmod(mode)
        os.umask(0o077)
        write(shared)
        assert _mode(shared) == mode and shared.read_bytes() != b"old"


@posix_only
def test_saving_through_a_link_writes_the_target_and_keeps_the_link(tmp_path: Path) -> None:
    real = tmp_path / "project" / "calc.json"
    real.parent.mkdir()
    wsmod.save(_sheet(title="first"), real)
    real.chmod(0o664)
    link = tmp_path / "calc.json"
    link.symlink_to(real)
    wsmod.save(_sheet(title="second"), link)
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert wsmod.load(real).title == "second" and _mode(real) == 0o664
    assert sorted(os.listdir(tmp_path)) == ["calc.json", "project"]  # no temp beside the link


# ------------------------------------------------------------------ stale temporary files


def _leave_temp(folder: Path, target: str) -> Path:
    """Kill -9 a writer mid-save (temp file written, not yet renamed); the temp it left."""
    code = textwrap.dedent("""
        import sys, time
        from pathlib import Path
        from app.documents import files
        tmp = files._stage(Path(sys.argv[1]) / sys.argv[2], b"half a worksheet" * 1000)
        print(tmp, flush=True)
        time.sleep(600)  # the rename never comes: SIGKILL arrives first
    """)
    child = subprocess.Popen([sys.executable, "-c", code, str(folder), target], cwd=ROOT,
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                             stdin=subprocess.DEVNULL)
    try:
        line = child.stdout.readline().strip()  # the child exits (EOF) if it failed
    finally:
        child.kill()  # SIGKILL: no cleanup handler of any kind runs
        child.wait(timeout=CHILD_TIMEOUT_S)
        child.stdout.close()
        child.stderr.close()
    assert line, "the writer did not get as far as its temporary file"
    return Path(line)


@posix_only
def test_temp_files_of_a_killed_save_are_cleaned_on_the_next_save(tmp_path: Path) -> None:
    dead = _leave_temp(tmp_path, "calc.json")
    fresh = _leave_temp(tmp_path, "calc.json")
    assert dead.exists() and dead.name.startswith(".calc.json.~zt-")
    an_hour_ago = time.time() - 3600
    os.utime(dead, (an_hour_ago, an_hour_ago))
    # ours by name but its writer still runs (this test's parent process): kept
    alive = tmp_path / files.temp_name("calc.json").replace(f"-{os.getpid()}-",
                                                             f"-{os.getppid()}-")
    alive.write_bytes(b"in progress")
    os.utime(alive, (an_hour_ago, an_hour_ago))
    # not ours: a user's own hidden file with a similar name, and a link with our name
    theirs = tmp_path / ".calc.json.backup.tmp"
    theirs.write_bytes(b"mine")
    os.utime(theirs, (an_hour_ago, an_hour_ago))
    link = tmp_path / f".calc.json.~zt-{files._host_tag()}-999999-deadbeef.tmp"
    link.symlink_to(theirs)
    os.utime(link, (an_hour_ago, an_hour_ago), follow_symlinks=False)
    # another machine's, older than a day
    foreign = tmp_path / ".other.csv.~zt-abcdef-12-0123abcd.tmp"
    foreign.write_bytes(b"x")
    two_days_ago = time.time() - 2 * 86_400
    os.utime(foreign, (two_days_ago, two_days_ago))

    wsmod.save(_sheet(), tmp_path / "calc.json")

    assert not dead.exists() and not foreign.exists()
    assert fresh.exists(), "too young to call stale: its writer may be a slow disk away"
    assert alive.exists() and theirs.exists() and link.is_symlink()


@posix_only
def test_kill_9_during_saves_leaves_no_growing_pile(tmp_path: Path) -> None:
    for _ in range(5):
        _leave_temp(tmp_path, "calc.pdf")
    old = time.time() - 3600
    for p in tmp_path.iterdir():
        os.utime(p, (old, old))
    wsmod.save(_sheet(), tmp_path / "calc.json")
    assert sorted(os.listdir(tmp_path)) == ["calc.json"]


# ------------------------------------------------------------------ sheet + CSVs together


def test_a_full_disk_leaves_neither_the_sheet_nor_its_csv_files(tmp_path, monkeypatch) -> None:
    from app.documents.report import ReportError, write_report

    real_write = os.write

    def disk_full_on_the_pdf(fd: int, data: Any) -> int:
        if bytes(data[:5]) == b"%PDF-":
            raise OSError(errno.ENOSPC, "No space left on device")
        return real_write(fd, data)

    monkeypatch.setattr(os, "write", disk_full_on_the_pdf)
    csv_dir = tmp_path / "calc-csv"
    ws = wsmod.load(SAMPLE)
    results = handed(ws)
    with pytest.raises(ReportError, match="No space left"):
        write_report(ws, tmp_path / "calc.pdf", csv_dir=csv_dir, **results)
    assert sorted(os.listdir(tmp_path)) == [], "no PDF, no CSV, no temp, no empty folder"

    monkeypatch.setattr(os, "write", real_write)
    result = write_report(ws, tmp_path / "calc.pdf", csv_dir=csv_dir, **results)
    assert result.pdf_path.exists() and all(p.exists() for p in result.csv_paths)


def test_the_readme_example_creates_the_csv_folder(tmp_path: Path, monkeypatch, capsys) -> None:
    monkeypatch.chdir(tmp_path)
    code = cli_main(["report", str(SAMPLE), "--pdf", "calc.pdf", "--csv-dir", "calc-csv"])
    out, err = capsys.readouterr()
    assert code == 0, err
    assert sorted(os.listdir(tmp_path / "calc-csv")) == [
        "calc-roots.csv", "calc-runs.csv"]
    (tmp_path / "file").write_text("x", "utf-8")
    code = cli_main(["report", str(SAMPLE), "--pdf", "b.pdf", "--csv-dir", "file"])
    assert code == 2 and "is a file, not a folder" in capsys.readouterr().err


# ------------------------------------------------------------------ sheets taller than a page


def _continued_fraction(levels: int) -> str:
    text = "x"
    for _ in range(levels):
        text = f"1 + 1/({text})"
    return f"{text} = 2.5"


def _text_of(pdf: Path) -> str:
    return " ".join(" ".join(p.extract_text().split()) for p in pypdf.PdfReader(pdf).pages)


def test_a_30_level_continued_fraction_gets_its_sheet(tmp_path: Path) -> None:
    from app.documents.report import write_report

    # 1 + 1/(1 + 1/(...x)) = 2.5 has a root: the sheet must say so, not fail on layout.
    ws = Worksheet(equation=_continued_fraction(30), unknown="x", title="Invented fraction",
                   settings=Settings(methods=("newton", "secant"), x0=1.0, x1=1.1))
    result = write_report(ws, tmp_path / "tall.pdf", **handed(ws))
    assert result.pages >= 2 and "Caution" in _text_of(result.pdf_path)


def test_nothing_too_tall_ever_raises_a_layout_error(tmp_path: Path, monkeypatch) -> None:
    from app.documents import report

    # No cap on the typeset image, no legibility floor: the layout's own guard must cope.
    monkeypatch.setattr(report.typeset, "MAX_MATH_HEIGHT", 1e9)
    monkeypatch.setattr(report.typeset, "MIN_MATH_SCALE", 0.0)
    ws = Worksheet(equation=_continued_fraction(30), unknown="x",
                   settings=Settings(methods=("newton",), x0=1.0))
    assert report.write_report(ws, tmp_path / "a.pdf", **handed(ws)).pages >= 2
    # a parameter note several pages long runs on over the pages, every word kept
    note = " ".join(f"w{i}" for i in range(4000))
    ws = _sheet(parameters=(Parameter("a", 2.0, note), Parameter("q", 9.0)),
                settings=Settings(methods=("newton",), x0=1.0))
    result = report.write_report(ws, tmp_path / "b.pdf", **handed(ws))
    text = _text_of(result.pdf_path)
    assert "w0 " in text and "w3999" in text


def test_a_flowable_taller_than_a_page_that_cannot_split_is_shrunk_not_fatal() -> None:
    # A table cell holding something taller than the page that cannot be split (as a
    # typeset picture is): reportlab alone raises LayoutError, or loops if told to split
    # inside the row. Run in a child so a loop fails the test instead of hanging it.
    done = _child("""
        import io
        from reportlab.lib.styles import getSampleStyleSheet
        from reportlab.platypus import Paragraph, Spacer, Table
        from app.documents import report

        class Tall(Spacer):  # 2000 pt, never splits
            def split(self, width, height):
                return []

        body = getSampleStyleSheet()["Normal"]
        story = [Paragraph("before", body), Tall(100, 2000),
                 Table([[Tall(100, 2000), Paragraph("beside", body)]]),
                 Paragraph("after", body)]
        buffer = io.BytesIO()
        report._SheetTemplate(buffer, pagesize=report.PAGE_SIZE).build(story)
        print(buffer.getvalue()[:5].decode())
    """)
    assert done.returncode == 0, done.stderr[-2000:]
    assert done.stdout.strip() == "%PDF-"


# ------------------------------------------------------------------ --param numbers


@pytest.mark.parametrize("value", ["１", "1_000", "1e400", "1e-400", "２.５"])
def test_param_refuses_what_the_equation_parser_refuses(capsys, value: str) -> None:
    from solvers.equation import EquationError, parse_equation

    with pytest.raises(EquationError) as parsed:
        parse_equation(f"x - {value}")
    parser_says = str(parsed.value).rsplit(" at column", 1)[0]
    code = cli_main(["solve", "x - a", "--param", f"a={value}", "--x0", "1"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert f"value of a: {parser_says}" in err


def test_param_still_takes_plain_numbers(capsys) -> None:
    code = cli_main(["solve", "x - a", "--param", "a=-2.5e3", "--x0", "1",
                     "--method", "newton", "--json"])
    assert code == 0
    assert json.loads(capsys.readouterr().out)["runs"][0]["root"] == -2500.0
