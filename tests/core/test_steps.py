"""Core fix steps: what each does to a table, its sentence, its JSON form, and row-locality."""

from __future__ import annotations

import datetime as dt
import json

import jsonschema
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from datemend.core.clean import NAIVE, CellState, CleanTable, ParsedColumn
from datemend.core.patterns import PATTERNS
from datemend.core.spec import ParseSpec
from datemend.core.steps import (
    STEP_TYPES,
    ApplyContext,
    BlankTokens,
    DatePart,
    FieldValueError,
    ReadDates,
    RenameColumn,
    SetCell,
    Step,
    manual_value,
    step_from_dict,
)
from datemend.core.table import RawTable

CTX = ApplyContext(today=dt.date(2026, 11, 30))


def _table(parsed_raw: list[object], values: list[str | None], **cols: list[object]) -> CleanTable:
    """A CleanTable whose "Born" column holds ``parsed_raw`` and is already parsed to ``values``
    (ISO text or None = failed). Built by hand, so these tests do not depend on the engine."""
    df = pd.DataFrame({"Member no": [f"M{i + 1}" for i in range(len(values))], **cols})
    df["Born"] = pd.Series(parsed_raw, dtype=object)
    raw = RawTable.from_dataframe(df)
    n = len(values)
    v = np.array([np.datetime64(x, "us") if x else np.datetime64("NaT", "us") for x in values])
    state = np.array([CellState.PARSED if x else CellState.FAILED for x in values], dtype=np.int8)
    pc = ParsedColumn.empty("Born", n).evolve(
        value=v.astype("datetime64[us]"),
        state=state,
        pattern=np.where(state == CellState.PARSED, 0, -1).astype(np.int16),
        patterns=("by-hand-test",),
        has_time=np.array(["T" in (x or "") for x in values]),
    )
    return CleanTable(raw).with_parsed(pc)


# ------------------------------------------------------------------------- blank-tokens

BLANK_CASES = [
    # (raw cell, token list, becomes blank, why)
    ("N/A", ("n/a",), True, "tokens compare case-folded"),
    ("  unknown ", ("Unknown",), True, "tokens compare after trimming"),
    ("n/a.", ("n/a",), False, "a different token is not touched"),
    ("1900-01-01", ("1900-01-01",), True, "a parsed sentinel date can be declared blank"),
    # Python docs, str.casefold: full Unicode case folding, "ß" folds to "ss".
    ("STRASSE", ("straße",), True, "Unicode full case folding: ß folds to ss"),
]


def test_blank_cases_do_not_repeat():
    keys = [(c[0], c[1]) for c in BLANK_CASES]
    assert len(keys) == len(set(keys))


@pytest.mark.parametrize(
    ("raw", "tokens", "blank", "why"), BLANK_CASES, ids=[c[3] for c in BLANK_CASES]
)
def test_blank_tokens(raw, tokens, blank, why):
    parsed = "1900-01-01" if raw == "1900-01-01" else None
    t = _table(["2001-02-03", raw], ["2001-02-03", parsed])
    out = BlankTokens(tokens, ("Born",)).apply(t, CTX).parsed["Born"]
    assert out.state[0] == CellState.PARSED
    assert bool(out.state[1] == CellState.BLANK) is blank
    if blank:
        assert np.isnat(out.value[1]) and out.pattern[1] == -1 and out.reason[1]


def test_blank_tokens_leave_hand_set_cells():
    t = _table(["n/a", "n/a"], [None, None])
    t = SetCell("Born", "M1", "1990-01-01", "Member no").apply(t, CTX)
    out = BlankTokens(("N/A",)).apply(t, CTX).parsed["Born"]
    assert list(out.state) == [CellState.MANUAL, CellState.BLANK]


def test_blank_tokens_on_an_unread_column_warns():
    t = _table(["x"], [None])
    out = BlankTokens(("x",), ("Joined",)).apply(t, CTX)
    assert any('"Joined" is not read as dates' in w for w in out.warnings)


# ----------------------------------------------------------------------------- set-cell

# Python's datetime.fromisoformat and RFC 3339 §5.8 are the reference for the hand-typed values.
MANUAL_CASES = [
    ("1990-05-02", "1990-05-02T00:00:00", NAIVE, False, "a calendar date, no time"),
    ("1996-12-19T16:39:57-08:00", "1996-12-19T16:39:57", -480, True, "RFC 3339 §5.8 offset"),
    ("1937-01-01T12:00:27.870+00:20", "1937-01-01T12:00:27.870", 20, True, "RFC 3339 §5.8"),
    ("0001-01-01", "0001-01-01T00:00:00", NAIVE, False, "year 1 survives (datetime.MINYEAR)"),
    ("9999-12-31T23:59:59", "9999-12-31T23:59:59", NAIVE, True, "year 9999 (datetime.MAXYEAR)"),
]


def test_manual_cases_do_not_repeat():
    assert len({c[0] for c in MANUAL_CASES}) == len(MANUAL_CASES)


@pytest.mark.parametrize(("text", "wall", "offset", "has_time", "why"), MANUAL_CASES)
def test_manual_value(text, wall, offset, has_time, why):
    v, off, t = manual_value(text)
    assert v == np.datetime64(wall, "us")
    assert (off, t) == (offset, has_time)
    ref = dt.datetime.fromisoformat(text) if "T" in text else None
    if ref is not None and ref.utcoffset() is not None:
        assert off == ref.utcoffset().total_seconds() // 60


def test_rfc3339_offset_value_is_the_same_instant():
    # RFC 3339 §5.8: 1996-12-19T16:39:57-08:00 is 1996-12-20T00:39:57Z.
    v, off, _ = manual_value("1996-12-19T16:39:57-08:00")
    assert v - np.timedelta64(off, "m") == np.datetime64("1996-12-20T00:39:57", "us")


# RFC 3339 §5.8's leap second 1990-12-31T23:59:60Z cannot be held by Python's datetime: refused.
@pytest.mark.parametrize(
    "bad", ["2024-02-30", "31/12/2024", "yesterday", "2023-02-29", "1990-12-31T23:59:60Z"]
)
def test_manual_value_refuses_what_is_no_date(bad):
    # 2023 is a common year (calendar.isleap(2023) is False), so 29 February does not exist.
    with pytest.raises(ValueError):
        manual_value(bad)
    with pytest.raises(FieldValueError) as err:
        SetCell("Born", "M1", bad, "Member no")
    assert err.value.field == "value"


def test_set_cell_by_key_follows_the_row():
    t = _table(["garbage", "1970-01-01"], [None, "1970-01-01"])
    step = SetCell("Born", "M1", "1985-04-12", "Member no", raw="garbage")
    out = step.apply(t, CTX)
    pc = out.parsed["Born"]
    assert pc.state[0] == CellState.MANUAL and pc.value[0] == np.datetime64("1985-04-12", "us")
    assert pc.state[1] == CellState.PARSED
    # the same step on the rows in another order still finds M1
    rev = CleanTable(t.raw.take(np.array([1, 0]))).with_parsed(
        _take(t.parsed["Born"], np.array([1, 0]))
    )
    pc2 = step.apply(rev, CTX).parsed["Born"]
    assert pc2.state[1] == CellState.MANUAL and pc2.state[0] == CellState.PARSED


def _take(pc: ParsedColumn, rows: np.ndarray) -> ParsedColumn:
    return pc.evolve(
        value=pc.value[rows],
        offset_min=pc.offset_min[rows],
        has_time=pc.has_time[rows],
        state=pc.state[rows],
        pattern=pc.pattern[rows],
        reason=pc.reason[rows],
    )


def test_set_cell_not_applied_when_the_raw_value_changed():
    t = _table(["corrected 1985-04-13"], [None])
    out = SetCell("Born", "M1", "1985-04-12", "Member no", raw="garbage").apply(t, CTX)
    assert out.parsed["Born"].state[0] == CellState.FAILED
    assert any("raw value changed" in w for w in out.warnings)


def test_set_cell_with_a_gone_key_warns():
    t = _table(["x"], [None])
    out = SetCell("Born", "M9", "1985-04-12", "Member no").apply(t, CTX)
    assert out.parsed["Born"].state[0] == CellState.FAILED
    assert any("key is gone" in w for w in out.warnings)


def test_set_cell_by_row_number_warns_and_uses_source_rows():
    t = _table(["x", "y"], [None, None])
    # header on row 1, so the data rows are source rows 2 and 3
    out = SetCell("Born", "3", None).apply(t, CTX)
    pc = out.parsed["Born"]
    assert list(pc.state) == [CellState.FAILED, CellState.BLANK]
    assert any("found by row number" in w for w in out.warnings)


# --------------------------------------------------------------- date-part, rename-column


def test_date_part_drops_time_and_offset():
    t = _table(["a", "b"], ["2024-03-10T23:30:00", None])
    t = SetCell("Born", "M2", "2024-03-11T00:15:00+05:30", "Member no").apply(t, CTX)
    pc = DatePart("Born").apply(t, CTX).parsed["Born"]
    assert pc.value[0] == np.datetime64("2024-03-10", "us")  # worked by hand: the day as written
    assert pc.value[1] == np.datetime64("2024-03-11", "us")
    assert not pc.has_time.any() and (pc.offset_min == NAIVE).all() and pc.date_only
    assert pc.state[1] == CellState.MANUAL


def test_date_part_before_1970_floors_to_the_day():
    # numpy datetime64 casts floor (not truncate toward the epoch): checked against
    # datetime.datetime(1969, 12, 31, 23, 0).date() == date(1969, 12, 31) from Python's datetime
    t = _table(["a"], ["1969-12-31T23:00:00"])
    pc = DatePart("Born").apply(t, CTX).parsed["Born"]
    ref = dt.datetime(1969, 12, 31, 23, 0).date()
    assert pc.value[0] == np.datetime64(ref.isoformat(), "us")


def test_rename_column_and_refusal_of_a_taken_name():
    t = _table(["2001-02-03"], ["2001-02-03"], Name=["Ann"])
    out = RenameColumn("Born", "Date of birth").apply(t, CTX)
    assert list(out.to_dataframe().columns) == ["Member no", "Name", "Date of birth"]
    clash = RenameColumn("Born", "Name").apply(t, CTX)
    assert clash.parsed["Born"].output_name == "Born"
    assert any('"Name" is already a column' in w for w in clash.warnings)


# ---------------------------------------------------------------------------- read-dates


def test_read_dates_uses_the_engine_suggestion():
    from datemend.core.infer import scan_column

    raw = RawTable.from_dataframe(pd.DataFrame({"Joined": ["2024-01-31", "2023-12-01", "soon"]}))
    best = scan_column(raw.column("Joined")).best
    assert best is not None
    out = ReadDates("Joined", best.spec, best.label).apply(CleanTable(raw), CTX)
    pc = out.parsed["Joined"]
    assert pc.value[0] == np.datetime64("2024-01-31", "us")
    assert pc.value[1] == np.datetime64("2023-12-01", "us")
    assert pc.state[2] == CellState.FAILED


def test_sentences_are_one_sentence():
    spec = ParseSpec(patterns=("num-slash",), day_order="dmy")
    steps: list[Step] = [
        ReadDates("Born", spec, "D/M/YYYY 100%"),
        BlankTokens(("n/a", "-")),
        SetCell("Born", "M1", "1990-05-02", "Member no"),
        SetCell("Born", "12", None),
        DatePart("Born"),
        RenameColumn("Born", "Date of birth"),
    ]
    for s in steps:
        text = s.describe()
        assert text.endswith(".") and text.count(". ") == 0 and text[0].isupper(), text
    assert "day before month" in steps[0].describe()
    assert "row 12" in steps[3].describe()


# ------------------------------------------------------------------------ JSON round trip

_names = st.text(st.characters(codec="utf-8", exclude_categories=("Cs",)), min_size=1, max_size=12)
_pattern_ids = st.sampled_from(sorted(PATTERNS))
_spec = st.builds(
    ParseSpec,
    patterns=st.lists(_pattern_ids, max_size=4).map(tuple),
    day_order=st.sampled_from(["dmy", "mdy", None]),
    century=st.just("posix"),
    date_system=st.sampled_from([1900, 1904]),
    zone=st.sampled_from([None, "UTC", "Europe/Paris"]),
    blank_tokens=st.lists(_names, max_size=3).map(tuple),
    locales=st.lists(st.sampled_from(["en", "fr", "de"]), min_size=1, max_size=3).map(tuple),
)
_past_spec = st.builds(
    ParseSpec,
    patterns=st.lists(_pattern_ids, min_size=1, max_size=3).map(tuple),
    century=st.just("past"),
    pivot_year=st.integers(1, 9999),
)
_when = st.one_of(
    st.dates().map(dt.date.isoformat),
    st.datetimes(timezones=st.sampled_from([dt.UTC, dt.timezone(dt.timedelta(hours=-8))])).map(
        lambda d: d.isoformat()
    ),
    st.datetimes().map(lambda d: d.isoformat()),
    st.none(),
)
_keyed = st.builds(
    SetCell,
    column=_names,
    key=_names,
    value=_when,
    key_column=_names,
    raw=st.none() | _names,
    note=st.text(max_size=20),
)
_by_row = st.builds(
    SetCell, column=_names, key=st.integers(2, 10**6).map(str), value=_when, key_column=st.none()
)
STEPS = st.one_of(
    st.builds(ReadDates, column=_names, spec=_spec | _past_spec, label=st.text(max_size=30)),
    st.builds(
        BlankTokens,
        tokens=st.lists(_names, min_size=1, max_size=4).map(tuple),
        columns=st.lists(_names, max_size=3).map(tuple),
    ),
    _keyed,
    _by_row,
    st.builds(DatePart, column=_names),
    st.builds(RenameColumn, column=_names, name=_names.filter(lambda s: s.strip() != "")),
)


@settings(max_examples=150, deadline=None)
@given(STEPS)
def test_every_step_round_trips_through_json(step):
    d = step.to_dict()
    text = json.dumps(d)  # JSON values only: json.dumps raises on anything else
    back = json.loads(text)
    jsonschema.Draft202012Validator(type(step).schema()).validate(back)
    again = step_from_dict(back)
    assert again == step and type(again) is type(step)
    assert again.to_dict() == d


def test_core_kinds_are_registered_under_their_names():
    for cls in (ReadDates, BlankTokens, SetCell, DatePart, RenameColumn):
        assert STEP_TYPES[cls.kind] is cls
    with pytest.raises(KeyError):
        step_from_dict({"kind": "no-such-kind"})


def test_schema_refuses_unknown_fields_and_wrong_types():
    sch = SetCell.schema()
    v = jsonschema.Draft202012Validator(sch)
    ok = SetCell("Born", "M1", "1990-01-01", "Member no").to_dict()
    assert v.is_valid(ok)
    assert not v.is_valid({**ok, "colour": "red"})
    assert not v.is_valid({**ok, "key": 5})
    assert not v.is_valid({k: x for k, x in ok.items() if k != "column"})
    assert not v.is_valid({**ok, "kind": "date-part"})


# ------------------------------------------------------------------------- row-locality

_ROWS = 12


def _partition_table() -> CleanTable:
    values = ["2001-02-03", "n/a", None, "1999-12-31T23:00:00", "-", "2010-10-10"] * 2
    raw_cells = [v or f"junk{i}" for i, v in enumerate(values)]
    return _table(raw_cells, [v if v not in ("n/a", "-") else None for v in values])


LOCAL_STEPS: list[Step] = [
    BlankTokens(("N/A", "-")),
    SetCell("Born", "M3", "1980-01-01", "Member no", raw="junk2"),
    SetCell("Born", "9", "1981-01-01"),
    DatePart("Born"),
    RenameColumn("Born", "Date of birth"),
]


@settings(max_examples=40, deadline=None)
@given(st.sets(st.integers(0, _ROWS - 1), min_size=1).map(sorted))
def test_steps_are_row_local(rows):
    """Applying to a partition gives the partition of the full result."""
    full = _partition_table()
    rows = np.array(rows)
    part = CleanTable(full.raw.take(rows)).with_parsed(_take(full.parsed["Born"], rows))
    for s in LOCAL_STEPS:
        full = s.apply(full, CTX)
        part = s.apply(part, CTX)
    a, b = _take(full.parsed["Born"], rows), part.parsed["Born"]
    assert np.array_equal(a.value, b.value, equal_nan=True)
    for name in ("state", "offset_min", "has_time", "pattern"):
        assert np.array_equal(getattr(a, name), getattr(b, name)), name
    assert list(a.reason) == list(b.reason)
    assert a.output_name == b.output_name


@pytest.mark.parametrize(
    ("spec", "field"),
    [
        (ParseSpec(patterns=("no-such-pattern",)), "spec.patterns"),
        (ParseSpec(patterns=("iso-date",), zone="Mars/Olympus"), "spec.zone"),
        (ParseSpec(patterns=("iso-date",), zone="../../etc/passwd"), "spec.zone"),
        (
            ParseSpec(patterns=("iso-date",), zone="UTC", naive_zone="Nowhere/At_All"),
            "spec.naive_zone",
        ),
    ],
)
def test_read_dates_refuses_unknown_patterns_and_zones(spec, field):
    # zoneinfo (with tzdata, the IANA database) is the reference for zone names
    with pytest.raises(FieldValueError) as err:
        ReadDates("Born", spec)
    assert err.value.field == field
