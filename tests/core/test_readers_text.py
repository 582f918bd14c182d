"""CSV/TSV/TXT reader: encodings, delimiters, values exactly as written, rows, headers.

Expected values are written by hand beside each input; the encodings' byte sequences come from
Python's own codecs (the reference for what each encoding means).
"""

import codecs
import hashlib

import numpy as np
import pytest

from datemend.core.readers import detect_text_format, read_table
from datemend.core.table import CellKind, ReadError

TEXT = "Member no;Name;Notes\n0012;Zoë Quillanby;café “first” outing — €5\n7;Brünnhild-ish;naïve\n"


def _write(tmp_path, name, data: bytes):
    p = tmp_path / name
    p.write_bytes(data)
    return p


ENCODINGS = [
    # (label, bytes, expected encoding name, why)
    ("utf8", TEXT.encode("utf-8"), "utf-8", "valid UTF-8 without a BOM"),
    ("utf8sig", codecs.BOM_UTF8 + TEXT.encode("utf-8"), "utf-8-sig", "UTF-8 BOM EF BB BF"),
    ("utf16le", codecs.BOM_UTF16_LE + TEXT.encode("utf-16-le"), "utf-16-le", "BOM FF FE"),
    ("utf16be", codecs.BOM_UTF16_BE + TEXT.encode("utf-16-be"), "utf-16-be", "BOM FE FF"),
    ("cp1252", TEXT.encode("cp1252"), "windows-1252", "curly quotes and € only exist in cp1252"),
]


def test_encoding_table_has_no_repeats():
    assert len({e[0] for e in ENCODINGS}) == len(ENCODINGS)


@pytest.mark.parametrize(
    ("label", "data", "expected", "why"), ENCODINGS, ids=[e[0] for e in ENCODINGS]
)
def test_encoding_detected_and_text_decoded(tmp_path, label, data, expected, why):
    t = read_table(_write(tmp_path, f"{label}.csv", data))
    assert t.facts.encoding == expected, why
    assert t.names == ["Member no", "Name", "Notes"]
    assert list(t.column("Name").values) == ["Zoë Quillanby", "Brünnhild-ish"]
    assert t.column("Notes").values[0] == "café “first” outing — €5"
    assert t.facts.delimiter == ";"


def test_latin1_bytes_outside_cp1252_read_as_latin1(tmp_path):
    # 0x8D is undefined in Windows-1252 (Python's cp1252 codec refuses it) but is a C1 control
    # in ISO-8859-1, so only Latin-1 decodes this file.
    data = "a;b\n1;Zoë\x8d\n".encode("latin-1")
    with pytest.raises(UnicodeDecodeError):
        data.decode("cp1252")
    t = read_table(_write(tmp_path, "l1.csv", data))
    assert t.facts.encoding == "iso-8859-1"
    assert t.column("b").values[0] == "Zoë\x8d"


def test_plain_latin1_text_decodes_identically(tmp_path):
    # Without bytes 0x80-0x9F, Latin-1 and Windows-1252 decode the same; either name is right.
    data = "a;b\n1;Zoë Müller-ish\n".encode("latin-1")
    t = read_table(_write(tmp_path, "l1b.csv", data))
    assert t.facts.encoding in {"windows-1252", "iso-8859-1"}
    assert t.column("b").values[0] == "Zoë Müller-ish"


DELIMS = [
    (",", 'a,b,c\n1,"x;y|z",3\n4,"t\tu",6\n', "comma; other delimiters inside quotes"),
    (";", 'a;b;c\n1;"x,y";3\n4;5,5;6\n', "semicolon; commas inside values"),
    ("\t", "a\tb\tc\n1\tx,y;z\t3\n4\t5\t6\n", "tab"),
    ("|", "a|b|c\n1|x,y|3\n4|5;5|6\n", "vertical bar"),
]


@pytest.mark.parametrize(("delim", "text", "why"), DELIMS, ids=["comma", "semi", "tab", "bar"])
def test_delimiter_detected(tmp_path, delim, text, why):
    t = read_table(_write(tmp_path, "d.txt", text.encode()))
    assert t.facts.delimiter == delim, why
    assert t.names == ["a", "b", "c"]
    assert t.n_rows == 2
    assert detect_text_format(str(tmp_path / "d.txt")).delimiter == delim


def test_delimiter_table_has_no_repeats():
    assert len({d[0] for d in DELIMS}) == len(DELIMS)


def test_values_exactly_as_written(tmp_path):
    text = "v\n0012\n1e5\nNA\nnull\n2026-10-03\n  padded \nTRUE\n-0\n1,5\n"
    t = read_table(_write(tmp_path, "v.csv", text.encode()))
    col = t.column("v")
    # every cell is text, nothing coerced (hand-written expectation)
    assert list(col.values) == [
        "0012", "1e5", "NA", "null", "2026-10-03", "  padded ", "TRUE", "-0", "1,5"
    ]  # fmt: skip
    assert set(col.kinds.tolist()) == {CellKind.TEXT}


def test_empty_cells_are_empty_kind(tmp_path):
    t = read_table(_write(tmp_path, "e.csv", b"a,b\n1,\n,2\n3,  \n"))
    assert list(t.column("a").values) == ["1", None, "3"]
    assert list(t.column("b").kinds) == [CellKind.EMPTY, CellKind.TEXT, CellKind.EMPTY]


def test_source_rows_are_real_line_numbers(tmp_path):
    text = 'a,b\n1,x\n2,"two\nlines"\n3,y\n\n4,z\n'
    t = read_table(_write(tmp_path, "r.csv", text.encode()))
    # line 1 header; record "2" spans lines 3-4; line 6 is blank; "4" is on line 7
    assert list(t.column("a").values) == ["1", "2", "3", None, "4"]
    assert t.source_rows.tolist() == [2, 3, 5, 6, 7]
    assert t.column("b").values[1] == "two\nlines"


def test_mixed_line_endings(tmp_path):
    t = read_table(_write(tmp_path, "m.csv", b"a,b\r\n1,2\n3,4\r5,6\r\n"))
    assert list(t.column("a").values) == ["1", "3", "5"]
    assert t.source_rows.tolist() == [2, 3, 4]


def test_ragged_rows_padded_with_empty(tmp_path):
    t = read_table(_write(tmp_path, "g.csv", b"a,b,c\n1,2\n3,4,5\n6\n"))
    assert t.names == ["a", "b", "c"]
    assert list(t.column("c").values) == [None, "5", None]
    assert t.source_rows.tolist() == [2, 3, 4]


def test_header_skips_a_title_row_and_can_be_chosen(tmp_path):
    p = _write(tmp_path, "h.csv", b"\n\nExport of 2026-10,,\nNo,Name,Born\n1,Ada,x\n")
    t = read_table(p)
    # by hand: line 3 fills 1 of 3 cells (a title), line 4 fills all 3: the header
    assert t.facts.header_row == 4
    assert t.names == ["No", "Name", "Born"]
    assert any("like a title" in n for n in t.facts.notes)
    t1 = read_table(p, header_row=3)  # a chosen header row is taken as it is
    assert t1.names[0] == "Export of 2026-10"
    assert t1.facts.header_row == 3
    t2 = read_table(p, header_row=4)
    assert t2.names == ["No", "Name", "Born"]
    assert t2.facts.header_row == 4
    assert t2.source_rows.tolist() == [5]
    assert any("above the header" in n for n in t2.facts.notes)


def test_blank_and_duplicate_headers_renamed_with_note(tmp_path):
    t = read_table(_write(tmp_path, "dup.csv", b"Date,,Date,Date (2)\n1,2,3,4\n"))
    assert t.names == ["Date", "column 2", "Date (3)", "Date (2)"]
    notes = " ".join(t.facts.notes)
    assert "no header" in notes
    assert "Duplicate" in notes


def test_header_only_file_has_no_rows(tmp_path):
    t = read_table(_write(tmp_path, "ho.csv", b"a;b;c\n"))
    assert t.names == ["a", "b", "c"]
    assert t.n_rows == 0


def test_tsv_extension_and_sha256(tmp_path):
    data = b"a\tb\n1\t2\n"
    p = _write(tmp_path, "x.tsv", data)
    t = read_table(p)
    assert t.facts.delimiter == "\t"
    assert t.facts.format == "csv"
    assert t.facts.sha256 == hashlib.sha256(data).hexdigest()  # reference: hashlib


def test_one_column_file(tmp_path):
    t = read_table(_write(tmp_path, "one.csv", b"Born\n03/04/1990\n\n1990-04-03\n"))
    assert t.names == ["Born"]
    assert list(t.column("Born").values) == ["03/04/1990", None, "1990-04-03"]


def test_nul_bytes_kept(tmp_path):
    t = read_table(_write(tmp_path, "nul.csv", b"a,b\n1,x\x00y\n"))
    assert t.column("b").values[0] == "x\x00y"


@pytest.mark.parametrize(
    ("name", "data", "fragment"),
    [
        ("empty.csv", b"", "empty"),
        ("blank.csv", b"\n\n  \n", "no text"),
        ("bom.csv", codecs.BOM_UTF8, "no text"),
        ("badbom.csv", codecs.BOM_UTF8 + b"a,\xff\xfe\n", "byte-order mark"),
    ],
)
def test_unreadable_text_files(tmp_path, name, data, fragment):
    with pytest.raises(ReadError) as err:
        read_table(_write(tmp_path, name, data))
    assert name in str(err.value)
    assert fragment in str(err.value)


def test_header_row_past_end(tmp_path):
    p = _write(tmp_path, "short.csv", b"a\n1\n")
    with pytest.raises(ReadError, match=r"short\.csv.*last row is 2|Header row 9 is past"):
        read_table(p, header_row=9)


def test_many_rows_read_vectorised(tmp_path):
    n = 50_000
    body = "".join(f"{i:05d},{i % 28 + 1:02d}/03/2026\n" for i in range(n))
    t = read_table(_write(tmp_path, "big.csv", ("no,date\n" + body).encode()))
    assert t.n_rows == n
    assert t.column("no").values[12] == "00012"
    assert np.array_equal(t.source_rows, np.arange(2, n + 2))
