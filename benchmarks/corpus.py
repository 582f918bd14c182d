"""A labelled corpus of messy date columns, generated from a seed (our own generator).

Every column carries the truth for each value: the datetime it means (wall clock as written,
plus the UTC offset in minutes when one is written), or ``None`` when the value cannot be
resolved (junk, impossible dates, placeholders, or a column whose day/month order nothing
decides). Values are written by Python's ``datetime``/``email.utils`` and month names come
from Unicode CLDR via babel, so the truth never depends on the code being measured.

Run ``python benchmarks/corpus.py`` to print a summary of the families.
"""

from __future__ import annotations

import datetime as dt
import email.utils
import random
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field

from babel.dates import format_date

from datemend.core.table import CellKind, SourceFacts

__all__ = ["FAMILIES", "LabelledColumn", "build_corpus"]

UTC = dt.UTC
LOCALES = ("en", "fr", "de", "es", "it", "pt", "nl")
NAIVE_OFFSET: int | None = None


@dataclass
class LabelledColumn:
    """One column of the corpus and its truth per value."""

    family: str
    name: str
    values: list[object]
    kinds: list[CellKind]
    truth: list[dt.datetime | None]  # wall clock as written; None = unresolvable
    offsets: list[int | None]  # minutes east of UTC where the value writes one
    facts: SourceFacts = field(default_factory=SourceFacts)
    note: str = ""
    tolerance_us: int = 0  # serial fractions: a spreadsheet shows them to the millisecond

    def __len__(self) -> int:
        return len(self.values)


def _date(rng: random.Random, lo: int = 1950, hi: int = 2030) -> dt.date:
    start = dt.date(lo, 1, 1).toordinal()
    end = dt.date(hi, 12, 31).toordinal()
    return dt.date.fromordinal(rng.randint(start, end))


def _datetime(
    rng: random.Random, lo: int = 1970, hi: int = 2030, *, micro: bool = False
) -> dt.datetime:
    d = _date(rng, lo, hi)
    us = rng.randrange(1_000_000) if micro else 0
    return dt.datetime(
        d.year, d.month, d.day, rng.randrange(24), rng.randrange(60), rng.randrange(60), us
    )


def _at(d: dt.date) -> dt.datetime:
    return dt.datetime(d.year, d.month, d.day)


def _text_col(
    family: str, name: str, pairs: list[tuple[str, dt.datetime | None, int | None]], note: str = ""
) -> LabelledColumn:
    return LabelledColumn(
        family,
        name,
        [p[0] for p in pairs],
        [CellKind.TEXT if p[0].strip() else CellKind.EMPTY for p in pairs],
        [p[1] for p in pairs],
        [p[2] for p in pairs],
        note=note,
    )


# --- families ---------------------------------------------------------------------------------


def iso_dates(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    pairs = []
    for _ in range(n):
        d = _date(rng, 1900, 2100)
        pairs.append((d.isoformat(), _at(d), None))
    yield _text_col("iso date", "start_date", pairs)
    # far ends of the calendar mixed in (pandas' nanosecond range is narrower)
    pairs = []
    for _ in range(n):
        d = rng.choice([_date(rng, 1, 1600), _date(rng, 2263, 9999), _date(rng, 1990, 2020)])
        pairs.append((d.isoformat(), _at(d), None))
    pairs[0] = ("9999-12-31", dt.datetime(9999, 12, 31), None)
    pairs[1] = ("0001-01-01", dt.datetime(1, 1, 1), None)
    yield _text_col("iso date", "valid_until", pairs, "years 1..9999")


def iso_datetimes(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    naive = []
    for _ in range(n):
        t = _datetime(rng, micro=rng.random() < 0.3)
        sep = rng.choice("T ")
        text = t.isoformat(sep=sep, timespec=rng.choice(["seconds", "minutes", "milliseconds"]))
        want = dt.datetime.fromisoformat(text)
        naive.append((text, want, None))
    yield _text_col("iso date-time", "logged_at", naive)
    aware = []
    for _ in range(n):
        t = _datetime(rng)
        off = rng.choice([0, 60, 120, -300, -480, 330, 345, -210, 20])
        tz = dt.timezone(dt.timedelta(minutes=off))
        text = t.replace(tzinfo=tz).isoformat(timespec=rng.choice(["seconds", "milliseconds"]))
        if off == 0 and rng.random() < 0.5:
            text = text.replace("+00:00", "Z")
        wall = dt.datetime.fromisoformat(text.replace("Z", "+00:00"))
        aware.append((text, wall.replace(tzinfo=None), off))
    yield _text_col("iso date-time offset", "received_at", aware)


def iso_week_ordinal(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    week, ordinal = [], []
    for _ in range(n):
        d = _date(rng, 1970, 2030)
        y, w, wd = d.isocalendar()
        week.append((f"{y:04d}-W{w:02d}-{wd}", _at(d), None))
        ordinal.append((f"{d.year:04d}-{d.timetuple().tm_yday:03d}", _at(d), None))
    yield _text_col("iso week", "week_day", week)
    yield _text_col("iso ordinal", "ordinal_day", ordinal)


def _numeric(d: dt.date, order: str, sep: str, zeros: bool, year_digits: int) -> str:
    day = f"{d.day:02d}" if zeros else str(d.day)
    month = f"{d.month:02d}" if zeros else str(d.month)
    year = f"{d.year:04d}" if year_digits == 4 else f"{d.year % 100:02d}"
    parts = {"dmy": (day, month, year), "mdy": (month, day, year), "ymd": (year, month, day)}
    return sep.join(parts[order])


def numeric_dates(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Decidable columns: random days, so some day fields exceed 12 (evidence for the order).
    for order in ("dmy", "mdy", "ymd"):
        for sep in ("/", "-", ".", " "):
            pairs = []
            zeros = rng.random() < 0.5
            for _ in range(n // 4):
                d = _date(rng, 1950, 2030)
                pairs.append((_numeric(d, order, sep, zeros, 4), _at(d), None))
            yield _text_col(f"numeric {order} 4-digit year", f"date_{order}_{sep!r}", pairs)
    # two-digit years, dates 1970..2025: POSIX and a past-events rule agree (no decision left).
    for order in ("dmy", "mdy"):
        pairs = []
        for _ in range(n // 2):
            d = _date(rng, 1970, 2025)
            pairs.append((_numeric(d, order, "/", rng.random() < 0.5, 2), _at(d), None))
        yield _text_col("numeric 2-digit year", f"joined_{order}", pairs)
    # two-digit year first (YY-MM-DD), years 1970..2025: values like 87-06-30 (no day 87) show
    # the year is first, so 24-01-05 is 2024-01-05.
    pairs = []
    for _ in range(n // 2):
        d = _date(rng, 1970, 2025)
        pairs.append((f"{d.year % 100:02d}-{d.month:02d}-{d.day:02d}", _at(d), None))
    yield _text_col("numeric YY-MM-DD", "renewed_yymmdd", pairs)


def dates_of_birth(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Two-digit years in a column of births 1940..2008: POSIX would put 40..68 in the 2000s.
    pairs = []
    for _ in range(n):
        d = _date(rng, 1940, 2008)
        pairs.append((_numeric(d, "mdy", "/", False, 2), _at(d), None))
    col = _text_col("date of birth 2-digit year", "Date of birth", pairs)
    col.note = "past events: the reference year is 2026"
    yield col


def compact(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    pairs = []
    for _ in range(n):
        d = _date(rng, 1950, 2030)
        pairs.append((d.strftime("%Y%m%d"), _at(d), None))
    yield _text_col("compact YYYYMMDD", "yyyymmdd", pairs)
    # six digits where YYMMDD, MMDDYY and DDMMYY are all valid: nothing decides.
    pairs = []
    while len(pairs) < n // 2:
        a, b, c = rng.randint(1, 12), rng.randint(1, 12), rng.randint(1, 12)
        text = f"{a:02d}{b:02d}{c:02d}"
        # the three readings agree only when a == b == c (e.g. 060606 is 2006-06-06 every way)
        same = dt.datetime(2000 + a, a, a) if a == b == c else None
        pairs.append((text, same, None))
    yield _text_col("compact 6-digit undecidable", "ddmmyy_or_not", pairs)


def month_names(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    shapes = ["d MMMM y", "d MMM y", "long", "EEEE d MMMM y", "EEE d MMM y"]
    for locale in LOCALES:
        pairs = []
        for _ in range(n // 2):
            d = _date(rng, 1950, 2030)
            text = format_date(d, rng.choice(shapes), locale=locale)
            text = rng.choice([text, text, text.lower(), text.upper()])
            pairs.append((text, _at(d), None))
        yield _text_col(f"month names {locale}", f"event_{locale}", pairs)
    pairs = []
    for _ in range(n // 2):
        d = _date(rng, 1950, 2030)
        suffix = {1: "st", 2: "nd", 3: "rd", 21: "st", 22: "nd", 23: "rd", 31: "st"}.get(
            d.day, "th"
        )
        text = rng.choice(
            [
                format_date(d, "MMMM d, y", locale="en"),
                f"{format_date(d, 'MMMM', locale='en')} {d.day}{suffix}, {d.year}",
                f"{d.day}{suffix} {format_date(d, 'MMM', locale='en')} {d.year}",
                format_date(d, "EEEE, MMMM d, y", locale="en"),
            ]
        )
        pairs.append((text, _at(d), None))
    yield _text_col("month names en suffixes", "event_en_suffix", pairs)


def clock_times(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    h12, h24 = [], []
    for _ in range(n):
        t = _datetime(rng).replace(second=0)
        hour = t.hour % 12 or 12
        ampm = "AM" if t.hour < 12 else "PM"
        ampm = rng.choice([ampm, ampm.lower()])
        h12.append((f"{t.month}/{t.day}/{t.year} {hour}:{t.minute:02d} {ampm}", t, None))
        h24.append((f"{t.day:02d}/{t.month:02d}/{t.year} {t.hour:02d}:{t.minute:02d}", t, None))
    yield _text_col("12-hour clock", "checked_in", h12)
    yield _text_col("24-hour clock", "checked_out", h24)


def rfc5322(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    pairs = []
    for _ in range(n):
        t = _datetime(rng)
        off = rng.choice([0, 60, -300, -360, 120, 330, -210])
        aware = t.replace(tzinfo=dt.timezone(dt.timedelta(minutes=off)))
        pairs.append((email.utils.format_datetime(aware), t, off))
    yield _text_col("RFC 5322", "message_date", pairs)


def serials(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    for system, base in ((1900, dt.datetime(1899, 12, 30)), (1904, dt.datetime(1904, 1, 1))):
        values, truth = [], []
        for _ in range(n):
            d = _date(rng, 1990, 2030)
            days = (_at(d) - base).days
            if rng.random() < 0.3:
                frac = rng.randrange(1440) / 1440  # a whole minute (not exact in binary)
                value: object = days + frac
                want = base + dt.timedelta(days=days, minutes=round(frac * 1440))
            else:
                value, want = days, base + dt.timedelta(days=days)
            values.append(value)
            truth.append(want)
        kinds = [CellKind.FLOAT if isinstance(v, float) else CellKind.INT for v in values]
        yield LabelledColumn(
            f"serial {system}",
            f"paid_{system}",
            values,
            kinds,
            truth,
            [None] * n,
            SourceFacts(format="xlsx", date_system=system),
            tolerance_us=1000,
        )


def epochs(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    for unit, scale in (("s", 1), ("ms", 1000)):
        values, truth = [], []
        for _ in range(n):
            t = _datetime(rng, 1995, 2030)
            secs = int(
                (t.replace(tzinfo=UTC) - dt.datetime(1970, 1, 1, tzinfo=UTC)).total_seconds()
            )
            extra = rng.randrange(1000) if scale == 1000 else 0
            values.append(secs * scale + extra)
            truth.append(t + dt.timedelta(milliseconds=extra))
        yield LabelledColumn(
            f"epoch {unit}", f"created_{unit}", values, [CellKind.INT] * n, truth, [0] * n
        )


def date_cells(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    values: list[object] = []
    truth: list[dt.datetime | None] = []
    for _ in range(n):
        if rng.random() < 0.5:
            d = _date(rng, 1, 9999)
            values.append(d)
            truth.append(_at(d))
        else:
            t = _datetime(rng)
            values.append(t)
            truth.append(t)
    kinds = [CellKind.DATETIME if isinstance(v, dt.datetime) else CellKind.DATE for v in values]
    yield LabelledColumn(
        "workbook date cells",
        "renewed",
        values,
        kinds,
        truth,
        [None] * n,
        SourceFacts(format="xlsx"),
    )


JUNK = [
    "n/a",
    "N/A",
    "unknown",
    "-",
    "TBD",
    "see notes",
    "00/00/0000",
    "?",
    "none",
    "#REF!",
    "pending",
    "ask Sam",
    "12345abc",
    "lost",
    "n.k.",
    "Q3",
    "soon",
    "--",
    "null",
    "x",
]


def junk_and_impossible(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    pairs = [
        (rng.choice([*JUNK, "Rowing club", "Boathouse", "Cox", "Stroke"]), None, None)
        for _ in range(n // 2)
    ]
    yield _text_col("junk column", "notes", pairs)
    # D/M/YYYY column with impossible days mixed in: 30/02, 31/04, 29/02 in common years, 13th month
    pairs = []
    for _ in range(n):
        if rng.random() < 0.15:
            year = rng.choice([2021, 2022, 2023, 2025])
            bad = rng.choice([(30, 2), (31, 2), (31, 4), (31, 6), (31, 9), (31, 11), (29, 2)])
            if rng.random() < 0.2:
                bad = (rng.randint(13, 28), 13)
            pairs.append((f"{bad[0]:02d}/{bad[1]:02d}/{year}", None, None))
        else:
            d = _date(rng, 1990, 2030)
            pairs.append((_numeric(d, "dmy", "/", True, 4), _at(d), None))
    yield _text_col("impossible dates", "last_race", pairs)
    # M/D/YYYY with impossible values: 2/30/2024 must not roll into March
    pairs = []
    for _ in range(n // 2):
        if rng.random() < 0.15:
            pairs.append(
                (
                    rng.choice(
                        [
                            "2/30/2024",
                            "2/31/2023",
                            "4/31/2022",
                            "2/29/2023",
                            "13/13/2020",
                            "6/31/2021",
                        ]
                    ),
                    None,
                    None,
                )
            )
        else:
            d = _date(rng, 1990, 2030)
            pairs.append((_numeric(d, "mdy", "/", False, 4), _at(d), None))
    yield _text_col("impossible dates", "last_regatta", pairs)


def undecidable(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Every value has day and month ≤ 12: nothing decides D/M or M/D. Where day == month the
    # date is known either way.
    pairs = []
    for _ in range(n // 2):
        d = dt.date(rng.randint(1990, 2030), rng.randint(1, 12), rng.randint(1, 12))
        text = _numeric(d, "dmy", "/", True, 4)
        pairs.append((text, _at(d) if d.day == d.month else None, None))
    yield _text_col("undecidable D/M or M/D", "meeting", pairs)


def placeholders(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    pairs = []
    for _ in range(n):
        r = rng.random()
        if r < 0.1:
            pairs.append((rng.choice(["N/A", "unknown", "-", "00/00/0000", ""]), None, None))
        else:
            d = _date(rng, 1990, 2030)
            pairs.append((_numeric(d, "dmy", "/", True, 4), _at(d), None))
    yield _text_col("placeholders and blanks", "left_on", pairs)


def noisy(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    pairs = []
    for _ in range(n):
        d = _date(rng, 1990, 2030)
        text = rng.choice([d.isoformat(), d.strftime("%d/%m/%Y")])
        text = rng.choice(["  ", "", "\t", "\u00a0"]) + text + rng.choice(["", " ", "\u00a0", "  "])
        pairs.append((text, _at(d), None))
    # make sure the D/M/Y part is decidable
    pairs[0] = (" 25/12/2023 ", dt.datetime(2023, 12, 25), None)
    yield _text_col("noise around values", "paid_on", pairs)


def mixed(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # One column: M/D/YYYY 70% · ISO 20% · serial 1900 8% · junk 2% (a typical merged export).
    values: list[object] = []
    kinds: list[CellKind] = []
    truth: list[dt.datetime | None] = []
    for _ in range(n * 2):
        r = rng.random()
        d = _date(rng, 1990, 2030)
        if r < 0.70:
            values.append(_numeric(d, "mdy", "/", False, 4))
            kinds.append(CellKind.TEXT)
            truth.append(_at(d))
        elif r < 0.90:
            values.append(d.isoformat())
            kinds.append(CellKind.TEXT)
            truth.append(_at(d))
        elif r < 0.98:
            values.append((_at(d) - dt.datetime(1899, 12, 30)).days)
            kinds.append(CellKind.INT)
            truth.append(_at(d))
        else:
            values.append(rng.choice(JUNK))
            kinds.append(CellKind.TEXT)
            truth.append(None)
    yield LabelledColumn(
        "mixed column",
        "joined",
        values,
        kinds,
        truth,
        [None] * len(values),
        SourceFacts(format="xlsx"),
    )
    # D/M/YYYY with RFC 3339 date-times: the day-first decision applies to both.
    pairs: list[tuple[str, dt.datetime | None, int | None]] = []
    for _ in range(n):
        t = _datetime(rng)
        if rng.random() < 0.6:
            pairs.append((f"{t.day}/{t.month}/{t.year}", _at(t.date()), None))
        else:
            pairs.append((t.isoformat(timespec="seconds"), t, None))
    yield _text_col("mixed column", "renewal", pairs)
    # A CSV of a merged sheet: M/D/YYYY text, serial numbers as text, YYYYMMDD text.
    pairs = []
    for _ in range(n):
        d = _date(rng, 1990, 2030)
        r = rng.random()
        if r < 0.6:
            text = _numeric(d, "mdy", "/", False, 4)
        elif r < 0.8:
            text = str((_at(d) - dt.datetime(1899, 12, 30)).days)
        else:
            text = d.strftime("%Y%m%d")
        pairs.append((text, _at(d), None))
    col = _text_col("mixed column", "joined_csv", pairs)
    col.facts = SourceFacts(format="csv")
    yield col


def contradicting(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Two writers in one column: some values only read day-first (25/12/…), others only
    # month-first (12/25/…). The evidence contradicts itself, so a value readable both ways
    # has no knowable truth (unless day == month).
    pairs = []
    for _ in range(n // 2):
        d = _date(rng, 1990, 2030)
        order = rng.choice(["dmy", "mdy"])
        text = _numeric(d, order, "/", True, 4)
        known = d.day > 12 or d.day == d.month
        pairs.append((text, _at(d) if known else None, None))
    yield _text_col("contradicting D/M and M/D", "merged_dates", pairs)


def not_dates(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Columns a scan must not take for dates: member numbers, amounts, times of day alone.
    ids = rng.sample(range(1001, 9999), n // 2)
    yield LabelledColumn(
        "not dates: member numbers",
        "member_no",
        list(ids),
        [CellKind.INT] * len(ids),
        [None] * len(ids),
        [None] * len(ids),
        SourceFacts(format="xlsx"),
    )
    amounts = [round(rng.uniform(5, 2500), 2) for _ in range(n // 2)]
    yield LabelledColumn(
        "not dates: amounts",
        "fee_paid",
        amounts,
        [CellKind.FLOAT] * len(amounts),
        [None] * len(amounts),
        [None] * len(amounts),
        SourceFacts(format="xlsx"),
    )
    times = [
        (f"{rng.randrange(24):02d}:{rng.randrange(60):02d}", None, None) for _ in range(n // 2)
    ]
    yield _text_col("not dates: times of day alone", "session_start", times)


def harder_forms(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Serials and epochs as CSV text; epoch seconds with a fraction; 12-hour clock with seconds.
    pairs = []
    for _ in range(n // 2):
        d = _date(rng, 1995, 2030)
        pairs.append((str((_at(d) - dt.datetime(1899, 12, 30)).days), _at(d), None))
    col = _text_col("serial 1900 as CSV text", "paid_csv", pairs)
    col.facts = SourceFacts(format="csv")
    yield col
    vals = []
    for _ in range(n // 2):
        t = _datetime(rng, 1995, 2030).replace(microsecond=rng.randrange(1000) * 1000)
        secs = (t - dt.datetime(1970, 1, 1)) / dt.timedelta(seconds=1)
        vals.append((f"{secs:.3f}", t, 0))
    col = _text_col("epoch s with fraction as text", "created_csv", vals)
    col.tolerance_us = 1000
    yield col
    pairs = []
    for _ in range(n // 2):
        t = _datetime(rng)
        hour = t.hour % 12 or 12
        ap = "AM" if t.hour < 12 else "PM"
        text = f"{t.day:02d}/{t.month:02d}/{t.year} {hour}:{t.minute:02d}:{t.second:02d} {ap}"
        pairs.append((text, t, None))
    pairs[0] = ("25/12/2023 1:05:09 PM", dt.datetime(2023, 12, 25, 13, 5, 9), None)
    yield _text_col("12-hour h:mm:ss D/M/YYYY", "finish_time", pairs)
    # month names with the ordinal suffixes of other languages (1er, 1º) and weekday names
    pairs = []
    for _ in range(n // 2):
        d = _date(rng, 1950, 2030)
        locale = rng.choice(["fr", "es", "pt"])
        day = str(d.day)
        if d.day == 1:
            day = "1er" if locale == "fr" else "1º"
        month = format_date(d, "MMMM", locale=locale)
        joiner = " " if locale == "fr" else " de "
        pairs.append((f"{day}{joiner}{month}{joiner}{d.year}", _at(d), None))
    yield _text_col("month names with 1er/1º", "event_first", pairs)


def mixed_zones_and_flags(rng: random.Random, n: int) -> Iterator[LabelledColumn]:
    # Naive and aware values in one column (the column should be flagged; each value keeps
    # what it says), plus values that must be flagged: a leap second, ISO week 53 of a year
    # with 52 weeks, hour 25, minute 60.
    pairs: list[tuple[str, dt.datetime | None, int | None]] = []
    for _ in range(n // 2):
        t = _datetime(rng)
        if rng.random() < 0.5:
            pairs.append((t.isoformat(timespec="seconds"), t, None))
        else:
            off = rng.choice([0, 60, -300])
            aware = t.replace(tzinfo=dt.timezone(dt.timedelta(minutes=off)))
            pairs.append((aware.isoformat(timespec="seconds"), t, off))
    bad = [
        "1990-12-31T23:59:60Z",
        "2016-12-31T23:59:60+00:00",
        "2021-03-04T25:00:00",
        "2021-03-04T10:60:00",
        "2022-02-29T10:00:00",
        "2023-04-31T08:00:00+02:00",
    ]
    for text in bad:
        pairs[rng.randrange(len(pairs))] = (text, None, None)
    yield _text_col("mixed naive/aware and flags", "signed_at", pairs)
    weeks = []
    for _ in range(n // 2):
        d = _date(rng, 1990, 2030)
        y, w, wd = d.isocalendar()
        weeks.append((f"{y:04d}-W{w:02d}-{wd}", _at(d), None))
    for text in ["2021-W53-1", "2019-W53-3", "2022-W00-1", "2020-W54-1", "2020-W10-8"]:
        weeks[rng.randrange(len(weeks))] = (text, None, None)
    yield _text_col("iso week with impossible weeks", "training_week", weeks)
    values: list[object] = []
    truth: list[dt.datetime | None] = []
    for _ in range(n // 2):
        d = _date(rng, 1995, 2030)
        values.append((_at(d) - dt.datetime(1899, 12, 30)).days)
        truth.append(_at(d))
    values[rng.randrange(len(values))] = 60  # 1900-02-29: no such day (ISO/IEC 29500 §18.17.4)
    truth = [None if v == 60 else t for v, t in zip(values, truth)]
    yield LabelledColumn(
        "serial 1900 with serial 60",
        "paid_legacy",
        values,
        [CellKind.INT] * len(values),
        truth,
        [None] * len(values),
        SourceFacts(format="xlsx"),
    )


FAMILIES: tuple[Callable[[random.Random, int], Iterator[LabelledColumn]], ...] = (
    iso_dates,
    iso_datetimes,
    iso_week_ordinal,
    numeric_dates,
    dates_of_birth,
    compact,
    month_names,
    clock_times,
    rfc5322,
    serials,
    epochs,
    date_cells,
    junk_and_impossible,
    undecidable,
    placeholders,
    noisy,
    mixed,
    contradicting,
    not_dates,
    harder_forms,
    mixed_zones_and_flags,
)


def build_corpus(seed: int = 20261201, n: int = 400) -> list[LabelledColumn]:
    """Every family's columns, about ``n`` values each, the same for the same seed."""
    rng = random.Random(seed)
    out: list[LabelledColumn] = []
    for fam in FAMILIES:
        out.extend(fam(rng, n))
    for col in out:
        assert len(col.values) == len(col.kinds) == len(col.truth) == len(col.offsets), col.name
    return out


def main() -> None:
    corpus = build_corpus()
    total = sum(len(c) for c in corpus)
    print(f"{len(corpus)} columns, {total} values")
    for c in corpus:
        unresolvable = sum(t is None for t in c.truth)
        print(
            f"  {c.family:32} {c.name:18} {len(c):5}  unresolvable {unresolvable:4}  "
            f"e.g. {c.values[0]!r}"
        )


if __name__ == "__main__":
    main()
