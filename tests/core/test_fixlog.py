"""FixLog: JSON form, validation with clear errors, hostile input, apply."""

from __future__ import annotations

import copy
import datetime as dt
import json
import pickle

import jsonschema
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from datemend.core.clean import CellState
from datemend.core.fixlog import (
    FORMAT,
    MAX_BYTES,
    MAX_DEPTH,
    VERSION,
    FixLog,
    FixLogError,
    apply_log,
    apply_to_dataframe,
    fixlog_schema,
)
from datemend.core.rowkey import detect_key_column
from datemend.core.spec import ParseSpec
from datemend.core.steps import ApplyContext, BlankTokens, DatePart, ReadDates, SetCell
from datemend.core.table import DatemendError, RawTable

SPEC = ParseSpec(patterns=("iso-date",), day_order="dmy")


def _log() -> FixLog:
    return (
        FixLog(key_column="Member no", created="2026-11-02T09:15:00Z")
        .add(ReadDates("Born", SPEC, "ISO 8601 100%"))
        .add(BlankTokens(("n/a",)))
        .add(SetCell("Born", "M2", "1985-04-12", "Member no", raw="12 Apr 85"))
        .add(DatePart("Born"), enabled=False)
    )


def _data() -> dict:
    return json.loads(_log().to_json())


def test_json_form_says_what_it_is():
    d = _data()
    assert d["format"] == FORMAT == "datemend-fixlog"
    assert d["version"] == VERSION == 1
    assert isinstance(d["datemend_version"], str) and d["created"] == "2026-11-02T09:15:00Z"
    assert [s["step"]["kind"] for s in d["steps"]] == [
        "read-dates",
        "blank-tokens",
        "set-cell",
        "date-part",
    ]
    assert [s["enabled"] for s in d["steps"]] == [True, True, True, False]


def test_save_and_load_round_trip(tmp_path):
    path = tmp_path / "october.datemend.json"
    _log().save(path)
    assert FixLog.load(path) == _log()
    _log().add(DatePart("Born")).save(path)  # replacing an existing file
    assert len(FixLog.load(path)) == 5
    assert sorted(p.name for p in tmp_path.iterdir()) == ["october.datemend.json"]


def test_whole_schema_accepts_a_saved_log():
    schema = fixlog_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.Draft202012Validator(schema).validate(_data())


# --------------------------------------------------------------------- malformed logs


def _set(path: str, value):
    def change(d):
        *parents, last = path.split("/")
        node = d
        for p in parents:
            node = node[int(p)] if p.isdigit() else node[p]
        if value is KeyError:
            del node[int(last) if last.isdigit() else last]
        else:
            node[int(last) if last.isdigit() else last] = value
        return d

    return change


MALFORMED = [
    # (change, step number or None, field, phrase in the sentence, why)
    (_set("steps/0/step/column", 5), 1, "column", "must be text, not a whole number", "type"),
    (_set("steps/1/step/tokens", KeyError), 2, "tokens", "is missing", "missing field"),
    (_set("steps/2/step/kind", "explode"), 3, "kind", "is not a step kind", "unknown kind"),
    (_set("steps/0/step/spec/day_order", "ymd"), 1, "spec.day_order", "must be one of", "enum"),
    (_set("steps/0/enabled", "yes"), 1, "enabled", "must be true or false", "flag type"),
    (_set("steps/2/step/value", "2024-02-30"), 3, "value", "not an ISO 8601", "no such day"),
    (_set("steps/0/step/spec/century", "past"), 1, "spec", "pivot_year", "rule needs a pivot"),
    (_set("steps/0/step/colour", "red"), 1, "colour", "is not a field", "unknown field"),
    (_set("steps/1/step", KeyError), 2, "step", "is missing", "entry without a step"),
    (_set("steps/1/step/tokens", []), 2, "tokens", "must not be empty", "empty token list"),
    (_set("steps/2/step/key", None), 3, "key", "must be text, not null", "null key"),
    (_set("steps", {}), None, "steps", "must be a list", "steps not a list"),
    (_set("key_column", 3), None, "key_column", "must be text or null", "envelope type"),
    (_set("source", {"columns": "abc"}), None, "source.columns", "must be a list", "facts"),
    (_set("created", KeyError), None, None, None, "created is optional"),
    (_set("steps/0/step/spec/patterns", ["x1"]), 1, "spec.patterns", "not a pattern", "pattern"),
    (_set("steps/0/step/spec/zone", "Mars/Base"), 1, "spec.zone", "not an IANA", "zone name"),
    (_set("steps/2/step/key_column", None), 3, "key", "row number must be", "row key not digits"),
    (
        _set("steps/3/step", {"kind": "set-cell", "column": "Born", "key": "²", "value": None}),
        4,
        "key",
        "row number must be",
        "superscript two is no ASCII digit",
    ),
    (
        _set(
            "steps/3/step", {"kind": "set-cell", "column": "Born", "key": "9" * 5000, "value": None}
        ),
        4,
        "key",
        "row number must be",
        "row number too long",
    ),
]


def test_malformed_cases_do_not_repeat():
    whys = [c[-1] for c in MALFORMED]
    assert len(whys) == len(set(whys))


@pytest.mark.parametrize(("change", "step", "field", "phrase", "why"), MALFORMED)
def test_malformed_log_gets_one_clear_sentence(change, step, field, phrase, why):
    d = change(_data())
    if phrase is None:
        FixLog.from_dict(d, "october.json")  # loads fine
        return
    with pytest.raises(FixLogError) as err:
        FixLog.from_dict(d, "october.json")
    e = err.value
    msg = str(e)
    assert isinstance(e, DatemendError)
    assert msg.startswith("october.json") and msg.endswith(".") and "\n" not in msg
    assert (e.step, e.field) == (step, field)
    if step is not None:
        assert f"step {step}" in msg
    assert f'"{field}"' in msg and phrase in msg, msg


@pytest.mark.parametrize("change", [c[0] for c in MALFORMED if c[3] is not None][:5])
def test_whole_schema_also_refuses_the_structural_cases(change):
    """The published schema and the step-by-step check agree (type, missing, kind, enum)."""
    d = change(_data())
    assert not jsonschema.Draft202012Validator(fixlog_schema()).is_valid(d)


def test_newer_version_is_refused_with_a_clear_sentence():
    d = _data()
    d["version"] = VERSION + 1
    d["steps"] = "whatever a later format holds"
    with pytest.raises(FixLogError, match=r"newer datemend.*version 2.*update datemend"):
        FixLog.from_dict(d, "october.json")


@pytest.mark.parametrize(
    ("data", "phrase"),
    [
        (["a list"], "not a datemend fix log"),
        ({"format": "something-else", "version": 1, "steps": []}, "not a datemend fix log"),
        ({"format": FORMAT, "version": "1", "steps": []}, '"version" must be a whole number'),
        ({"format": FORMAT, "version": True, "steps": []}, '"version" must be a whole number'),
    ],
)
def test_not_a_fix_log(data, phrase):
    with pytest.raises(FixLogError, match=phrase):
        FixLog.from_dict(data, "x.json")


def test_truncated_json(tmp_path):
    text = _log().to_json()
    path = tmp_path / "cut.json"
    path.write_text(text[: len(text) // 2], encoding="utf-8")
    with pytest.raises(FixLogError, match=r"^cut\.json ends before its JSON is complete") as err:
        FixLog.load(path)
    assert err.value.path == str(path)


@pytest.mark.parametrize(
    ("text", "phrase"),
    [
        (b"", "is empty"),
        (b"   \n", "is empty"),
        (b"\xff\xfe{", "not UTF-8"),
        (b'{"format": "datemend-fixlog", "version": NaN, "steps": []}', "NaN is not a JSON"),
        (b'{"format": "datemend-fixlog", "format": "x", "version": 1}', "appears twice"),
        (b'{"format": "datemend-fixlog",, }', "not valid JSON at line 1"),
        (b"9" * 5000, "not valid JSON data"),  # int() digit limit (Python 3.11+)
    ],
)
def test_bad_json_text(text, phrase):
    with pytest.raises(FixLogError, match=phrase):
        FixLog.loads(text, "bad.json")


# ------------------------------------------------------------------------ hostile logs


def test_oversized_log_is_refused_before_reading(tmp_path):
    path = tmp_path / "huge.json"
    with path.open("wb") as fh:
        fh.truncate(MAX_BYTES + 1)  # sparse file: big on paper, cheap on disk
    with pytest.raises(FixLogError, match=r"huge\.json is larger than 5 MB"):
        FixLog.load(path)
    with pytest.raises(FixLogError, match="larger than 5 MB"):
        FixLog.loads(" " * (MAX_BYTES + 1), "huge.json")


@pytest.mark.parametrize("depth", [MAX_DEPTH + 1, 10_000, 200_000])
def test_deep_nesting_is_refused(depth):
    text = '{"format": "datemend-fixlog", "version": 1, "steps": [], "notes": '
    text += "[" * depth + "]" * depth + "}"
    with pytest.raises(FixLogError, match=f"nests deeper than {MAX_DEPTH} levels"):
        FixLog.loads(text, "deep.json")


def test_too_many_steps_are_refused():
    from datemend.core.fixlog import MAX_STEPS

    d = _data()
    d["steps"] = [{"step": {"kind": "date-part", "column": "Born"}}] * (MAX_STEPS + 1)
    with pytest.raises(FixLogError, match=r"holds 20,001 steps, more than the 20,000") as err:
        FixLog.loads(json.dumps(d), "many.json")
    assert err.value.field == "steps"


def _depth(obj) -> int:
    """Nesting depth of parsed JSON: the reference for the text-level count."""
    if isinstance(obj, list):
        return 1 + max((_depth(v) for v in obj), default=0)
    if isinstance(obj, dict):
        return 1 + max((_depth(v) for v in obj.values()), default=0)
    return 0


_tricky = st.text(alphabet='[]{}"\\ab\n', max_size=8)
_json = st.recursive(
    st.none() | st.booleans() | st.integers() | _tricky,
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(_tricky, inner, max_size=3),
    max_leaves=20,
)


@settings(max_examples=200, deadline=None)
@given(_json)
def test_depth_count_agrees_with_the_parsed_json(obj):
    from datemend.core.logcheck import _max_depth

    # json.dumps escapes quotes and backslashes inside strings: brackets there must not count
    assert _max_depth(json.dumps(obj)) == _depth(obj)


def test_escaped_quotes_cost_linear_time():
    # 1.25 million escaped quotes after an opening one: a backtracking scan would not finish
    text = '{"notes": ["' + '\\"' * 1_250_000
    with pytest.raises(FixLogError, match="ends before its JSON is complete"):
        FixLog.loads(text, "quotes.json")


def test_brackets_inside_text_are_not_nesting():
    d = _data()
    d["notes"] = ["[" * 1000 + '\\" {{{' + "]" * 3]
    log = FixLog.loads(json.dumps(d), "ok.json")
    assert log.notes[0].startswith("[[[")


class _Boom:
    def __init__(self, marker):
        self.marker = marker

    def __reduce__(self):
        return (open, (str(self.marker), "w"))


def test_a_pickle_is_never_unpickled(tmp_path):
    marker = tmp_path / "ran"
    path = tmp_path / "evil.json"
    path.write_bytes(pickle.dumps(_Boom(marker)))
    with pytest.raises(FixLogError):
        FixLog.load(path)
    assert not marker.exists()


def test_code_in_text_fields_stays_text(tmp_path):
    marker = tmp_path / "ran"
    code = f"__import__('pathlib').Path({str(marker)!r}).touch()"
    d = _data()
    d["steps"][0]["step"]["label"] = code
    d["notes"] = [code]
    log = FixLog.loads(json.dumps(d), "evil.json")
    raw = RawTable.from_dataframe(pd.DataFrame({"Member no": ["M1"], "Born": ["x"]}))
    apply_log(log, raw, ApplyContext(today=dt.date(2026, 1, 1)))
    assert log.steps[0].label == code and not marker.exists()


# ------------------------------------------------------------------------------- apply


def _raw() -> RawTable:
    return RawTable.from_dataframe(
        pd.DataFrame(
            {
                "Member no": ["M1", "M2", "M3"],
                "Born": ["1970-01-02", "12 Apr 85", "n/a"],
                "Name": ["Ann", "Bo", "Cy"],
            }
        )
    )


def _spec_for(raw: RawTable) -> ParseSpec:
    from datemend.core.infer import scan_column

    best = scan_column(raw.column("Born")).best
    assert best is not None
    return best.spec


def test_apply_is_deterministic_and_skips_disabled_steps():
    raw = _raw()
    log = _log().replace(0, ReadDates("Born", _spec_for(raw)))
    ctx = ApplyContext(today=dt.date(2026, 11, 30))
    a, b = apply_log(log, raw, ctx), apply_log(log, raw, ctx)
    pa, pb = a.parsed["Born"], b.parsed["Born"]
    assert np.array_equal(pa.value, pb.value, equal_nan=True)
    assert np.array_equal(pa.state, pb.state)
    assert not pa.date_only  # the date-part step is disabled
    assert pa.value[0] == np.datetime64("1970-01-02", "us")
    assert list(pa.state[1:]) == [CellState.MANUAL, CellState.BLANK]
    assert pa.value[1] == np.datetime64("1985-04-12", "us")
    assert a.key_column == "Member no"
    assert apply_log(log.set_enabled(3, True), raw, ctx).parsed["Born"].date_only


def test_a_step_on_a_missing_column_is_skipped_with_a_warning():
    raw = RawTable.from_dataframe(pd.DataFrame({"Member no": ["M1"], "Name": ["Ann"]}))
    out = apply_log(_log(), raw)
    assert out.parsed == {}
    assert 'Step 1 was skipped: column "Born" is not in the file.' in out.warnings


def test_apply_to_dataframe_from_a_log_file(tmp_path):
    raw = _raw()
    path = tmp_path / "log.json"
    _log().replace(0, ReadDates("Born", _spec_for(raw))).save(path)
    df = raw.to_dataframe()
    df.index = ["a", "b", "c"]
    out = apply_to_dataframe(path, df)
    assert list(out.index) == ["a", "b", "c"]
    assert list(out.columns) == ["Member no", "Born", "Name"]
    assert str(out["Born"].dtype) == "datetime64[us]"
    assert out["Born"].iloc[1] == pd.Timestamp("1985-04-12")
    assert pd.isna(out["Born"].iloc[2])
    assert list(out["Name"]) == ["Ann", "Bo", "Cy"]
    assert list(df["Born"]) == ["1970-01-02", "12 Apr 85", "n/a"]  # input untouched


# ----------------------------------------------------------------------- key detection

KEY_CASES = [
    ({"Member no": ["M1", "M2"], "Name": ["Ann", "Bo"]}, "Member no", "unique, id-like name"),
    ({"Name": ["Ann", "Bo"], "ID": [7, 8]}, "ID", "an id-like header wins over file order"),
    ({"Name": ["Ann", "Bo"], "Club": ["X", "Y"]}, "Name", "else the first unique column"),
    ({"No": ["M1", ""], "Name": ["Ann", "Bo"]}, "Name", "an empty cell rules a column out"),
    ({"No": ["M1", "M1 "], "Name": ["Ann", "Ann"]}, None, "alike after trimming: not unique"),
    ({"Ref": [1.5, 2.5]}, None, "fractional numbers are not keys"),
]


def test_key_cases_do_not_repeat():
    whys = [c[2] for c in KEY_CASES]
    assert len(whys) == len(set(whys))


@pytest.mark.parametrize(("cols", "expected", "why"), KEY_CASES, ids=[c[2] for c in KEY_CASES])
def test_detect_key_column(cols, expected, why):
    assert detect_key_column(RawTable.from_dataframe(pd.DataFrame(cols))) == expected


def test_malformed_list_is_independent_of_order():
    # the cases mutate copies: the base log data stays valid
    base = _data()
    for change, *_ in MALFORMED:
        change(copy.deepcopy(base))
    FixLog.from_dict(base, "base.json")


def test_a_run_of_hand_set_cells_equals_applying_them_one_by_one():
    from datemend.core.clean import CleanTable
    from datemend.core.fixlog import apply_entry

    raw = _raw()
    log = (
        FixLog(key_column="Member no")
        .add(ReadDates("Born", _spec_for(raw)))
        .add(SetCell("Born", "M1", "1971-01-01", "Member no"))
        .add(SetCell("Born", "M3", "1972-01-01", "Member no"), enabled=False)
        .add(SetCell("Joined", "M3", "1973-01-01", "Member no"))  # no such column
        .add(SetCell("Born", "M9", "1974-01-01", "Member no"))  # no such key
        .add(SetCell("Born", "M1", "1975-01-01", "Member no"))  # the later one wins
        .add(SetCell("Born", "4", None))  # by source row number: M3 (header on row 1)
    )
    fast = apply_log(log, raw)
    slow = CleanTable(raw, key_column="Member no")
    for i, e in enumerate(log.entries):
        slow = apply_entry(slow, e, i + 1, ApplyContext())
    a, b = fast.parsed["Born"], slow.parsed["Born"]
    assert np.array_equal(a.value, b.value, equal_nan=True)
    assert np.array_equal(a.state, b.state) and list(a.reason) == list(b.reason)
    assert fast.warnings == slow.warnings
    assert a.value[0] == np.datetime64("1975-01-01", "us")
    assert (a.state[0], a.state[2]) == (CellState.MANUAL, CellState.BLANK)
