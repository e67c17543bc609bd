"""Blade files (placer.io.bladefile): what a good file says, and one line for every bad one.

The bundled example is read here a second time with :mod:`tomllib` and the
catalogue file with it, and every value the reader returns is compared with
that independent reading.  Bad files go through the command line: exit 2, one
line on stderr naming the file, the key (or line and column) and what was
expected, no traceback (the project's rule for bad input; common practice, no
source).
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from placer.io.bladefile import read_blade_file

REPO = Path(__file__).resolve().parents[2]
EXAMPLE = REPO / "examples" / "fan-reblade.toml"


def test_example_is_read_as_written():
    raw = tomllib.loads(EXAMPLE.read_text(encoding="utf-8"))
    job = read_blade_file(EXAMPLE)
    assert [b.blade_id for b in job.blades] == [b["id"] for b in raw["blades"]]
    assert [b.moment_gmm for b in job.blades] == [b["moment_gmm"] for b in raw["blades"]]
    assert job.slots_now == tuple(b.get("slot") for b in raw["blades"])
    assert job.move == raw["arrange"]["move"] == "new"
    assert job.disc.slot_count == raw["disc"]["slots"] == 12
    # Equally spaced from 0°: slot k at 30·(k − 1) degrees.
    assert job.disc.slot_angles_deg() == pytest.approx([30.0 * k for k in range(12)])
    assert job.disc.unbalance_gmm == raw["disc"]["unbalance"]["gmm"]
    assert job.disc.unbalance_angle_deg == raw["disc"]["unbalance"]["angle_deg"]
    assert job.disc.limits.opposite_gmm == raw["limits"]["opposite_gmm"]
    assert job.disc.pinned == ()
    assert job.rotor.name == raw["rotor"]["name"]
    assert (job.rotor.mass_kg, job.rotor.service_rpm, job.rotor.grade_mm_s) == (38.0, 1480, 6.3)
    assert job.tolerance_gmm is None
    # The trim: a clip seat on every blade, at the slots' angles and the clip radius.
    clips = tomllib.loads((REPO / "catalogs" / "fan-blade-clips.toml").read_text("utf-8"))
    trim = job.trim
    assert trim.on_blades
    assert trim.geometry.angles_deg == pytest.approx(job.disc.slot_angles_deg())
    assert set(trim.geometry.radii_mm) == {raw["trim"]["radius_mm"]}
    assert trim.geometry.capacity == raw["trim"]["capacity"]
    assert trim.max_parts == raw["trim"]["max_parts"]
    assert [(i.id, i.mass_g) for i in trim.catalog.items] == \
        [(i["id"], i["mass_g"]) for i in clips["items"]]


def test_move_for_this_run_comes_first():
    assert read_blade_file(EXAMPLE, move="all").move == "all"
    assert read_blade_file(EXAMPLE, move="fewest").move == "fewest"


CSV_LIST = """id,moment_gmm,frequency_hz,slot,stays
A1,1200.5,181.0,3,
A2,1190.0,182.5,1,yes
A3,1210.25,180.0,2,false
A4,1201,183.0,4,0
"""


def test_csv_list_alone(write_file):
    path = write_file("list.csv", "\ufeff" + CSV_LIST)
    job = read_blade_file(path)
    assert [b.blade_id for b in job.blades] == ["A1", "A2", "A3", "A4"]
    assert [b.moment_gmm for b in job.blades] == [1200.5, 1190.0, 1210.25, 1201.0]
    assert [b.frequency_hz for b in job.blades] == [181.0, 182.5, 180.0, 183.0]
    assert job.slots_now == (3, 1, 2, 4)
    assert job.disc.pinned == ((1, "A2"),)
    assert job.disc.slot_angles_deg() == (0.0, 90.0, 180.0, 270.0)
    assert job.move == "all" and job.trim is None and job.tolerance_gmm is None
    assert job.rotor.name == "list"


def test_toml_names_a_csv_list(write_file):
    write_file("list.csv", CSV_LIST)
    path = write_file("disc.toml", 'blades = "list.csv"\n[rotor]\ntolerance_gmm = 5.0\n'
                                   '[disc]\nstart_deg = 45.0\n')
    job = read_blade_file(path)
    assert len(job.blades) == 4 and job.tolerance_gmm == 5.0
    assert job.disc.slot_angles_deg() == pytest.approx([45.0, 135.0, 225.0, 315.0])


def test_trim_on_a_bolt_circle(write_file):
    path = write_file("disc.toml", """
[trim]
catalog = "washers-steel"
positions = 8
start_deg = 22.5
radius_mm = 95.0

[[blades]]
id = "A"
moment_gmm = 10.0

[[blades]]
id = "B"
moment_gmm = 11.0

[[blades]]
id = "C"
moment_gmm = 12.0
""")
    trim = read_blade_file(path).trim
    assert not trim.on_blades
    assert trim.geometry.angles_deg == pytest.approx([22.5 + 45.0 * k for k in range(8)])


GOOD = """[rotor]
name = "test fan"
tolerance_gmm = 20.0

[disc]
slots = 4

[[blades]]
id = "A"
moment_gmm = 100.0
slot = 1

[[blades]]
id = "B"
moment_gmm = 101.0
slot = 2

[[blades]]
id = "C"
moment_gmm = 102.0
slot = 3

[[blades]]
id = "D"
moment_gmm = 103.0
slot = 4
"""


def _edit(old: str, new: str) -> str:
    assert old in GOOD
    return GOOD.replace(old, new, 1)


BAD_TOML = [
    ("unknown table", GOOD + "[rotr]\nname = 1\n", "rotr"),
    ("no blades", GOOD.split("[[blades]]")[0], "blades"),
    ("negative moment", _edit("moment_gmm = 101.0", "moment_gmm = -5"), "blades[2].moment_gmm"),
    ("text moment", _edit("moment_gmm = 100.0", 'moment_gmm = "heavy"'),
     "blades[1].moment_gmm"),
    ("empty id", _edit('id = "A"', 'id = ""'), "blades[1].id"),
    ("long id", _edit('id = "A"', 'id = "' + "A" * 17 + '"'), "blades[1].id"),
    ("id twice", _edit('id = "B"', 'id = "A"'), "blades"),
    ("slot 0", _edit("slot = 1", "slot = 0"), "blades[1].slot"),
    ("slot twice", _edit("slot = 2", "slot = 1"), "blades[B].slot"),
    ("stays without slot", _edit("slot = 2", "stays = true"), "blades[2].stays"),
    ("stays not a flag", _edit("slot = 2", 'slot = 2\nstays = "yes"'), "blades[2].stays"),
    ("unknown blade key", _edit("slot = 2", "slott = 2"), "blades[2].slott"),
    ("slots for other blades", _edit("slots = 4", "slots = 5"), "blades"),
    ("one slot", _edit("slots = 4", "slots = 1"), "disc.slots"),
    ("angles count", _edit("slots = 4", "angles_deg = [0, 90, 180]"), "disc.angles_deg"),
    ("same angle", _edit("slots = 4", "angles_deg = [0, 90, 180, 360]"), "disc.angles_deg"),
    ("negative unbalance", _edit("slots = 4", "slots = 4\nunbalance = { gmm = -3.0, "
                                              "angle_deg = 10.0 }"), "disc.unbalance.gmm"),
    ("unbalance without angle", _edit("slots = 4", "slots = 4\nunbalance = { gmm = 3.0 }"),
     "disc.unbalance.angle_deg"),
    ("bad move", GOOD + '[arrange]\nmove = "some"\n', "arrange.move"),
    ("negative limit", GOOD + "[limits]\nopposite_gmm = -1.0\n", "limits.opposite_gmm"),
    ("alternation without frequencies", GOOD + "[limits]\nalternate_frequency = true\n",
     "blades[A]"),
    ("limits that cannot be kept", GOOD + "[limits]\nopposite_gmm = 0.0\n", "limits"),
    ("fewest without a tolerance", _edit("tolerance_gmm = 20.0", "mass_kg = 3.0")
     + '[arrange]\nmove = "fewest"\n', "rotor.tolerance_gmm"),
    ("unknown grade", _edit("tolerance_gmm = 20.0", 'grade = "G7"'), "rotor.grade"),
    ("lever distances", _edit("tolerance_gmm = 20.0", "com_distances_mm = [1.0, 2.0]"),
     "rotor.com_distances_mm"),
    ("lever distances in inches", _edit("tolerance_gmm = 20.0", "com_distances_in = [1.0, 2.0]"),
     "rotor.com_distances_in"),
    ("negative tolerance", _edit("tolerance_gmm = 20.0", "tolerance_gmm = -1.0"),
     "rotor.tolerance_gmm"),
    ("no trim catalogue", GOOD + '[trim]\ncatalog = "no-such-drawer"\nradius_mm = 90.0\n',
     "trim.catalog"),
    ("no clip radius", GOOD + '[trim]\ncatalog = "fan-blade-clips"\n', "trim.radius_mm"),
    ("long trim", GOOD + '[trim]\ncatalog = "fan-blade-clips"\nradius_mm = 90.0\n'
                         'max_parts = 99\n', "trim.max_parts"),
    ("trim aim", GOOD + '[trim]\ncatalog = "fan-blade-clips"\nradius_mm = 90.0\n'
                        'aim_share = 1.5\n', "trim.aim_share"),
]


@pytest.mark.parametrize("name, text, key", BAD_TOML, ids=[c[0] for c in BAD_TOML])
def test_bad_blade_file_is_one_line(name, text, key, write_file, run_cli):
    path = write_file("bad.toml", text)
    code, out, err = run_cli("blades", path)
    assert code == 2, (name, out, err)
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in err
    assert lines[0].startswith(f"placer: error: {path}: {key}: "), lines[0]
    assert "(expected " in lines[0]


BAD_CSV = [
    ("unknown column", "id,moment_gmm,mass\nA,1,2\nB,2,3\n", "column 'mass'"),
    ("no moment column", "id,slot\nA,1\nB,2\n", "header"),
    ("column twice", "id,moment_gmm,id\nA,1,A\n", "column 'id'"),
    ("empty", "", "header"),
    ("no blades", "id,moment_gmm\n", "header"),
    ("text moment", "id,moment_gmm\nA,1\nB,abc\n", "line 3, moment_gmm"),
    ("nan moment", "id,moment_gmm\nA,nan\nB,1\n", "line 2, moment_gmm"),
    ("underscore number", "id,moment_gmm\nA,1_000\nB,1\n", "line 2, moment_gmm"),
    ("huge moment", "id,moment_gmm\nA,1e400\nB,1\n", "line 2, moment_gmm"),
    ("zero moment", "id,moment_gmm\nA,0\nB,1\n", "line 2, moment_gmm"),
    ("missing moment", "id,moment_gmm\nA,\nB,1\n", "line 2, moment_gmm"),
    ("bad slot", "id,moment_gmm,slot\nA,1,x\nB,1,2\n", "line 2, slot"),
    ("bad stays", "id,moment_gmm,slot,stays\nA,1,1,maybe\nB,1,2,\n", "line 2, stays"),
    ("stays without slot", "id,moment_gmm,slot,stays\nA,1,,yes\nB,1,2,\n", "line 2, stays"),
    ("short row", "id,moment_gmm,slot\nA,1\nB,1,2\n", "line 2"),
    ("empty id", "id,moment_gmm\n,1\nB,1\n", "line 2, id"),
]


@pytest.mark.parametrize("name, text, key", BAD_CSV, ids=[c[0] for c in BAD_CSV])
def test_bad_blade_list_is_one_line(name, text, key, write_file, run_cli):
    path = write_file("bad.csv", text)
    code, out, err = run_cli("blades", path)
    assert code == 2, (name, out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in err
    assert lines[0].startswith(f"placer: error: {path}: {key}"), lines[0]
    assert "(expected " in lines[0]


@pytest.mark.parametrize("content", [b"\xff\xfe not utf-8", b"[[blades]\nid = 1\n", b"x = ["])
def test_unreadable_files_are_one_line(content, write_file, run_cli):
    path = write_file("bad.toml", content)
    code, _, err = run_cli("blades", path)
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert err.startswith(f"placer: error: {path}: ")


def test_missing_files_are_one_line(tmp_path, write_file, run_cli):
    code, _, err = run_cli("blades", tmp_path / "none.toml")
    assert code == 2 and "blade file not found" in err and len(err.splitlines()) == 1
    path = write_file("disc.toml", 'blades = "none.csv"\n')
    code, _, err = run_cli("blades", path)
    assert code == 2 and "blade list not found" in err and "none.csv" in err
