"""The printed visit report: pages, polar plots, the reprint from the database, files.

What the checks are measured against: the session files' own readings (a
phase lag counted against rotation is the angle itself; with rotation it is
minus the angle; REFERENCES.md [InfluenceCoefficients]) and the drawing
convention written out here with numpy (reference mark at the top, angles
counterclockwise on the page when counted against a clockwise rotation);
the points' places are read back from the figure's own line data.  Layout
is checked on matplotlib's own measure of every text it drew
(``Text.get_window_extent``): no two texts share ink space and every text
lies on the page, as for the fitting sheet (tests/views/test_sheet.py).
Page counts are read from the PDF's page objects (ISO 32000-1, 7.7.3).
"""

from __future__ import annotations

import cmath
import math
import re
import sqlite3
import sys
from datetime import date
from pathlib import Path

import numpy as np
import pytest

from layoutcheck import overlapping
from sessions import rect, session_toml, write

from placer.cli import main
from placer.fieldplan import solve_session
from placer.io.history import History
from placer.io.sessionfile import read_session
from placer.records import visit_record
from placer.views.report.pages import report_pages
from placer.views.sheet.files import PNG_DPI
from placer.visitreport import visit_report

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
WHEN = date(2025, 12, 3)
SESSIONS = ["exhaust-fan-visit.toml", "blower-visit.toml", "roof-fan-no-phase.toml"]

_SOLVED: dict[str, object] = {}


def solved(name: str):
    if name not in _SOLVED:
        _SOLVED[name] = solve_session(read_session(EXAMPLES / name))
    return _SOLVED[name]


def pages_of(result, dpi: float = PNG_DPI):
    return report_pages(visit_report(visit_record(result)), WHEN, dpi=dpi)


def texts_of(fig):
    fig.draw_without_rendering()
    renderer = fig.canvas.get_renderer()
    return [(t.get_text(), t.get_window_extent(renderer)) for ax in fig.axes for t in ax.texts
            if t.get_visible() and t.get_text().strip()]


@pytest.fixture(scope="module")
def weak_session(tmp_path_factory) -> Path:
    """The example visit with a 1.5 g outboard trial weight: too weak (invented readings
    from the synthetic machine the example was made from, tests/sessions.py)."""
    from sessions import EXAMPLE_A, EXAMPLE_U

    text = (EXAMPLES / "exhaust-fan-visit.toml").read_text()
    t = 1.5 * 180.0 * cmath.exp(1j * math.pi)
    v = EXAMPLE_A @ (EXAMPLE_U + np.array([0, t]))
    pairs = ", ".join(f"[{abs(x):.2f}, {math.degrees(cmath.phase(x)) % 360:.0f}]" for x in v)
    text = text.replace("readings = [[2.39, 22], [2.72, 115], [9.77, 197]]",
                        f"readings = [{pairs}]")
    text = text.replace("mass_g = 20.0, position = 5", "mass_g = 1.5, position = 5")
    path = tmp_path_factory.mktemp("weak") / "weak.toml"
    path.write_text(text)
    return path


# --- layout ---------------------------------------------------------------------------

@pytest.mark.parametrize("name", SESSIONS + ["weak"])
def test_text_never_overlaps_and_stays_on_the_page(name, weak_session):
    result = solve_session(read_session(weak_session)) if name == "weak" else solved(name)
    for index, page in enumerate(pages_of(result), start=1):
        fig = page.figure
        texts = texts_of(fig)
        assert overlapping(texts) == [], f"page {index}"
        edge = 0.2 * PNG_DPI
        outside = [t for t, box in texts if box.x0 < edge or box.y0 < edge
                   or box.x1 > fig.bbox.width - edge or box.y1 > fig.bbox.height - edge]
        assert outside == [], f"page {index}"


def test_the_overlap_check_sees_an_overlap():
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4, 2), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.text(0.1, 0.5, "drive end horizontal")
    ax.text(0.3, 0.5, "free end")
    ax.text(0.1, 0.1, "apart")
    assert overlapping(texts_of(fig)) == [("drive end horizontal", "free end")]


# --- what the pages show ----------------------------------------------------------------

def flat(page) -> str:
    return " ".join(t for t, _ in texts_of(page.figure)).replace("\n", " ")


def test_the_verdict_comes_before_the_plan_and_a_failure_is_marked(weak_session):
    result = solve_session(read_session(weak_session))
    assert not result.data_ok
    pages = pages_of(result, dpi=50)
    first = flat(pages[0])
    assert first.index("THE DATA, JUDGED BEFORE THE PLAN") < first.index("CORRECTION PER PLANE")
    assert "TOO WEAK" in first and "What to do: repeat the run with about" in first
    assert "PLAN FROM DATA THAT FAILS THE CHECKS" in first
    good = flat(pages_of(solved("exhaust-fan-visit.toml"), dpi=50)[0])
    assert "FAILS THE CHECKS" not in good and "BELOW THE LIMIT OF 1 mm/s peak" in good


def test_a_page_per_plane_draws_the_plan_on_the_rotor_face():
    result = solved("blower-visit.toml")
    pages = pages_of(result, dpi=50)
    faces = [f for p in pages for f in p.drawn.faces]
    assert [index for index, _ in faces] == [0, 1]
    drawing = dict(faces)[0]
    # The left-on trial weight on drive side #2 is taken off; M10 on #4 and M16 on #6 fitted.
    assert sorted(drawing.remove_xy) == [2] and sorted(drawing.fit_xy) == [4, 6]
    # Position k of 6 lies at angle 60°·(k − 1), counterclockwise on the page from the top
    # (against a clockwise rotation); largest radius = 1.
    for k, (x, y) in drawing.position_xy.items():
        assert math.hypot(x, y) == pytest.approx(1.0)
        assert math.degrees(math.atan2(y, x)) % 360 == pytest.approx((90 + 60 * (k - 1)) % 360)
    text = " ".join(flat(p) for p in pages)
    assert "REMOVE trial 30 g ×1" in text.replace("\n", " ") or "REMOVE" in text
    assert "trial weight left on" not in text.split("ON THE ROTOR WHEN YOU LEAVE")[-1]


def test_what_is_on_the_rotor_when_you_leave():
    report = visit_report(visit_record(solved("blower-visit.toml")))
    # The plan takes off the 30 g trial weight: it is not on the rotor when you leave,
    # and the four new parts are (by reasoning from the plan).
    assert [(p.plane, p.position, p.label, p.count, p.origin) for p in report.on_rotor] == [
        (0, 4, "M10", 1, "new"), (0, 6, "M16", 1, "new"), (1, 3, "M12", 1, "new"),
        (1, 4, "M10", 1, "new")]


def _lag_page_deg(lag_deg: float) -> float:
    """A phase lag counts against rotation; against a clockwise rotation angles grow
    counterclockwise on the page from the top: page angle = 90° + lag (written out)."""
    return (90.0 + lag_deg) % 360.0


def _point(drawing, label):
    lines = [line for line in drawing.ax.lines if line.get_label() == f"point {label}"]
    assert len(lines) == 1, label
    x, y = lines[0].get_xdata()[0], lines[0].get_ydata()[0]
    return math.hypot(x, y), math.degrees(math.atan2(y, x)) % 360.0


def test_readings_are_plotted_at_their_amplitude_and_phase():
    result = solved("exhaust-fan-visit.toml")
    session = result.session
    polars = dict(p for page in pages_of(result, dpi=50) for p in page.drawn.polars)
    labels = ["R", "T1", "T2"]
    for c, channel in enumerate(session.channels):
        drawing = polars[f"readings at {channel.name}"]
        for label, run in zip(labels, session.runs):
            amplitude, lag = run.raw[c]                  # as written in the session file
            radius, angle = _point(drawing, label)
            assert radius == pytest.approx(amplitude, rel=1e-12)
            assert angle == pytest.approx(_lag_page_deg(lag), abs=1e-9)
        radius, angle = _point(drawing, "P")
        predicted = result.chosen.predicted[c]
        assert radius == pytest.approx(abs(predicted), rel=1e-12)
        assert angle == pytest.approx(_lag_page_deg(math.degrees(cmath.phase(predicted))),
                                      abs=1e-9)
        # A scale a technician can read: rings of 1, 2, 2.5 or 5 × 10^k reaching the
        # largest reading.
        step = drawing.rings[0]
        assert np.allclose(np.diff((0,) + drawing.rings), step)
        mantissa = step / 10 ** math.floor(math.log10(step))
        assert round(mantissa, 9) in (1.0, 2.0, 2.5, 5.0)
        largest = max(abs(r.readings[c]) for r in session.runs)
        assert drawing.rings[-1] >= largest and len(drawing.rings) <= 5


def test_the_plot_shows_the_same_place_whatever_the_angle_sense(tmp_path):
    """The same readings as written, the session's angles counted the other way: a phase
    lag becomes minus the angle, and the page turns the other way, so every reading lands
    at the same place, 90° + lag (REFERENCES.md [InfluenceCoefficients]; by reasoning)."""
    a = np.array([[rect(0.004, 40), rect(0.001, 200)], [rect(0.001, 300), rect(0.003, 10)]])
    u0 = np.array([rect(700, 200), rect(500, 20)])
    text = session_toml(a, u0, max_parts=2)
    places = []
    for sense in ("against rotation", "with rotation"):
        path = write(tmp_path, text.replace('"against rotation"', f'"{sense}"'), f"{sense}.toml")
        result = solve_session(read_session(path))
        polars = dict(p for page in pages_of(result, dpi=40) for p in page.drawn.polars)
        places.append([_point(polars["readings at s1"], label) for label in ("R", "T1", "T2")])
        for run, (radius, angle) in zip(result.session.runs, places[-1]):
            assert angle == pytest.approx(_lag_page_deg(run.raw[0][1]), abs=1e-9)
    assert np.allclose(places[0], places[1], rtol=0, atol=1e-9)


def test_the_four_run_construction_is_drawn_as_published():
    result = solved("roof-fan-no-phase.toml")
    polars = dict(p for page in pages_of(result, dpi=50) for p in page.drawn.polars)
    drawing = polars["four-run construction"]
    f = result.four_run
    # The trial marks on the reference circle at the trial angles (holes 1, 5, 9 of 12).
    for k, angle in enumerate((0.0, 120.0, 240.0), start=1):
        radius, page = _point(drawing, f"T{k}")
        assert radius == pytest.approx(f.reference, rel=1e-12)
        assert page == pytest.approx((90.0 + angle) % 360.0, abs=1e-9)
    radius, page = _point(drawing, "P")
    assert radius == pytest.approx(f.effect, rel=1e-12)
    correction = math.degrees(cmath.phase(result.correction_gmm[0])) % 360.0
    assert page == pytest.approx((90.0 + correction) % 360.0, abs=1e-9)
    # About each mark, a circle of that trial run's amplitude; about the centre, the
    # reference circle among the scale rings.
    from matplotlib.patches import Circle

    circles = [p for p in drawing.ax.patches if isinstance(p, Circle)]
    about = {tuple(np.round(p.center, 9)): p.get_radius() for p in circles
             if math.hypot(*p.center) > 0}
    for k, amplitude in enumerate(f.amplitudes, start=1):
        centre = tuple(np.round(drawing.points[f"T{k}"], 9))
        assert about[centre] == pytest.approx(amplitude, rel=1e-12)
    assert any(p.get_radius() == pytest.approx(f.reference) for p in circles
               if math.hypot(*p.center) == 0)


def test_a_residual_check_plots_each_reading_at_its_trial_angle():
    result = solved("blower-visit.toml")
    polars = dict(p for page in pages_of(result, dpi=50) for p in page.drawn.polars)
    drawing = polars["residual check 1"]
    check = result.residual_checks[0].check
    for k, (angle, amplitude) in enumerate(zip(check.angles_deg, check.amplitudes), start=1):
        radius, page = _point(drawing, str(k))
        assert radius == pytest.approx(amplitude, rel=1e-12)
        assert page == pytest.approx((90.0 + angle) % 360.0, abs=1e-9)
    radius, page = _point(drawing, "c")
    centre = result.residual_checks[0].circle.centre
    assert radius == pytest.approx(abs(centre), rel=1e-12)


# --- the reprint ----------------------------------------------------------------------

def test_the_reprint_from_the_database_is_the_same_report(tmp_path):
    result = solved("blower-visit.toml")
    record = visit_record(result)
    with History(tmp_path / "h.sqlite") as db:
        back = db.visit(db.save_visit(record))
    first = [[t for t, _ in texts_of(p.figure)] for p in report_pages(visit_report(record),
                                                                       WHEN, dpi=40)]
    again = [[t for t, _ in texts_of(p.figure)] for p in report_pages(visit_report(back),
                                                                       WHEN, dpi=40)]
    assert first == again


def test_an_older_visit_prints_without_the_face_and_says_why(tmp_path, capsys):
    from history_writer import write_version_2_file

    db = tmp_path / "old.sqlite"
    write_version_2_file(db)
    with History(db) as h:
        report = visit_report(h.visit(1))
    pages = report_pages(report, WHEN, dpi=40)
    assert not any(p.drawn.faces for p in pages)
    assert "stored before placer kept each plane's positions" in " ".join(flat(p)
                                                                           for p in pages)
    code = main(["history", "WM-EF-07", "--db", str(db), "--visit", "1", "--sheet",
                 str(tmp_path / "old.pdf")])
    assert code == 0 and (tmp_path / "old.pdf").read_bytes().startswith(b"%PDF")


# --- files and the command line ---------------------------------------------------------

def _pdf_pages(data: bytes) -> int:
    return len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", data))


def test_field_and_history_write_the_report(tmp_path, capsys):
    db = tmp_path / "h.sqlite"
    pdf = tmp_path / "visit.pdf"
    code = main(["field", str(EXAMPLES / "exhaust-fan-visit.toml"), "--save", "--db", str(db),
                 "--sheet", str(pdf)])
    out, err = capsys.readouterr()
    assert code == 0 and "visit report written" in err
    count = len(pages_of(solved("exhaust-fan-visit.toml"), dpi=30))
    assert _pdf_pages(pdf.read_bytes()) == count
    assert not list(tmp_path.glob(".*part"))
    # The same file again is refused before anything is solved or saved (exit 2, one line).
    before = pdf.read_bytes()
    code = main(["field", str(EXAMPLES / "exhaust-fan-visit.toml"), "--sheet", str(pdf)])
    out, err = capsys.readouterr()
    assert code == 2 and out == "" and "--force" in err and pdf.read_bytes() == before
    pngs = tmp_path / "again.png"
    code = main(["history", "BDW-EF3", "--db", str(db), "--visit", "1", "--sheet", str(pngs)])
    assert code == 0
    assert sorted(p.name for p in tmp_path.glob("again-*.png")) == [
        f"again-{k}.png" for k in range(1, count + 1)]
    code = main(["history", "BDW-EF3", "--db", str(db), "--sheet", str(tmp_path / "x.pdf")])
    assert code == 2 and "--visit" in capsys.readouterr().err


def test_a_plan_from_data_that_fails_the_checks_exits_4(weak_session, capsys):
    code = main(["field", str(weak_session), "--json"])
    out, _ = capsys.readouterr()
    assert code == 4
    import json

    data = json.loads(out)
    assert data["plan_from_failed_data"] is True
    assert [c["subject"] for c in data["checks"] if not c["passed"]] == [
        "trial run 'trial outboard'"]
    weak = [t for t in data["trial_runs"] if not t["trusted"]][0]
    assert weak["suggested_masses_g"] and weak["suggested_masses_g"][0] > 1.5
    code = main(["field", str(weak_session), "--width", "80"])
    out, _ = capsys.readouterr()
    assert code == 4 and max(len(line) for line in out.splitlines()) <= 80
    assert out.index("judged before the plan") < out.index("Fit these")
    assert "FROM DATA THAT FAILS THESE CHECKS" in out


def test_the_report_module_does_not_import_matplotlib_at_start_up():
    import subprocess

    code = ("import sys, placer.cli, placer.views.report, placer.visitreport; "
            "print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=Path(__file__).resolve().parents[2], check=True).stdout
    assert out.strip() == "False"


def test_a_saved_visit_reprints_in_the_database_order(tmp_path):
    """Two visits saved, the first removed: the second still reprints (rows counted with
    sqlite3, without placer)."""
    db = tmp_path / "h.sqlite"
    for name in ("exhaust-fan-visit.toml", "blower-visit.toml"):
        with History(db) as h:
            h.save_visit(visit_record(solved(name)))
    with History(db) as h:
        h.remove_visit(1)
        report = visit_report(h.visit(2))
    assert report.record.machine_id == "FPM-B2"
    connection = sqlite3.connect(db)
    assert connection.execute("SELECT COUNT(*) FROM visits").fetchone() == (1,)
    connection.close()


def test_a_trial_weight_left_on_and_kept_is_drawn_staying_and_listed(tmp_path):
    """A 20 g trial weight left on position 2, where the correction wants mass, and an M12
    fitted for a check run on plane 2 (synthetic machine, tests/sessions.py): the face
    draws what stays and what goes, and the list of what is on the rotor says where each
    part came from."""
    from sessions import synthetic

    a, _ = synthetic(31)
    path = write(tmp_path, session_toml(a, np.array([rect(2600, 270), rect(600, 250)]),
                                        capacity=2, trials=((0, 20.0, 2, False),
                                                            (1, 20.0, 1, True)),
                                        check=[(1, 3, "M12", 1)], max_parts=3))
    result = solve_session(read_session(path))
    report = visit_report(visit_record(result))
    kept = [p for p in report.on_rotor if p.origin == "trial weight left on"]
    assert [(p.plane, p.position, p.label) for p in kept] == [(0, 2, "trial 20 g")]
    faces = dict(f for page in pages_of(result, dpi=40) for f in page.drawn.faces)
    assert sorted(faces[0].stay_xy) == [2]
    # Whatever the trim does with the check run's M12 on plane 2, position 3, the face and
    # the list agree: taken off, it is crossed out and gone; kept, it is hatched and listed.
    taken = [(plane, p.position, p.item) for plane, p in result.chosen.parts
             if p.action == "remove"]
    listed = [(p.plane, p.position, p.label) for p in report.on_rotor
              if p.origin == "fitted for a check run"]
    assert ((1, 3, "M12") in taken) != ((1, 3, "M12") in listed)
    assert (3 in faces[1].remove_xy) == ((1, 3, "M12") in taken)
    assert (3 in faces[1].stay_xy) == ((1, 3, "M12") in listed)
