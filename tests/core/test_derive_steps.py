"""Derived-column steps on a CleanTable: which cells count, reference dates, warnings, JSON
forms checked by the schema, dialog parameters and preview. Expected values by hand."""

from __future__ import annotations

import dataclasses
import datetime as dt
import json

import jsonschema
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from datemend.core import derive
from datemend.core.checks import NotAfter, NotAfterColumn, WithinRange
from datemend.core.clean import NAIVE, CellState, CleanTable, ParsedColumn
from datemend.core.derive import (
    AGE_CAUTION,
    Age,
    BusinessDays,
    CalendarPart,
    ConvertZone,
    Span,
    Tenure,
    date_series,
    parameters,
    preview,
)
from datemend.core.steps import STEP_TYPES, ApplyContext, FieldValueError, step_from_dict
from datemend.core.table import RawTable

CTX = ApplyContext(today=dt.date(2026, 11, 30))


def make_table(cols: dict[str, list[str | None]], states: dict[str, list[int]] | None = None):
    """A CleanTable whose columns are all parsed: ISO text in, PARSED where a value is given."""
    raw = RawTable.from_dataframe(pd.DataFrame(cols), text_only=True)
    parsed = {}
    for name, vals in cols.items():
        v = np.array(
            [np.datetime64("NaT") if x is None else np.datetime64(x, "us") for x in vals],
            dtype="datetime64[us]",
        )
        st = np.where(np.isnat(v), CellState.BLANK, CellState.PARSED).astype(np.int8)
        if states and name in states:
            st = np.array(states[name], dtype=np.int8)
        n = len(vals)
        parsed[name] = ParsedColumn(
            source=name,
            value=v,
            offset_min=np.full(n, NAIVE, np.int32),
            has_time=np.zeros(n, bool),
            state=st,
            pattern=np.zeros(n, np.int16),
            patterns=("%Y-%m-%d",),
            reason=np.full(n, None, object),
        )
    return CleanTable(raw, parsed)


MEMBERS = {
    "Born": ["2000-02-29", "1990-12-01", None, "1985-11-30", "2010-06-15"],
    "Joined": ["2020-01-31", "2026-02-28", "2024-05-05", "1984-01-01", "2026-11-30"],
    "Last outing": ["2026-02-28", "2026-11-29", "2026-06-06", "2026-01-01", "2026-11-01"],
}


def test_age_fixed_date_replay_day_and_column():
    t = make_table(MEMBERS)
    fixed = Age(birth="Born", as_of="2023-02-28").apply(t, CTX)
    # by hand: 29 Feb 2000 → 28 Feb 2023 is 22 (mar1); 1 Dec 1990 → 32; blank → NA;
    # 30 Nov 1985 → 37 (on the birthday); 15 Jun 2010 → 12
    assert fixed.derived["Age (Born)"].values.tolist() == [22, 32, pd.NA, 37, 12]
    replay = Age(birth="Born", output="Age").apply(t, CTX)  # today = 2026-11-30
    assert replay.derived["Age"].values.tolist() == [26, 35, pd.NA, 41, 16]
    by_col = Age(birth="Born", as_of=None, as_of_column="Joined").apply(t, CTX)
    # 2000-02-29 → 2020-01-31: 19; 1990-12-01 → 2026-02-28: 35; 1985-11-30 → 1984-01-01: -1
    assert by_col.derived["Age (Born)"].values.tolist() == [19, 35, pd.NA, -1, 16]
    assert by_col.derived["Age (Born)"].note == AGE_CAUTION
    assert "local law" in AGE_CAUTION and "verify" in AGE_CAUTION


def test_reference_column_wins_over_a_date():
    step = Age(birth="B", as_of="replay-day", as_of_column="C")
    assert step.as_of is None and step.to_dict()["as_of"] is None
    assert Age.from_dict(step.to_dict()) == step


def test_age_default_policy_is_mar1_and_stated():
    assert Age(birth="Born").leap_day == "mar1"
    assert "1 March" in Age(birth="Born").describe()
    assert "28 February" in Age(birth="Born", leap_day="feb28").describe()
    leap = next(p for p in parameters(Age) if p["name"] == "leap_day")
    assert leap["default"] == "mar1" and "default" in leap["help"]
    assert leap["choice_labels"]["mar1"] == "1 March (default)"


def test_age_ignores_time_of_day():
    t = make_table({"Born": ["2000-11-30T23:00"], "Ref": ["2026-11-30T01:00"]})
    out = Age(birth="Born", as_of=None, as_of_column="Ref").apply(t, CTX)
    assert out.derived["Age (Born)"].values.tolist() == [26]  # birthday reached that day


def test_only_parsed_and_manual_cells_count():
    states = {"Born": [CellState.PARSED, CellState.MANUAL, CellState.FAILED, CellState.AMBIGUOUS,
                       CellState.BLANK]}  # fmt: skip
    cols = {"Born": ["2000-01-01"] * 5}
    s = date_series(make_table(cols, states), "Born")
    assert s.isna().tolist() == [False, False, True, True, True]


def test_date_only_column_is_cut_to_midnight():
    t = make_table({"A": ["2026-01-05T18:00"], "B": ["2026-02-05T09:00"]})
    assert Span(start="A", end="B", unit="months").apply(t, CTX).derived[
        "A to B (months)"
    ].values.tolist() == [0]
    pa = t.parsed["A"].evolve(date_only=True)
    t2 = t.with_parsed(pa)
    assert date_series(t2, "A").tolist() == [pd.Timestamp("2026-01-05")]
    assert Span(start="A", end="B", unit="months").apply(t2, CTX).derived[
        "A to B (months)"
    ].values.tolist() == [1]


def test_tenure_and_spans():
    t = make_table(MEMBERS)
    ten = Tenure(start="Joined", as_of=None, as_of_column="Last outing").apply(t, CTX)
    # 31 Jan 2020 → 28 Feb 2026: 73 (month end clamps); 28 Feb → 29 Nov 2026: 9;
    # 5 May 2024 → 6 Jun 2026: 25; 1 Jan 1984 → 1 Jan 2026: 504; 30 Nov → 1 Nov 2026: 0
    assert ten.derived["Months since Joined"].values.tolist() == [73, 9, 25, 504, 0]
    days = Span(start="Joined", end="Last outing", output="Days").apply(t, CTX)
    assert days.derived["Days"].values.tolist()[-1] == -29
    assert str(days.derived["Days"].values.dtype) == "Int64"


def test_derived_column_can_feed_another_step():
    t = make_table(MEMBERS)
    t = CalendarPart(column="Joined", part="date", output="Joined day").apply(t, CTX)
    out = CalendarPart(column="Joined day", part="iso-week").apply(t, CTX)
    # 2020-01-31 is in ISO week 5 (Friday); 2026-11-30 is the Monday of week 49 (isocalendar)
    assert out.derived["Joined day (iso-week)"].values.tolist()[0] == 5
    assert out.derived["Joined day (iso-week)"].values.tolist()[-1] == 49


def test_month_names_and_fiscal_year_through_steps():
    t = make_table(MEMBERS)
    out = CalendarPart(column="Joined", part="month-name", locale="fr").apply(t, CTX)
    assert out.derived["Joined (month-name)"].values.tolist()[:2] == ["janvier", "février"]
    assert str(out.derived["Joined (month-name)"].values.dtype) == "string"
    fy = CalendarPart(column="Joined", part="fiscal-year", fiscal_start=7).apply(t, CTX)
    # July start, named by the end year: Jan 2020 → 2020; Feb 2026 → 2026; May 2024 → 2024;
    # Jan 1984 → 1984; Nov 2026 → 2027
    assert fy.derived["Joined (fiscal-year)"].values.tolist() == [2020, 2026, 2024, 1984, 2027]
    assert (
        "named by the year in which they end"
        in CalendarPart(column="J", part="fiscal-year", fiscal_start=7).describe()
    )


def test_business_days_step_with_country_and_outside_years():
    t = make_table({"From": ["2026-12-21", "1850-01-01"], "To": ["2026-12-28", "1850-02-01"]})
    out = BusinessDays(start="From", end="To", country="GB").apply(t, CTX)
    # 21–28 Dec 2026: Mon–Fri 21–25 minus Christmas (holidays package, GB) = 4; 1850 → NA
    assert out.derived["Business days From to To"].values.tolist() == [4, pd.NA]
    assert any("outside 1900–2199" in w for w in out.warnings)
    plain = BusinessDays(start="From", end="To").apply(t, CTX)
    assert plain.derived["Business days From to To"].values.tolist() == [5, 23]


def test_missing_column_and_name_clash_warn_instead_of_failing():
    t = make_table(MEMBERS)
    out = Span(start="Joined", end="Gone").apply(t, CTX)
    assert out.derived == {}
    assert any('"Gone"' in w for w in out.warnings)
    clash = Span(start="Joined", end="Born", output="Born").apply(t, CTX)
    assert "Born" not in clash.derived
    assert any("already" in w or "has that name" in w for w in clash.warnings)
    text = make_table({"A": ["2026-01-01"]})
    text = text.evolve(derived={"Words": derive.DerivedColumn("Words", pd.Series(["x"]))})
    out = CalendarPart(column="Words", part="year").apply(text, CTX)
    assert any("not dates" in w for w in out.warnings)


INVALID = [
    # (kind class, fields, field named, why)
    (Age, {"birth": "B", "as_of": "30/11/2026"}, "as_of", "not YYYY-MM-DD"),
    (Age, {"birth": "B", "as_of": None}, "as_of", "no reference at all"),
    (Tenure, {"start": "B", "as_of": "2026-02-30"}, "as_of", "no such day"),
    (CalendarPart, {"column": "B", "fiscal_start": 13}, "fiscal_start", "month 13"),
    (CalendarPart, {"column": "B", "locale": "xx_YY"}, "locale", "unknown locale"),
    (BusinessDays, {"start": "A", "end": "B", "weekmask": "0000000"}, "weekmask", "no workday"),
    (BusinessDays, {"start": "A", "end": "B", "subdiv": "BY"}, "subdiv", "no country"),
    (ConvertZone, {"column": "A", "zone": "Mars/Olympus"}, "zone", "unknown zone"),
    (WithinRange, {"column": "A"}, "earliest", "no bounds"),
    (WithinRange, {"column": "A", "earliest": "2026-02-01", "latest": "2026-01-01"}, "latest",
     "reversed bounds"),
    (NotAfter, {"column": "A", "as_of": "tomorrow"}, "as_of", "not a date"),
]  # fmt: skip


@pytest.mark.parametrize(("cls", "fields", "name", "why"), INVALID)
def test_invalid_fields_name_the_field(cls, fields, name, why):
    with pytest.raises(FieldValueError) as err:
        cls(**fields)
    assert err.value.field == name, why


EXAMPLES = [
    Span(start="Joined", end="Last outing", unit="years", output="Years"),
    Age(birth="Born", as_of="2026-11-30", leap_day="feb28"),
    Age(birth="Born", as_of=None, as_of_column="Joined"),
    Tenure(start="Joined"),
    CalendarPart(column="Born", part="fiscal-quarter", fiscal_start=4, fiscal_label="start"),
    BusinessDays(
        start="Joined",
        end="Last outing",
        country="DE",
        subdiv="BY",
        holidays=(dt.date(2026, 12, 24),),
        include_end=True,
    ),
    ConvertZone(column="Joined", zone="Europe/Paris", naive_zone="UTC"),
    WithinRange(column="Born", earliest="1900-01-01", latest="2026-12-31", label="Born range"),
    NotAfter(column="Joined"),
    NotAfterColumn(first="Born", second="Joined", strict=True),
]


@pytest.mark.parametrize("step", EXAMPLES, ids=lambda s: s.kind)
def test_json_round_trip_and_schema(step):
    d = json.loads(json.dumps(step.to_dict()))
    assert STEP_TYPES[d["kind"]] is type(step)
    jsonschema.Draft202012Validator(type(step).schema()).validate(d)
    assert type(step).from_dict(d) == step
    assert step.describe().endswith(".")


def test_schema_refuses_unknown_fields_and_bad_choices():
    v = jsonschema.Draft202012Validator(Age.schema())
    assert not v.is_valid({"kind": "age", "birth": "B", "leap_day": "march"})
    assert not v.is_valid({"kind": "age", "birth": "B", "extra": 1})
    assert not v.is_valid({"kind": "age", "birth": "B", "as_of": "next week"})
    assert v.is_valid({"kind": "age", "birth": "B", "as_of": "replay-day"})


def test_parameters_describe_every_field():
    for cls in (Span, Age, Tenure, CalendarPart, BusinessDays, ConvertZone, WithinRange):
        params = parameters(cls)
        assert [p["name"] for p in params] == [f.name for f in dataclasses.fields(cls)]
        assert all(p["label"] for p in params)
        assert cls.title
    span = {p["name"]: p for p in parameters(Span)}
    assert span["start"]["type"] == "column" and span["start"]["required"]
    assert span["unit"]["choices"] == ["days", "days-exact", "weeks", "months", "years"]
    assert span["unit"]["default"] == "days"
    bd = {p["name"]: p for p in parameters(BusinessDays)}
    assert bd["include_end"]["type"] == "bool" and bd["include_end"]["default"] is False


def test_preview_shows_inputs_and_output_for_first_rows():
    t = make_table(MEMBERS)
    df = preview(Age(birth="Born", as_of="2026-11-30"), t, n=3)
    assert list(df.columns) == ["Born", "Age (Born)"]
    assert df["Age (Born)"].tolist() == [26, 35, pd.NA]
    rule = preview(NotAfterColumn(first="Joined", second="Last outing"), t, n=4)
    assert rule.iloc[:, -1].tolist() == [False, False, False, False]
    bad = preview(Span(start="Joined", end="Nope"), t)
    assert bad.attrs["warnings"]


# ---- every derived and rule kind round-trips (Hypothesis), and steps are row-local

_names = st.text(st.characters(codec="utf-8", exclude_categories=("Cs",)), min_size=1, max_size=12)
_days = st.dates(min_value=dt.date(1, 1, 1), max_value=dt.date(9999, 12, 31))
_iso = _days.map(lambda d: d.isoformat())
_as_of = st.one_of(st.just("replay-day"), _iso)
_ref = st.one_of(
    st.tuples(_as_of, st.none()), st.tuples(st.none(), _names), st.tuples(_as_of, _names)
)


def _with_ref(cls, **kw):
    return _ref.flatmap(
        lambda r: st.builds(cls, as_of=st.just(r[0]), as_of_column=st.just(r[1]), **kw)
    )


KIND_STEPS = st.one_of(
    st.builds(
        Span,
        start=_names,
        end=_names,
        unit=st.sampled_from(["days", "days-exact", "weeks", "months", "years"]),
        output=_names,
    ),
    _with_ref(Age, birth=_names, leap_day=st.sampled_from(["mar1", "feb28"]), output=_names),
    _with_ref(Tenure, start=_names, output=_names),
    st.builds(
        CalendarPart,
        column=_names,
        part=st.sampled_from(list(derive.PARTS)),
        locale=st.sampled_from(["en", "fr", "de_CH", "pt_BR"]),
        fiscal_start=st.integers(1, 12),
        fiscal_label=st.sampled_from(["end", "start"]),
    ),
    st.builds(
        BusinessDays,
        start=_names,
        end=_names,
        weekmask=st.lists(st.sampled_from("01"), min_size=7, max_size=7)
        .map("".join)
        .filter(lambda m: "1" in m),
        country=st.sampled_from([None, "DE", "US"]),
        subdiv=st.none(),
        holidays=st.lists(_days, max_size=3).map(tuple),
        include_end=st.booleans(),
    ),
    st.builds(
        ConvertZone,
        column=_names,
        zone=st.sampled_from(["UTC", "Asia/Tokyo"]),
        naive_zone=st.sampled_from([None, "Europe/Paris"]),
    ),
    st.builds(WithinRange, column=_names, earliest=_iso, label=_names),
    st.builds(NotAfter, column=_names, as_of=_as_of, label=_names),
    st.builds(NotAfterColumn, first=_names, second=_names, strict=st.booleans(), label=_names),
)


@settings(max_examples=80, deadline=None)
@given(KIND_STEPS)
def test_every_derived_kind_round_trips_through_json(step):
    d = json.loads(json.dumps(step.to_dict()))
    jsonschema.Draft202012Validator(type(step).schema()).validate(d)
    again = step_from_dict(d)
    assert again == step and type(again) is type(step)
    assert again.to_dict() == step.to_dict()


ROW_LOCAL = [
    Age(birth="Born", leap_day="feb28"),
    Tenure(start="Joined", as_of=None, as_of_column="Last outing"),
    Span(start="Born", end="Joined", unit="years"),
    CalendarPart(column="Joined", part="weekday-name", locale="de"),
    BusinessDays(start="Joined", end="Last outing", country="DE", subdiv="BY"),
]


@pytest.mark.parametrize("step", ROW_LOCAL, ids=lambda s: s.kind)
def test_steps_are_row_local(step):
    # Applying to two halves gives, row for row, what applying to the whole gives.
    t = make_table(MEMBERS)
    whole = step.apply(t, CTX).derived[step.output_name].values
    parts = []
    for rows in (np.arange(0, 2), np.arange(2, 5)):
        part = make_table({k: [v[i] for i in rows] for k, v in MEMBERS.items()})
        parts.append(step.apply(part, CTX).derived[step.output_name].values)
    assert pd.concat(parts, ignore_index=True).tolist() == whole.tolist()


def test_working_out_a_name_twice_warns():
    t = make_table(MEMBERS)
    t = Span(start="Joined", end="Last outing", output="X").apply(t, CTX)
    t = Span(start="Joined", end="Last outing", unit="weeks", output="X").apply(t, CTX)
    assert any("worked out twice" in w for w in t.warnings)
    assert t.derived["X"].values.tolist()[-1] == -4  # the later (weeks) values: -29 days


def test_zone_step_preview_shows_before_and_after():
    t = make_table({"At": ["2026-07-01T12:00"]})
    t = t.with_parsed(t.parsed["At"].evolve(has_time=np.ones(1, bool)))
    df = preview(ConvertZone(column="At", zone="UTC", naive_zone="Europe/Paris"), t)
    # zoneinfo/tzdata: Paris is UTC+2 in July (summer time)
    assert df.loc[0, "At"] == pd.Timestamp("2026-07-01 12:00")
    assert df.loc[0, "At (after)"] == pd.Timestamp("2026-07-01 10:00")
