"""A save writes back, byte for byte, what Tickbin does not interpret (issue 10): the
encoding, BOM, line endings, header spelling, spacing, quoting, unknown columns and
comment lines; only edited cells change.

Encodings: Windows-1252 leaves 0x81, 0x8D, 0x8F, 0x90 and 0x9D undefined (the
code page's published table, unicode.org MAPPINGS/VENDORS/MICSFT/WINDOWS/CP1252.TXT);
those bytes must still come back unchanged. UTF-8 and its BOM: RFC 3629.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.errors import DrawerFileError
from core.parts.drawer import Row
from core.parts.drawer_file import (
    drawer_csv_text,
    drawer_file_text,
    parse_drawer_text,
    read_drawer,
    write_drawer,
)
from core.parts.file_layout import decode

# A drawer as a German spreadsheet on Windows saves it: cp1252, semicolons, CRLF, its own
# header spelling, an unknown column, comments, blank lines, spaces, quotes and the bytes
# cp1252 leaves undefined (0x81 and 0x8D inside a location).
CP1252 = (b"# Schrank 3, oben\r\n"
          b"Kind; Value ;Qty;Location;Price\r\n"
          b"R; 4k7 ;3;Fach \x81\x8d \xe4;-0.10\r\n"
          b"\r\n"
          b"# Kondensatoren\r\n"
          b'C;"100n";2;"B2; hinten";=A1*2\r\n'
          b"R;10k;5;A\xb5;  0,35 \r\n")

UTF8_BOM = ("\ufeffkind,value,quantity,location,Price\r\n"
            "R,4k7,3,Schublade ä 5 Ω,-0.10\r\n"
            "C,100n,2,B2,'=1+2\r\n").encode("utf-8")

NO_FINAL_NEWLINE = b"kind,value,quantity\nR,1k,1\n# last line\nC,1n,4"


def _save_unchanged(path: Path) -> bytes:
    drawer = read_drawer(path, strict=False)
    drawer.set_cell(0, "quantity", "99")
    drawer.undo()  # edited and edited back: the text is what was read
    write_drawer(drawer)
    return path.read_bytes()


@pytest.mark.parametrize("data", [CP1252, UTF8_BOM, NO_FINAL_NEWLINE],
                         ids=["cp1252-crlf", "utf8-bom", "no-final-newline"])
def test_unchanged_drawer_is_written_back_byte_for_byte(tmp_path, data):
    path = tmp_path / "d.csv"
    path.write_bytes(data)
    assert _save_unchanged(path) == data
    assert (tmp_path / "d.csv.bak").read_bytes() == data


def test_only_the_edited_cell_changes(tmp_path):
    path = tmp_path / "d.csv"
    path.write_bytes(CP1252)
    drawer = read_drawer(path)
    assert drawer.rows[0].get("location") == "Fach \x81\x8d ä"  # nothing replaced by U+FFFD
    assert drawer.rows[0].get("price") == "-0.10"
    drawer.set_cell(1, "quantity", "1")              # C 100n: 2 -> 1
    drawer.set_cell(2, "location", "Fach für µ")     # needs cp1252's ü and µ
    write_drawer(drawer)
    expected = (CP1252.replace(b'C;"100n";2;', b'C;"100n";1;')
                .replace(b"R;10k;5;A\xb5;", "R;10k;5;Fach für µ;".encode("cp1252")))
    assert path.read_bytes() == expected


def test_rows_added_and_deleted_keep_comments_and_line_style(tmp_path):
    path = tmp_path / "d.csv"
    path.write_bytes(CP1252)
    drawer = read_drawer(path)
    drawer.remove_rows([1])  # the C line: its comment stays, before the next line
    drawer.insert_rows(len(drawer.rows), [Row({"kind": "P", "value": "10k",
                                               "quantity": "1", "location": "Dose"})])
    write_drawer(drawer)
    data = path.read_bytes()
    assert data == (CP1252.replace(b'C;"100n";2;"B2; hinten";=A1*2\r\n', b"")
                    + b"P;10k;1;Dose;\r\n")
    again = read_drawer(path)  # the rows' lines were updated for the next messages
    assert [r.line for r in again.rows] == [r.line for r in drawer.rows] == [3, 6, 7]


def test_a_line_without_final_newline_gets_one_before_a_new_row(tmp_path):
    path = tmp_path / "d.csv"
    path.write_bytes(NO_FINAL_NEWLINE)
    drawer = read_drawer(path)
    drawer.insert_rows(2, [Row({"kind": "R", "value": "2k", "quantity": "3"})])
    write_drawer(drawer)
    assert path.read_bytes() == NO_FINAL_NEWLINE + b"\nR,2k,3\n"


def test_a_new_column_is_added_to_the_header_only_where_needed(tmp_path):
    path = tmp_path / "d.csv"
    path.write_bytes(UTF8_BOM)
    drawer = read_drawer(path)
    drawer.set_cell(1, "dielectric", "C0G")
    write_drawer(drawer)
    lines = path.read_bytes().split(b"\r\n")
    assert lines[0] == "\ufeffkind,value,quantity,location,Price,dielectric".encode()
    assert lines[1] == "R,4k7,3,Schublade ä 5 Ω,-0.10".encode()  # untouched
    assert lines[2] == b"C,100n,2,B2,'=1+2,C0G"


def test_formulas_stay_as_typed_in_the_own_file_and_are_neutralised_on_export(tmp_path):
    # OWASP "CSV injection": the prefix belongs in files made for spreadsheets.
    path = tmp_path / "d.csv"
    path.write_bytes(UTF8_BOM)
    drawer = read_drawer(path)
    drawer.set_cell(0, "note", "=SUM(A1)")
    write_drawer(drawer)
    assert b",-0.10," in path.read_bytes() and b"=SUM(A1)" in path.read_bytes()
    assert b"'=SUM(A1)" not in path.read_bytes()
    assert "'=SUM(A1)" in drawer_csv_text(drawer) and "'-0.10" in drawer_csv_text(drawer)


def test_a_character_cp1252_lacks_makes_the_file_utf8_with_a_bom(tmp_path):
    path = tmp_path / "d.csv"
    path.write_bytes(CP1252)
    drawer = read_drawer(path)
    drawer.set_cell(0, "note", "10 kΩ")  # Ω (U+03A9) is not in cp1252
    write_drawer(drawer)
    data = path.read_bytes()
    assert data.startswith(b"\xef\xbb\xbf")
    assert read_drawer(path).rows[0].get("location") == "Fach \x81\x8d ä"


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.sampled_from([b"kind,value,quantity\r\n", b"R,1k,2\n", b"C; 1n ;3\r",
                                 b"# note \x81\n", b"\n", b'"R","4k7",1\n', b" ,,\n",
                                 b"\xef\xbb\xbf", b"p,1k,0", b'R,"a\nb",1\n', b"\x8d\xe4",
                                 b"R,1k,1,,\n", "µ,Ω".encode(), b"\t", b";"]),
                max_size=12))
def test_any_readable_file_is_written_back_unchanged(data):
    blob = b"".join(data)
    try:
        drawer = parse_drawer_text(decode(blob), "fuzz.csv")
    except DrawerFileError:
        return
    from core.parts.file_layout import encoding_of

    assert drawer.layout is not None
    drawer.layout.encoding = encoding_of(blob)
    text, layout, _ = drawer_file_text(drawer)
    assert text.encode(layout.encoding, errors="tickbin-keep-byte") == blob


def test_a_short_row_keeps_its_spacing_when_a_missing_cell_is_filled(tmp_path):
    path = tmp_path / "d.csv"
    path.write_bytes(b"kind,value,quantity,location\nR, 1k ,1\n")
    drawer = read_drawer(path)
    drawer.set_cell(0, "location", "A1")
    write_drawer(drawer)
    assert path.read_bytes() == b"kind,value,quantity,location\nR, 1k ,1,A1\n"
