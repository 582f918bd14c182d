"""The pattern registry: stable ids, labels, the mix label, and ``render`` (checked by hand
for exact strings, and by writing Python datetimes and reading them back)."""

from __future__ import annotations

import datetime as dt
import json

import numpy as np
import pytest

from datemend.core import patterns as P
from datemend.core.clean import CellState
from datemend.core.parse import parse_texts
from datemend.core.spec import ParseSpec

IDS = [p for p in P.PATTERNS if p != "date-cell"]


def test_ids_are_unique_json_safe_and_documented() -> None:
    assert len(set(P.PATTERNS)) == len(P.PATTERNS)
    assert json.loads(json.dumps(list(P.PATTERNS))) == list(P.PATTERNS)
    doc = P.__doc__ or ""
    for pid in IDS:
        assert f"``{pid}``" in doc, pid


def test_ambiguous_with_names_real_patterns() -> None:
    for p in P.PATTERNS.values():
        assert set(p.ambiguous_with) <= set(P.PATTERNS), p.id


def test_unknown_id_names_it() -> None:
    with pytest.raises(KeyError, match="no-such"):
        P.pattern("no-such")


LABELS = [
    (("num-slash", "dmy", 1900, False), "D/M/YYYY", "day first, four-digit year"),
    (("num-slash", "mdy", 1900, False), "M/D/YYYY", "month first"),
    (("num-dash", "mdy", 1900, True), "M-D-YY", "two-digit years"),
    (("num-dot", None, 1900, False), "D.M.YYYY or M.D.YYYY", "undecided order says so"),
    (("serial", None, 1904, False), "serial 1904", "date system in the label"),
    (("serial", None, 1900, False), "serial 1900", "the 1900 system"),
    (("iso-date", None, 1900, False), "ISO 8601", "ISO"),
    (("epoch-ms", None, 1900, False), "epoch ms", "milliseconds"),
]


@pytest.mark.parametrize(("args", "want", "why"), LABELS, ids=[w for _, w, _ in LABELS])
def test_labels(args: tuple, want: str, why: str) -> None:
    pid, order, system, two = args
    assert P.label(pid, day_order=order, date_system=system, two_digit_year=two) == want, why


def test_mix_label_reads_like_the_issue() -> None:
    # By hand: 7, 2 and 1 of 10 cells.
    got = P.mix_label([("M/D/YYYY", 7), ("ISO 8601", 2), ("serial 1900", 1)])
    assert got == "M/D/YYYY 70% · ISO 8601 20% · serial 1900 10%"
    assert P.mix_label([("ISO 8601", 999), ("epoch s", 1)]) == "ISO 8601 >99% · epoch s <1%"


RENDERED = [
    (("num-slash", dt.date(2024, 3, 4)), {"day_order": "mdy", "pad": False}, "3/4/2024"),
    (("num-dot", dt.date(2024, 3, 4)), {"year_digits": 2}, "04.03.24"),
    (
        ("iso-date", dt.datetime(1985, 4, 12, 23, 20, 50)),
        {"time": "hms", "offset_min": 0, "offset_style": "Z"},
        "1985-04-12T23:20:50Z",
    ),
    (("iso-week", dt.date(1985, 4, 12)), {}, "1985-W15-5"),
    (("iso-ordinal", dt.date(1985, 4, 12)), {}, "1985-102"),
    (("compact-ymd", dt.date(1985, 4, 12)), {}, "19850412"),
    (("compact-ddmmyy", dt.date(1985, 4, 12)), {}, "120485"),
    (("serial", dt.datetime(2023, 1, 1, 12)), {}, "44927.5"),
    (("serial", dt.date(1900, 2, 28)), {}, "59"),
    (("serial", dt.date(1904, 1, 1)), {"date_system": 1904}, "0"),
    (("epoch-s", dt.datetime(2009, 2, 13, 23, 31, 30)), {}, "1234567890"),
    (("epoch-ms", dt.datetime(2009, 2, 13, 23, 31, 30, 123000)), {}, "1234567890123"),
    (
        ("rfc5322", dt.datetime(1997, 11, 21, 9, 55, 6)),
        {"offset_min": -360},
        "Fri, 21 Nov 1997 09:55:06 -0600",
    ),
    (
        ("name-mdy", dt.date(1985, 4, 12)),
        {"width": "abbreviated", "ordinal": True},
        "Apr 12th, 1985",
    ),
    (("name-dmy", dt.date(2024, 1, 1)), {"language": "fr", "ordinal": True}, "1er janvier 2024"),
    (
        ("num-slash", dt.datetime(2024, 3, 4, 15, 5)),
        {"time": "hm", "clock": "12"},
        "04/03/2024 3:05 PM",
    ),
]


def test_rendered_rows_do_not_repeat() -> None:
    outs = [r[2] for r in RENDERED]
    assert len(outs) == len(set(outs))


@pytest.mark.parametrize(("args", "opts", "want"), RENDERED, ids=[r[2] for r in RENDERED])
def test_render_exact(args: tuple, opts: dict, want: str) -> None:
    # Expected strings worked out by hand (RFC 5322 App. A.1.1 for the message date).
    assert P.render(*args, **opts) == want


MOMENTS = [
    dt.datetime(1985, 4, 12),
    dt.datetime(2000, 2, 29, 13, 45, 30),
    dt.datetime(1999, 12, 31, 23, 59, 59),
    dt.datetime(2024, 11, 3, 1, 2, 3),
]


@pytest.mark.parametrize("pid", IDS)
def test_render_then_read_gives_the_same_datetime(pid: str) -> None:
    # Reference: the Python datetimes written; every pattern must read its own writing back.
    day_first = pid.startswith("num-") or pid in ("compact-dmy", "compact-ddmmyy")
    spec = ParseSpec(patterns=(pid,), day_order="dmy" if day_first else "mdy")
    timed = pid not in {"iso-week", "iso-ordinal", "compact-dmy", "compact-mdy"} and not (
        pid.startswith("compact-") and len(pid) > 11
    )
    texts, want = [], []
    for m in MOMENTS:
        if pid in ("epoch-s", "epoch-ms", "serial", "rfc5322") or timed:
            t = m
        else:
            t = dt.datetime(m.year, m.month, m.day)
        opts = {"time": "hms"} if timed and pid not in ("serial", "epoch-s", "epoch-ms") else {}
        if (pid.startswith("compact-") and len(pid) > 11) or pid == "compact-ymd":
            opts = {}
            t = dt.datetime(m.year, m.month, m.day)
        texts.append(P.render(pid, t, day_order="dmy", **opts))
        want.append(np.datetime64(t, "us"))
    res = parse_texts(texts, spec)
    assert res.state.tolist() == [CellState.PARSED] * len(texts), list(zip(texts, res.reason))
    assert res.value.tolist() == [w.astype(dt.datetime) for w in want], texts
