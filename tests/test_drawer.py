"""The drawer file: reading, problems per line, atomic writing, history."""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.errors import DrawerFileError
from core.parts.drawer import Drawer, Row, cell_problems
from core.parts.drawer_file import drawer_csv_text, parse_drawer_text, read_drawer, write_drawer
from core.storage.locations import demo_drawer_path


def write(tmp_path: Path, text: str, name: str = "drawer.csv") -> Path:
    p = tmp_path / name
    p.write_bytes(text.encode("utf-8"))
    return p


def test_demo_drawer_reads_cleanly() -> None:
    drawer = read_drawer(demo_drawer_path())
    parts = drawer.parts()
    kinds = {p.kind for p in parts}
    assert kinds == {"R", "P", "C"}
    assert not drawer.problems()
    assert any(p.polarised for p in parts), "demo should show an electrolytic"
    assert any(p.taper == "log" for p in parts)


def test_values_in_every_accepted_spelling(tmp_path: Path) -> None:
    p = write(tmp_path, "kind,value,quantity,tolerance\n"
                        "R,4k7,3,J\nresistor,4.7 kΩ,1,5%\nC,104,2,K\ncapacitor,2n2,1,\n"
                        "P,10k,1,±20%\nc,0.1uF,5,+80/-20%\n")
    parts = read_drawer(p).parts()
    assert [q.value for q in parts] == pytest.approx([4700, 4700, 100e-9, 2.2e-9, 10e3, 100e-9])
    assert [q.kind for q in parts] == ["R", "R", "C", "C", "P", "C"]
    assert [q.line for q in parts] == [2, 3, 4, 5, 6, 7]
    assert parts[5].tolerance.plus == pytest.approx(0.8)
    assert not parts[3].tolerance_given


def test_every_bad_line_is_reported_and_the_file_refused(tmp_path: Path) -> None:
    p = write(tmp_path, "kind,value,quantity\nR,10k,3\nR,xx,2\nC,4700,1\nQ,1k,-1\nR,1k,2.5\n")
    with pytest.raises(DrawerFileError) as info:
        read_drawer(p)
    lines = sorted({problem.line for problem in info.value.problems})
    assert lines == [3, 4, 5, 6]
    assert all(str(problem).startswith(f"{p}:") for problem in info.value.problems)


def test_lenient_read_keeps_bad_text_for_correction(tmp_path: Path) -> None:
    p = write(tmp_path, "kind,value,quantity\nR,10k,3\nR,4k7x,2\n")
    drawer = read_drawer(p, strict=False)
    assert len(drawer.parts()) == 1
    assert drawer.rows[1].get("value") == "4k7x"
    assert "value" in drawer.problems()[1]
    drawer.set_cell(1, "value", "4k7")
    assert len(drawer.parts()) == 2 and not drawer.problems()


@pytest.mark.parametrize(
    ("text", "says"),
    [("", "empty file"), ("kind,value\nR,1k\n", "quantity"),
     ("kind,value,quantity\nR,1k,1,extra\n", "fields"),
     ("kind,kind,value,quantity\n", "twice")],
)
def test_structural_refusals(tmp_path: Path, text: str, says: str) -> None:
    with pytest.raises(DrawerFileError, match=says):
        read_drawer(write(tmp_path, text))


def test_extra_columns_are_kept_and_round_trip(tmp_path: Path) -> None:
    src = write(tmp_path, "kind,value,quantity,supplier,location\nR,10k,3,acme,A1\n"
                          "C,\"1,5n\",2,,\"B2, top\"\n")
    drawer = read_drawer(src)
    assert drawer.parts()[1].value == pytest.approx(1.5e-9)
    out = tmp_path / "out.csv"
    write_drawer(drawer, out)
    again = read_drawer(out)
    assert again.columns == drawer.columns
    assert again.rows[0].get("supplier") == "acme"
    assert again.parts() == [p for p in read_drawer(out).parts()]
    assert [p.location for p in again.parts()] == ["A1", "B2, top"]


def test_write_is_atomic_and_keeps_a_backup(tmp_path: Path) -> None:
    p = write(tmp_path, "kind,value,quantity\nR,10k,3\n")
    drawer = read_drawer(p)
    drawer.set_cell(0, "quantity", "7")
    write_drawer(drawer)
    assert (tmp_path / "drawer.csv.bak").read_text() == "kind,value,quantity\nR,10k,3\n"
    assert read_drawer(p).parts()[0].quantity == 7
    assert not list(tmp_path.glob("*.tmp"))
    assert not drawer.dirty


def test_formula_cells_are_neutralised_and_read_back() -> None:
    drawer = Drawer([Row({"kind": "R", "value": "1k", "quantity": "1",
                          "note": "=HYPERLINK(\"x\")", "location": "@A1"})])
    text = drawer_csv_text(drawer)
    assert "'=HYPERLINK" in text and "'@A1" in text
    again = parse_drawer_text(text)
    assert again.rows[0].get("note") == "=HYPERLINK(\"x\")"


def test_undo_redo_and_groups() -> None:
    drawer = Drawer([Row({"kind": "R", "value": "1k", "quantity": "1"})])
    events: list[str] = []
    drawer.changed.connect(lambda row, col: events.append(f"changed {row} {col}"))
    drawer.inserted.connect(lambda first, n: events.append(f"inserted {first} {n}"))
    drawer.set_cell(0, "value", "2k2")
    drawer.insert_rows(1, [Row({"kind": "C", "value": "1n", "quantity": "2"}),
                           Row({"kind": "C", "value": "2n2", "quantity": "2"})])
    assert len(drawer) == 3 and drawer.dirty
    drawer.remove_rows([0, 2])
    assert [r.get("value") for r in drawer.rows] == ["1n"]
    drawer.undo()  # one step restores both removed rows
    assert [r.get("value") for r in drawer.rows] == ["2k2", "1n", "2n2"]
    drawer.undo()
    drawer.undo()
    assert [r.get("value") for r in drawer.rows] == ["1k"]
    assert not drawer.dirty
    drawer.redo()
    assert drawer.rows[0].get("value") == "2k2"
    drawer.set_cell(0, "quantity", "4")  # a new edit clears redo
    assert not drawer.can_redo()
    assert events[:2] == ["changed 0 value", "inserted 1 2"]


def _fresh(drawer: Drawer) -> tuple[list[object], dict[int, dict[str, str]]]:
    """The drawer's rows parsed by a new Drawer: nothing kept from earlier parses."""
    copy = Drawer([Row(dict(r.cells), r.line) for r in drawer.rows], drawer.columns)
    return copy.parts(), copy.problems()


def test_an_edit_parses_like_a_fresh_read() -> None:
    # Rows kept from the last parse (same cells, line and place) give what a fresh parse
    # of the edited rows gives, through edits, inserts, removals, undo and redo.
    drawer = Drawer([Row({"kind": "R", "value": v, "quantity": "2", "location": "a"}, k + 2)
                     for k, v in enumerate(["1k", "2k2", "4k7", "bad", "10k"])])
    steps = [lambda: drawer.set_cell(1, "location", "b"),
             lambda: drawer.set_cell(3, "value", "3k3"),
             lambda: drawer.set_cell(0, "kind", "C"),
             lambda: drawer.insert_rows(1, [Row({"kind": "R", "value": "x", "quantity": "1"})]),
             lambda: drawer.remove_rows([0, 2]),
             drawer.undo, drawer.undo, drawer.redo,
             lambda: drawer.set_cell(2, "quantity", "-1")]
    assert (drawer.parts(), drawer.problems()) == _fresh(drawer)
    for step in steps:
        step()
        assert (drawer.parts(), drawer.problems()) == _fresh(drawer)
    assert drawer.problems()  # the bad cells of the last steps are seen


def test_cell_problems_name_the_column() -> None:
    bad = cell_problems(Row({"kind": "C", "value": "10 kV", "quantity": "x"}))
    assert set(bad) == {"value", "quantity"}


_value_text = st.sampled_from(["10k", "4k7", "1M", "220R", "100n", "2n2", "4u7", "104", "47p"])


@settings(max_examples=40, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.tuples(st.sampled_from("RPC"), _value_text, st.integers(0, 500),
                          st.text(alphabet="AB12-, =+@\"", max_size=8)),
                min_size=1, max_size=12))
def test_written_drawer_reads_back_the_same_parts(tmp_path: Path, rows: list) -> None:
    drawer = Drawer([Row({"kind": k, "value": v, "quantity": str(q), "location": loc,
                          "tolerance": "", "note": ""}) for k, v, q, loc in rows])
    good = drawer.parts()
    path = write_drawer(drawer, tmp_path / "prop.csv")
    back = read_drawer(path, strict=False).parts()
    strip = [(p.kind, p.value, p.quantity, p.location, p.tolerance) for p in good]
    assert [(p.kind, p.value, p.quantity, p.location, p.tolerance) for p in back] == strip


def test_a_setting_beside_the_rows_is_undone_in_turn_and_leaves_the_file_clean() -> None:
    drawer = Drawer()
    state = []
    drawer.record_setting("Pin line 5", lambda: state.pop(), lambda: state.append(5))
    assert state == [5] and not drawer.dirty and drawer.undo_text() == "Pin line 5"
    drawer.undo()
    assert state == [] and not drawer.dirty
    drawer.redo()
    assert state == [5] and not drawer.dirty
    drawer.insert_rows(0, [Row({"kind": "R", "value": "10k", "quantity": "1"})])
    assert drawer.dirty  # a row is a change to the file
    drawer.undo()
    assert not drawer.dirty and state == [5]
    drawer.undo()
    assert state == [] and not drawer.dirty
