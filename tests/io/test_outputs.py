"""Every output file written whole or not at all: placer/io/outputs.py and each command
that writes a file.

What the checks stand on:

* the operating system's documented behaviour [POSIX]: ``rename()`` replaces a
  name atomically, ``link()`` fails with EEXIST where a name exists, a name
  part is at most NAME_MAX = 255 bytes on Linux (from memory), a full disk is
  ENOSPC; the tests make the system say each of these (a real folder, link, long
  name) or, for a full disk, raise the error the system would raise;
* the files themselves: every file in the test's folder is hashed (SHA-256,
  [FIPS180-4]) before and after a command; a file the user had must come out
  byte-identical unless ``--force`` was given, and no temporary ``.NAME.*.part``
  file may be left behind.
"""

from __future__ import annotations

import errno
import hashlib
import os
import shutil
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from placer.cli import main
from placer.errors import InputError, OutputError
from placer.io.outputs import check_target, replacing, write_text
from placer.limits import MAX_NAME_BYTES

REPO = Path(__file__).resolve().parents[2]
EXAMPLES = REPO / "examples"
AS_ROOT = hasattr(os, "geteuid") and os.geteuid() == 0


def snapshot(folder: Path) -> dict[str, str]:
    """Every entry under ``folder``: a file's SHA-256, a link's target, a folder as such."""
    seen = {}
    for root, dirs, files in os.walk(folder):
        for name in dirs + files:
            path = Path(root) / name
            key = str(path.relative_to(folder))
            if path.is_symlink():
                seen[key] = "link -> " + os.readlink(path)
            elif path.is_dir():
                seen[key] = "folder"
            else:
                seen[key] = hashlib.sha256(path.read_bytes()).hexdigest()
    return seen


def leftovers(folder: Path) -> list[str]:
    """Temporary files placer would have left (``.NAME.xxxx.part``)."""
    return [str(p) for p in folder.rglob(".*.part")]


# ----------------------------------------------------------------- the module itself
def test_a_new_file_is_written_whole(tmp_path):
    target = tmp_path / "a.txt"
    assert write_text(target, "line\n", "file") == target
    assert target.read_bytes() == b"line\n"
    assert leftovers(tmp_path) == []


def test_a_new_file_has_the_permissions_open_gives_and_a_replaced_one_keeps_its_own(tmp_path):
    # open(O_CREAT) gives 0o666 less the umask [POSIX]; a temporary file is 0o600.
    mask = os.umask(0o022)
    try:
        new = write_text(tmp_path / "new.txt", "x", "file")
        assert new.stat().st_mode & 0o777 == 0o644
        kept = tmp_path / "kept.txt"
        kept.write_text("old")
        kept.chmod(0o640)
        write_text(kept, "new", "file", force=True)
        assert kept.stat().st_mode & 0o777 == 0o640
    finally:
        os.umask(mask)


def test_an_existing_file_is_kept_without_force_and_replaced_with_it(tmp_path):
    target = tmp_path / "a.txt"
    target.write_text("keep me")
    with pytest.raises(OutputError, match="exists already"):
        write_text(target, "new", "file")
    assert target.read_text() == "keep me"
    write_text(target, "new", "file", force=True)
    assert target.read_text() == "new"
    assert leftovers(tmp_path) == []


def test_a_file_that_appears_while_writing_is_not_replaced(tmp_path):
    # link() fails with EEXIST where a name exists [POSIX]: the late file stays.
    target = tmp_path / "a.txt"
    with pytest.raises(OutputError, match="appeared while placer was writing"):
        with replacing(target, "file", text=True) as stream:
            stream.write("mine")
            target.write_text("theirs")
    assert target.read_text() == "theirs"
    assert leftovers(tmp_path) == []


def test_a_failure_while_writing_leaves_the_old_file(tmp_path):
    target = tmp_path / "a.txt"
    target.write_text("old")
    with pytest.raises(RuntimeError):
        with replacing(target, "file", force=True, text=True) as stream:
            stream.write("half")
            raise RuntimeError("drawing failed")
    assert target.read_text() == "old"
    assert leftovers(tmp_path) == []


@pytest.mark.parametrize("existed", [True, False])
def test_a_full_disk_leaves_the_old_file_or_none(tmp_path, monkeypatch, existed):
    # ENOSPC is what write()/fsync() return on a full disk [POSIX].
    target = tmp_path / "a.pdf"
    if existed:
        target.write_bytes(b"%PDF old")

    def full(_fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "fsync", full)
    with pytest.raises(OutputError) as caught:
        write_text(target, "x" * 10_000, "sheet", force=True, what="sheet")
    line = caught.value.one_line()
    assert "was not written (the disk is full)" in line and "\n" not in line
    if existed:
        assert "the file there before is unchanged" in line
        assert target.read_bytes() == b"%PDF old"
    else:
        assert "no file was left there" in line and not target.exists()
    assert leftovers(tmp_path) == []


def test_the_longest_name_the_system_takes_is_written(tmp_path):
    # 255 bytes is NAME_MAX [POSIX]: the temporary name beside it must still fit.
    name = "n" * (MAX_NAME_BYTES - 4) + ".txt"
    write_text(tmp_path / name, "ok", "file")
    assert (tmp_path / name).read_text() == "ok"
    with pytest.raises(OutputError, match=f"at most {MAX_NAME_BYTES} bytes"):
        check_target(tmp_path / ("n" + name), "file")
    # The same in two-byte characters: the limit is in bytes, not characters.
    with pytest.raises(OutputError, match="has a part of 256 bytes"):
        check_target(tmp_path / ("é" * 128), "file")


def test_a_path_longer_than_the_system_takes_is_one_line(tmp_path):
    # Each part fits NAME_MAX, the whole exceeds PATH_MAX (4096 bytes on Linux, from
    # memory): the system answers ENAMETOOLONG [POSIX].
    deep = tmp_path.joinpath(*["d" * 250] * 20) / "x.pdf"
    with pytest.raises(OutputError) as caught:
        check_target(deep, "sheet")
    line = caught.value.one_line()
    assert "too long" in line and "\n" not in line and len(line) < 400


@pytest.mark.parametrize("make, fragment", [
    (lambda d: (d / "t").mkdir(), "is a folder"),
    (lambda d: (d / "t").symlink_to(d / "nowhere"), "which does not exist"),
    (lambda d: (d / "f").write_text("x"), "is a file, not a folder"),
    (lambda d: None, "does not exist"),
])
def test_targets_refused_before_any_work(tmp_path, make, fragment):
    make(tmp_path)
    target = {"is a file, not a folder": tmp_path / "f" / "t",
              "does not exist": tmp_path / "missing" / "t"}.get(fragment, tmp_path / "t")
    before = snapshot(tmp_path)
    for force in (False, True):
        with pytest.raises(OutputError, match=fragment) as caught:
            check_target(target, "sheet", force=force)
        assert caught.value.option == "sheet"
    assert snapshot(tmp_path) == before


def test_a_folder_placer_cannot_write_in_is_refused(tmp_path, monkeypatch):
    # Found by trying to create a file there: permission bits do not tell for root.
    def refused(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr("tempfile.mkstemp", refused)
    with pytest.raises(OutputError, match="cannot write in folder .*permission denied"):
        check_target(tmp_path / "a.pdf", "sheet")


@pytest.mark.skipif(AS_ROOT, reason="root may write in a read-only folder")
def test_a_read_only_folder_is_refused(tmp_path):
    folder = tmp_path / "ro"
    folder.mkdir()
    folder.chmod(0o555)
    try:
        with pytest.raises(OutputError, match="cannot write in folder"):
            check_target(folder / "a.pdf", "sheet")
    finally:
        folder.chmod(0o755)


def test_output_errors_are_input_errors():
    # The command line ends every PlacerError with one line and exit 2.
    assert issubclass(OutputError, InputError)


# ----------------------------------------------------------------- every command
@pytest.fixture(scope="module")
def history_db(tmp_path_factory) -> Path:
    """A history holding one visit of machine FPM-B2 (from the bundled blower visit)."""
    path = tmp_path_factory.mktemp("db") / "h.db"
    assert main(["field", str(EXAMPLES / "blower-visit.toml"), "--save", "--db", str(path),
                 "--json"]) in (0, 1, 4)
    return path


def commands(db: Path, elsewhere: Path) -> dict[str, tuple]:
    """Each command that writes a file: (argv with the target as T, target is a folder)."""
    return {
        "solve --sheet": (["solve", EXAMPLES / "supply-fan.toml", "--sheet", "T"], False),
        "field --sheet": (["field", EXAMPLES / "blower-visit.toml", "--db", elsewhere / "h.db",
                           "--sheet", "T"], False),
        "history --sheet": (["history", "FPM-B2", "--visit", "1", "--db", db, "--sheet", "T"],
                            False),
        "blades --sheet": (["blades", EXAMPLES / "fan-reblade.toml", "--sheet", "T"], False),
        "batch --out": (["batch", EXAMPLES / "fan-line-template.toml",
                         EXAMPLES / "fan-line-readings.csv", "--jobs", "1", "--out", "T"], False),
        "new FILE": (["new", "job", "T", "--positions", "8", "--radius-mm", "100"], False),
        "new example --folder": (["new", "example", "supply-fan", "--folder", "T"], True),
        "field --save --db": (["field", EXAMPLES / "blower-visit.toml", "--save", "--db", "T"],
                              False),
    }


SUFFIX = {"solve --sheet": ".pdf", "field --sheet": ".pdf", "history --sheet": ".pdf",
          "blades --sheet": ".pdf", "batch --out": "", "new FILE": ".toml",
          "new example --folder": "", "field --save --db": ".db"}

SITUATIONS = ["existing", "folder", "dangling link", "missing folder", "long name",
              "read-only folder", "through a file", "new line in the name", "new"]


def place(situation: str, root: Path, command: str, is_folder: bool) -> Path:
    """Make ``situation`` under ``root``; returns the target to name on the command line."""
    name = "out" + SUFFIX[command]
    # The file a batch writes first under PREFIX, and the file an example folder holds.
    first = {"batch --out": "out.csv", "new example --folder": "out/supply-fan.toml"}
    if situation == "existing":
        inside = root / first.get(command, name)
        inside.parent.mkdir(exist_ok=True)
        inside.write_bytes(b"keep me\n")
        return root / name
    if situation == "folder":      # where a file goes, a folder; where a folder goes, a file
        if is_folder:
            (root / name).write_text("a file\n")
        else:
            (root / first.get(command, name)).mkdir()
        return root / name
    if situation == "dangling link":
        (root / first.get(command, name)).parent.mkdir(exist_ok=True)
        (root / first.get(command, name)).symlink_to(root / "nowhere")
        return root / name
    if situation == "missing folder":
        return root / "missing" / name
    if situation == "long name":
        return root / ("L" * 300 + SUFFIX[command])
    if situation == "new line in the name":      # every message stays one line
        return root / ("two\nlines\u2028" + SUFFIX[command])
    if situation == "read-only folder":
        folder = root / "ro"
        folder.mkdir()
        (folder / "other.txt").write_text("keep me\n")
        folder.chmod(0o555)
        return folder / name
    if situation == "through a file":
        (root / "file.txt").write_text("keep me\n")
        return root / "file.txt" / name
    return root / name


OUTCOMES = {"tried": 0, "tracebacks": 0, "changed without --force": 0}


@pytest.mark.parametrize("force", [False, True], ids=["plain", "force"])
@pytest.mark.parametrize("situation", SITUATIONS)
@pytest.mark.parametrize("command", list(SUFFIX))
def test_awkward_targets(tmp_path, capsys, monkeypatch, history_db, command, situation, force):
    """Exit 0, 1, 2 or 4; a refusal is one line; nothing the user had changes without --force."""
    monkeypatch.delenv("FORCE_COLOR", raising=False)
    root = tmp_path / "work"
    root.mkdir()
    argv, is_folder = commands(history_db, tmp_path / "elsewhere")[command]
    target = place(situation, root, command, is_folder)
    argv = [str(target) if a == "T" else str(a) for a in argv] + (["--force"] if force else [])
    before = snapshot(root)
    capsys.readouterr()
    try:
        code = main(argv)
    except Exception:
        OUTCOMES["tracebacks"] += 1
        raise
    finally:
        if situation == "read-only folder":
            (root / "ro").chmod(0o755)
    out, err = capsys.readouterr()
    OUTCOMES["tried"] += 1
    assert "Traceback" not in err and "Traceback" not in out
    assert code in (0, 1, 2, 4), (code, err)
    lines = err.splitlines()
    if code == 2:
        assert len(lines) == 1 and lines[0].startswith("placer: error: "), err
    else:
        assert all(line.startswith("placer: ") and "error" not in line for line in lines), err
        assert len(err.split("\n")) == len(lines) + 1         # no line broken inside
    after = snapshot(root)
    changed = [k for k, v in before.items() if after.get(k) != v]
    if not force:
        OUTCOMES["changed without --force"] += bool(changed)
        assert changed == [], (changed, err)
    assert leftovers(root) == []
    if situation in ("folder", "dangling link", "missing folder", "long name",
                     "through a file") or (situation == "existing" and not force):
        assert code == 2, err


@pytest.mark.parametrize("situation", SITUATIONS)
def test_awkward_targets_on_resume(tmp_path, capsys, monkeypatch, situation):
    """batch --resume: as above; a file that is not the run's is refused and kept."""
    monkeypatch.delenv("FORCE_COLOR", raising=False)
    root = tmp_path / "work"
    root.mkdir()
    target = place(situation, root, "batch --out", False)
    before = snapshot(root)
    try:
        code = main(["batch", str(EXAMPLES / "fan-line-template.toml"),
                     str(EXAMPLES / "fan-line-readings.csv"), "--jobs", "1", "--out",
                     str(target), "--resume"])
    finally:
        if situation == "read-only folder":
            (root / "ro").chmod(0o755)
    out, err = capsys.readouterr()
    OUTCOMES["tried"] += 1
    assert code in (0, 1, 2) and "Traceback" not in err + out
    if code == 2:
        assert err.count("\n") == 1 and err.startswith("placer: error: "), err
    changed = [k for k, v in before.items() if snapshot(root).get(k) != v]
    OUTCOMES["changed without --force"] += bool(changed)
    assert changed == [] and leftovers(root) == []
    if situation == "existing":
        assert "was not written by this batch run" in err


@pytest.mark.parametrize("command", ["field", "history"])
def test_a_later_page_file_is_refused_before_anything_is_printed(tmp_path, capsys, history_db,
                                                                 command):
    # A report of several pages as PNG writes r-1.png, r-2.png...; r-3.png is the user's.
    (tmp_path / "r-3.png").write_bytes(b"keep me")
    argv = (["field", str(EXAMPLES / "blower-visit.toml"), "--db", str(tmp_path / "none.db")]
            if command == "field" else ["history", "FPM-B2", "--visit", "1", "--db",
                                        str(history_db)])
    code = main(argv + ["--sheet", str(tmp_path / "r.png")])
    out, err = capsys.readouterr()
    assert code == 2 and out == "" and err.count("\n") == 1 and "r-3.png" in err, err
    assert (tmp_path / "r-3.png").read_bytes() == b"keep me"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r-3.png"]


def test_full_disk_after_printing_says_the_sheet_was_not_written(tmp_path, capsys,
                                                                 monkeypatch):
    target = tmp_path / "plan.pdf"
    target.write_bytes(b"%PDF the old sheet\n")

    def full(_fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "fsync", full)
    code = main(["solve", str(EXAMPLES / "supply-fan.toml"), "--sheet", str(target), "--force"])
    out, err = capsys.readouterr()
    assert code == 2 and out.strip()                 # the plan was printed first
    assert err.count("\n") == 1 and err.startswith("placer: error: --sheet: the sheet ")
    assert "was not written (the disk is full); the file there before is unchanged" in err
    assert target.read_bytes() == b"%PDF the old sheet\n"
    assert leftovers(tmp_path) == []


@pytest.mark.parametrize("argv, made", [
    (["new", "job", "T/a.toml", "--positions", "8", "--radius-mm", "100"], "a.toml"),
    (["batch", str(EXAMPLES / "fan-line-template.toml"), str(EXAMPLES / "fan-line-readings.csv"),
      "--jobs", "1", "--out", "T/run"], "run.csv"),
    (["field", str(EXAMPLES / "blower-visit.toml"), "--db", "T/none.db", "--sheet",
      "T/r.pdf"], "r.pdf"),
    (["blades", str(EXAMPLES / "fan-reblade.toml"), "--sheet", "T/b.pdf"], "b.pdf"),
])
def test_full_disk_is_one_line_for_every_writer(tmp_path, capsys, monkeypatch, argv, made):
    def full(_fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "fsync", full)
    code = main([a.replace("T/", f"{tmp_path}/") for a in argv])
    _, err = capsys.readouterr()
    assert code == 2 and err.count("\n") == 1 and "the disk is full" in err, err
    assert "Traceback" not in err and not (tmp_path / made).exists()
    assert leftovers(tmp_path) == []


@pytest.fixture(autouse=True)
def _no_stray_cwd_files(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    yield
    shutil.rmtree(tmp_path / "elsewhere", ignore_errors=True)


def test_a_full_disk_in_the_middle_of_a_batch_is_one_line(tmp_path, capsys, monkeypatch):
    # The log is appended row by row; ENOSPC from the third append [POSIX].
    import placer.io.batchresults as batchresults

    calls = []
    real = batchresults._write_line

    def full_on_third(handle, text):
        calls.append(text)
        if len(calls) == 3:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
        real(handle, text)

    monkeypatch.setattr(batchresults, "_write_line", full_on_third)
    prefix = tmp_path / "run"
    code = main(["batch", str(EXAMPLES / "fan-line-template.toml"),
                 str(EXAMPLES / "fan-line-readings.csv"), "--jobs", "1", "--out", str(prefix)])
    _, err = capsys.readouterr()
    assert code == 2 and err.count("\n") == 1 and "the disk is full" in err, err
    assert "--resume" in err and "Traceback" not in err
    # The two rotors logged before are in the table written when the batch stopped.
    assert Path(f"{prefix}.csv").read_text(encoding="utf-8").count("\n") == 1 + 2
    assert leftovers(tmp_path) == []


NAME_PARTS = st.lists(st.one_of(
    st.sampled_from(["", ".", "..", " ", "-", "~", "*", "?", "'", '"', "\n", "\r", "\t",
                     "\u2028", "\x7f", "é", "ß", "中", "\U0001f600", ".pdf", ".toml",
                     "\udcff", "L" * 120]),
    st.text(min_size=1, max_size=8)), min_size=1, max_size=4)
"""Pieces of awkward file names: dots, control characters, wide characters, a byte
that is not UTF-8 (U+DCFF, as Python names it), long runs."""


@settings(max_examples=60, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(pieces=NAME_PARTS, force=st.booleans())
def test_any_name_for_a_new_file(capsys, pieces, force):
    """``placer new job NAME`` with a drawn name: written whole, or one line and exit 2;
    the file already in the folder never changes without --force."""
    import tempfile

    name = "".join(pieces).replace("/", "_").replace("\x00", "_")
    with tempfile.TemporaryDirectory() as folder:
        root = Path(folder)
        (root / "keep.toml").write_text("keep me\n")
        before = snapshot(root)
        capsys.readouterr()
        code = main(["new", "job", str(root / name), "--positions", "4", "--radius-mm", "50"]
                    + (["--force"] if force else []))
        out, err = capsys.readouterr()
        OUTCOMES["tried"] += 1
        assert code in (0, 2) and "Traceback" not in err
        assert err.count("\n") == 1 and len(err.splitlines()) == 1, err
        changed = [k for k, v in before.items() if snapshot(root).get(k) != v]
        if not force:
            OUTCOMES["changed without --force"] += bool(changed)
            assert changed == []
        assert leftovers(root) == []


def test_report_the_counts():
    """The awkward-target matrix ran with no traceback and no file changed without --force
    (run after it in file order; the counts are printed with -s)."""
    if OUTCOMES["tried"]:
        print(f"\noutput situations tried: {OUTCOMES['tried']}, tracebacks: "
              f"{OUTCOMES['tracebacks']}, files changed without --force: "
              f"{OUTCOMES['changed without --force']}")
        assert OUTCOMES["changed without --force"] == 0
