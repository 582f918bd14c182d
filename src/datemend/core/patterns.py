"""The pattern registry: every way of writing a date the engine reads, by a stable id.

A pattern is a *shape* of text. Column-wide decisions are not part of it: the day/month order of
numeric dates, the two-digit-year rule, the spreadsheet date system and the zone handling live in
the ``ParseSpec`` and apply to every pattern of a column alike. A time of day (24-hour, or 12-hour
with am/pm, a.m., PM …) and a UTC offset or zone name may follow any date shape.

Pattern ids (JSON-safe, never renamed):

=================  ============================================================================
``iso-date``       ISO 8601 calendar date, extended: ``1985-04-12``, ``1985-04-12T23:20:50.52Z``,
                   ``1985-04-12 10:00+02:00`` (T or space, fractions, Z, ±hh:mm, ±hhmm, ±hh)
``iso-week``       ISO 8601 week date: ``1985-W15-5``, ``1985W155``
``iso-ordinal``    ISO 8601 ordinal date: ``1985-102``, ``1985102``
``compact-ymd``    ``19850412`` (also ISO basic date-time ``19850412T101530Z``)
``compact-dmy``    ``12041985``
``compact-mdy``    ``04121985``
``compact-yymmdd`` ``850412``
``compact-ddmmyy`` ``120485``
``compact-mmddyy`` ``041285``
``ymd-slash``      ``1985/4/12``; ``ymd-dot`` ``1985.04.12``; ``ymd-space`` ``1985 04 12``
``num-slash``      day and month in the order the spec says, then the year: ``12/4/1985``,
                   ``4/12/85``; likewise ``num-dash`` (``12-04-1985``), ``num-dot``
                   (``12.04.1985``) and ``num-space`` (``12 04 1985``)
``yymd-slash``     a two-digit year first: ``85/04/12``; likewise ``yymd-dash``
                   (``85-04-12``) and ``yymd-dot`` (``85.04.12``); the year's place is
                   shown only by two-digit years with the same separator (98/12/31, 15/03/85);
                   where none does, ``num-*`` and these stay rivals
``name-dmy``       ``12 April 1985``, ``Fri 12th Apr 85``, ``12-avr.-1985``, ``12. März 1985``
``name-mdy``       ``April 12, 1985``, ``Friday, Apr 12th 1985``
``name-ymd``       ``1985 Apr 12``, ``1985-apr-12``
``asctime``        ISO C asctime / Unix log form, year last: ``Fri Apr 12 10:30:00 1985``
``rfc5322``        RFC 5322 message date-time: ``Fri, 21 Nov 1997 09:55:06 -0600``, obsolete
                   ``21 Nov 97 09:55:06 GMT`` (UT GMT EST EDT CST CDT MST MDT PST PDT)
``serial``         spreadsheet serial day number, 1900 or 1904 system (``ParseSpec.date_system``);
                   a fraction is the time of day: ``44927``, ``44927.5`` (a number: text
                   with a leading zero such as ``041470`` is no serial, nor epoch)
``epoch-s``        Unix time in seconds (POSIX, every day 86 400 s): ``1234567890``
``epoch-ms``       Unix time in milliseconds: ``1234567890123``
=================  ============================================================================

``render(pattern_id, dt, **opts)`` writes a datetime in a pattern, for examples and test data.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass, replace

import babel.dates as _bd

__all__ = ["PATTERNS", "Pattern", "label", "mix_label", "pattern", "render"]

_TIME = (
    r"(?:(?:t ?| )(?P<H>\d{1,2})(?::(?P<M>\d{2})(?::(?P<S>\d{2})(?:[.,](?P<F>\d{1,9}))?)?)?"
    r"(?: ?(?P<ap>am|pm))?)?"
)
_ZONE = r"(?: ?(?P<Z>z|utc|gmt|ut|[ecmp][sd]t|(?:utc|gmt)?[+-]\d{2}(?::?\d{2})?))?"
_TZ = _TIME + _ZONE + "$"
_Y = r"(?P<y>\d{4}|\d{2})"
_WD = r"(?:(?P<wd>\pL[\pL-]*) )?"
_NAME = r"(?P<mon>\pL+)"


@dataclass(frozen=True)
class Pattern:
    """One shape of text. ``shape`` is an RE2 regular expression over normalised text (lower
    case, single spaces, noise trimmed); ``kind`` says how its fields become a date."""

    id: str
    label: str
    family: str
    kind: str
    shape: str
    ambiguous_with: tuple[str, ...] = ()
    uses_day_order: bool = False
    #: Cheap features (see ``fields.features``) of which a text must have one to be tried.
    needs: tuple[str, ...] = ()
    #: The shape without its time and zone part (or a serial's fraction), tried first (a
    #: cheaper regex; most cells).
    simple: str | None = None


def _num(sep_id: str, sep: str, shown: str) -> Pattern:
    return Pattern(
        f"num-{sep_id}",
        f"D{shown}M{shown}YYYY or M{shown}D{shown}YYYY",
        "numeric",
        "num",
        rf"^(?P<a>\d{{1,2}}){sep}(?P<b>\d{{1,2}}){sep}{_Y}{_TZ}",
        (f"num-{sep_id}",),
        True,
    )


def _ymd(sep_id: str, sep: str, shown: str) -> Pattern:
    return Pattern(
        f"ymd-{sep_id}",
        f"YYYY{shown}M{shown}D",
        "numeric",
        "ymd",
        rf"^(?P<y>\d{{4}}){sep}(?P<m>\d{{1,2}}){sep}(?P<d>\d{{1,2}}){_TZ}",
    )


def _yymd(sep_id: str, sep: str, shown: str) -> Pattern:
    # Two-digit year first (24/03/15 for 2024-03-15): a rival of num-* on the same texts.
    return Pattern(
        f"yymd-{sep_id}",
        f"YY{shown}MM{shown}DD",
        "numeric",
        "ymd",
        rf"^(?P<y>\d{{2}}){sep}(?P<m>\d{{1,2}}){sep}(?P<d>\d{{1,2}}){_TZ}",
        (f"num-{sep_id}",),
    )


_COMPACT_TIME = (
    r"(?:t(?P<H>\d{2})(?P<M>\d{2})(?P<S>\d{2})?(?:[.,](?P<F>\d{1,9}))?"
    r"(?P<Z>z|[+-]\d{2}(?::?\d{2})?)?)?$"
)
_DIGITS = ("serial", "epoch-s", "epoch-ms", "iso-ordinal")

_ALL = [
    Pattern(
        "iso-date",
        "ISO 8601",
        "iso",
        "ymd",
        rf"^(?P<y>\d{{4}})-(?P<m>\d{{1,2}})-(?P<d>\d{{1,2}}){_TZ}",
    ),
    Pattern(
        "iso-week",
        "ISO 8601 week",
        "iso",
        "week",
        rf"^(?P<y>\d{{4}})-?w(?P<w>\d{{2}})-?(?P<u>\d){_TZ}",
    ),
    Pattern(
        "iso-ordinal",
        "ISO 8601 ordinal",
        "iso",
        "ordinal",
        rf"^(?P<y>\d{{4}})-?(?P<o>\d{{3}}){_TZ}",
        ("serial", "compact-dmy"),
    ),
    Pattern(
        "compact-ymd",
        "YYYYMMDD",
        "compact",
        "ymd",
        r"^(?P<y>\d{4})(?P<m>\d{2})(?P<d>\d{2})" + _COMPACT_TIME,
        ("compact-dmy", "compact-mdy", "epoch-s"),
    ),
    Pattern(
        "compact-dmy",
        "DDMMYYYY",
        "compact",
        "ymd",
        r"^(?P<d>\d{2})(?P<m>\d{2})(?P<y>\d{4})$",
        ("compact-mdy", "compact-ymd", "epoch-s"),
    ),
    Pattern(
        "compact-mdy",
        "MMDDYYYY",
        "compact",
        "ymd",
        r"^(?P<m>\d{2})(?P<d>\d{2})(?P<y>\d{4})$",
        ("compact-dmy", "compact-ymd", "epoch-s"),
    ),
    Pattern(
        "compact-yymmdd",
        "YYMMDD",
        "compact",
        "ymd",
        r"^(?P<y>\d{2})(?P<m>\d{2})(?P<d>\d{2})$",
        ("compact-ddmmyy", "compact-mmddyy", "serial"),
    ),
    Pattern(
        "compact-ddmmyy",
        "DDMMYY",
        "compact",
        "ymd",
        r"^(?P<d>\d{2})(?P<m>\d{2})(?P<y>\d{2})$",
        ("compact-yymmdd", "compact-mmddyy", "serial"),
    ),
    Pattern(
        "compact-mmddyy",
        "MMDDYY",
        "compact",
        "ymd",
        r"^(?P<m>\d{2})(?P<d>\d{2})(?P<y>\d{2})$",
        ("compact-yymmdd", "compact-ddmmyy", "serial"),
    ),
    _ymd("slash", "/", "/"),
    _ymd("dot", r"\.", "."),
    _ymd("space", " ", " "),
    _num("slash", "/", "/"),
    _num("dash", "-", "-"),
    _num("dot", r"\.", "."),
    _num("space", " ", " "),
    _yymd("slash", "/", "/"),
    _yymd("dash", "-", "-"),
    _yymd("dot", r"\.", "."),
    Pattern(
        "rfc5322",
        "RFC 5322",
        "names",
        "name",
        r"^(?:(?P<wd>[a-z]{3}) )?(?P<d>\d{1,2}) (?P<mon>[a-z]{3}) (?P<y>\d{4}|\d{2}) "
        r"(?P<H>\d{2}):(?P<M>\d{2})(?::(?P<S>\d{2}))? "
        r"(?P<Z>[+-]\d{4}|ut|gmt|z|[ecmp][sd]t)$",
        ("name-dmy",),
    ),
    Pattern(
        "name-dmy",
        "D Month YYYY",
        "names",
        "name",
        rf"^{_WD}(?P<d>\d{{1,2}})[ ./-]?{_NAME}[ ./-]?{_Y}{_TZ}",
    ),
    Pattern(
        "name-mdy",
        "Month D, YYYY",
        "names",
        "name",
        rf"^{_WD}{_NAME}[ ./-]?(?P<d>\d{{1,2}})[ ./-]{_Y}{_TZ}",
    ),
    Pattern(
        "name-ymd",
        "YYYY Month D",
        "names",
        "name",
        rf"^(?P<y>\d{{4}})[ ./-]?{_NAME}[ ./-]?(?P<d>\d{{1,2}}){_TZ}",
    ),
    Pattern(
        "asctime",
        "Www Mmm D hh:mm:ss YYYY",
        "names",
        "name",
        r"^(?:(?P<wd>\pL+) )?(?P<mon>\pL+) (?P<d>\d{1,2}) (?P<H>\d{1,2}):(?P<M>\d{2})"
        r"(?::(?P<S>\d{2}))?(?: (?P<Z>utc|gmt|z|[ecmp][sd]t))? (?P<y>\d{4})$",
    ),
    Pattern(
        "serial",
        "serial",
        "number",
        "serial",
        r"^(?P<i>0|[1-9]\d{0,6})(?:\.(?P<f>\d*))?$",  # a number: no leading zero
        ("epoch-s", "compact-yymmdd", "iso-ordinal"),
    ),
    Pattern(
        "epoch-s",
        "epoch s",
        "number",
        "epoch-s",
        r"^(?P<neg>-?)(?P<i>[1-9]\d{0,9})(?:\.(?P<f>\d{1,9}))?$",
        ("serial", "compact-ymd", "epoch-ms"),
    ),
    Pattern(
        "epoch-ms",
        "epoch ms",
        "number",
        "epoch-ms",
        r"^(?P<neg>-?)(?P<i>[1-9]\d{0,12})(?:\.(?P<f>\d{1,6}))?$",
        ("epoch-s",),
    ),
    Pattern("date-cell", "date cell", "cell", "cell", ""),
]

_NEEDS = {
    "iso-date": ("dash",),
    "iso-week": ("w",),
    "iso-ordinal": ("digits", "dash"),
    "compact-ymd": ("digits", "t"),
    "ymd-slash": ("slash",),
    "num-slash": ("slash",),
    "ymd-dot": ("dot",),
    "num-dot": ("dot",),
    "ymd-space": ("space",),
    "num-space": ("space",),
    "num-dash": ("dash",),
    "yymd-slash": ("slash",),
    "yymd-dash": ("dash",),
    "yymd-dot": ("dot",),
    "rfc5322": ("alpha",),
    "name-dmy": ("alpha",),
    "name-mdy": ("alpha",),
    "name-ymd": ("alpha",),
    "asctime": ("alpha",),
}

#: The optional fraction of a day after a serial number.
_SERIAL_FRACTION = r"(?:\.(?P<f>\d*))?$"


def _simple(p: Pattern) -> str | None:
    """The shape without its time and zone (or a serial without its fraction): what most
    values of the pattern look like. What the rest of the shape adds begins with no digit."""
    if p.shape.endswith(_TZ):
        return p.shape[: -len(_TZ)] + "$"
    if p.kind == "serial" and p.shape.endswith(_SERIAL_FRACTION):
        return p.shape[: -len(_SERIAL_FRACTION)] + "$"
    return None


#: Every pattern by id, in the engine's default priority order.
PATTERNS: dict[str, Pattern] = {
    p.id: replace(
        p,
        needs=_NEEDS.get(p.id, ("digits",) if p.kind != "cell" else ()),
        simple=_simple(p),
    )
    for p in _ALL
}


def pattern(pattern_id: str) -> Pattern:
    """The pattern with this id; KeyError names the unknown id."""
    try:
        return PATTERNS[pattern_id]
    except KeyError:
        raise KeyError(f"unknown pattern id {pattern_id!r}") from None


def label(
    pattern_id: str,
    *,
    day_order: str | None = None,
    date_system: int = 1900,
    two_digit_year: bool = False,
) -> str:
    """A short human label: "M/D/YYYY", "serial 1904", "ISO 8601 week"."""
    p = pattern(pattern_id)
    if p.kind == "num":
        sep = p.label[1]
        y = "YY" if two_digit_year else "YYYY"
        if day_order == "dmy":
            return f"D{sep}M{sep}{y}"
        if day_order == "mdy":
            return f"M{sep}D{sep}{y}"
        return f"D{sep}M{sep}{y} or M{sep}D{sep}{y}"
    if p.id == "serial":
        return f"serial {date_system}"
    if two_digit_year and p.label.endswith("YYYY"):
        return p.label[:-2]
    return p.label


def mix_label(mix: list[tuple[str, int]] | tuple[tuple[str, int], ...]) -> str:
    """ "M/D/YYYY 70% · ISO 8601 20% · serial 1900 8%" from (label, count) pairs."""
    total = sum(c for _, c in mix)
    if total == 0:
        return "no dates"
    parts = []
    for lab, c in mix:
        pct = 100 * c / total
        shown = f"{pct:.0f}%" if pct >= 1 or pct == 0 else "<1%"
        if pct > 99 and c < total:
            shown = ">99%"
        parts.append(f"{lab} {shown}")
    return " · ".join(parts)


# --- rendering ---------------------------------------------------------------------------------

_EPOCH = _dt.datetime(1970, 1, 1, tzinfo=_dt.UTC)


def _ordinal_suffix(day: int, language: str) -> str:
    if language == "en":
        if 10 < day % 100 < 14:
            return "th"
        return {1: "st", 2: "nd", 3: "rd"}.get(day % 10, "th")
    if language == "fr":
        return "er" if day == 1 else ""
    if language in ("es", "pt", "it"):
        return "º" if day == 1 else ""
    if language == "nl":
        return "ste" if day in (1, 8) or day >= 20 else "de"
    return "."


def _time_text(dt: _dt.datetime, time: str, clock: str) -> str:
    if clock == "12":
        h = dt.hour % 12 or 12
        base = f"{h}:{dt.minute:02d}"
    else:
        base = f"{dt.hour:02d}:{dt.minute:02d}"
    if time in ("hms", "hms.f"):
        base += f":{dt.second:02d}"
    if time == "hms.f":
        base += f".{dt.microsecond:06d}"
    if clock == "12":
        base += " PM" if dt.hour >= 12 else " AM"
    return base


def _offset_text(offset_min: int, style: str) -> str:
    if offset_min == 0 and style == "Z":
        return "Z"
    sign = "-" if offset_min < 0 else "+"
    h, m = divmod(abs(offset_min), 60)
    if style == "basic":
        return f"{sign}{h:02d}{m:02d}"
    return f"{sign}{h:02d}:{m:02d}"


def _serial(dt: _dt.datetime, date_system: int) -> float:
    if date_system == 1904:
        base = _dt.datetime(1904, 1, 1)
        return (dt - base) / _dt.timedelta(days=1)
    if dt < _dt.datetime(1900, 3, 1):
        return (dt - _dt.datetime(1899, 12, 31)) / _dt.timedelta(days=1)
    return (dt - _dt.datetime(1899, 12, 30)) / _dt.timedelta(days=1)


def render(
    pattern_id: str,
    dt: _dt.datetime | _dt.date,
    *,
    day_order: str = "dmy",
    year_digits: int = 4,
    pad: bool = True,
    time: str = "none",
    clock: str = "24",
    offset_min: int | None = None,
    offset_style: str = "colon",
    separator: str = "T",
    language: str = "en",
    width: str = "wide",
    weekday: bool = False,
    ordinal: bool = False,
    case: str = "title",
    date_system: int = 1900,
) -> str:
    """Write ``dt`` in the pattern ``pattern_id``.

    ``time``: "none", "hm", "hms" or "hms.f"; ``clock``: "24" or "12" (adds AM/PM);
    ``offset_min``: minutes east of UTC to append (``offset_style`` "colon", "basic" or "Z").
    Numeric patterns (serial, epoch) write the wall clock as given; an aware ``dt`` is first
    moved to UTC for epochs. For ``num-*``, ``day_order`` is "dmy" or "mdy".
    """
    p = pattern(pattern_id)
    if not isinstance(dt, _dt.datetime):
        dt = _dt.datetime(dt.year, dt.month, dt.day)
    if p.id in ("epoch-s", "epoch-ms"):
        aware = dt if dt.tzinfo else dt.replace(tzinfo=_dt.UTC)
        delta = aware - _EPOCH
        us = (delta.days * 86400 + delta.seconds) * 1_000_000 + delta.microseconds
        if p.id == "epoch-s":
            s, frac = divmod(us, 1_000_000)
            return f"{s}.{frac:06d}" if frac else str(s)
        ms, frac = divmod(us, 1000)
        return f"{ms}.{frac:03d}" if frac else str(ms)
    if p.id == "serial":
        v = _serial(dt.replace(tzinfo=None), date_system)
        if v.is_integer():
            return str(int(v))
        return repr(round(v, 10))
    y4 = f"{dt.year:04d}"
    yy = y4 if year_digits == 4 else f"{dt.year % 100:02d}"
    dd = f"{dt.day:02d}" if pad else str(dt.day)
    mm = f"{dt.month:02d}" if pad else str(dt.month)
    tail = ""
    if time != "none" and p.id not in ("rfc5322", "asctime"):
        sep = separator if p.id == "iso-date" else " "
        tail = sep + _time_text(dt, time, clock)
        if offset_min is not None:
            tail += _offset_text(offset_min, offset_style)
    if p.id == "iso-date":
        out = f"{y4}-{dt.month:02d}-{dt.day:02d}"
    elif p.id == "iso-week":
        iy, iw, iu = dt.isocalendar()
        out = f"{iy:04d}-W{iw:02d}-{iu}"
    elif p.id == "iso-ordinal":
        out = f"{y4}-{dt.timetuple().tm_yday:03d}"
    elif p.kind == "ymd" and p.id.startswith("compact"):
        order = p.id.split("-")[1]
        fields = {"y": y4, "m": f"{dt.month:02d}", "d": f"{dt.day:02d}"}
        if len(order) == 6:  # yymmdd etc.
            fields["y"] = f"{dt.year % 100:02d}"
            order = order[::2]
        out = "".join(fields[c] for c in order)
        if time != "none":
            out += "T" + dt.strftime("%H%M%S")
            if offset_min is not None:
                out += _offset_text(offset_min, "basic" if offset_style != "Z" else "Z")
            tail = ""
    elif p.id.startswith("yymd-"):
        sep = p.label[2]
        out = f"{dt.year % 100:02d}{sep}{mm}{sep}{dd}"
    elif p.kind == "ymd":
        sep = {"ymd-slash": "/", "ymd-dot": ".", "ymd-space": " "}[p.id]
        out = f"{y4}{sep}{mm}{sep}{dd}"
    elif p.kind == "num":
        sep = p.label[1]
        first, second = (dd, mm) if day_order == "dmy" else (mm, dd)
        out = f"{first}{sep}{second}{sep}{yy}"
    else:
        out = _render_named(p.id, dt, yy, dd, language, width, weekday, ordinal, offset_min, time)
    out += tail
    if case == "upper":
        out = out.upper()
    elif case == "lower":
        out = out.lower()
    return out


def _render_named(
    pid: str,
    dt: _dt.datetime,
    yy: str,
    dd: str,
    language: str,
    width: str,
    weekday: bool,
    ordinal: bool,
    offset_min: int | None,
    time: str = "hms",
) -> str:
    if pid == "asctime":
        wd = _bd.get_day_names("abbreviated", "format", "en")[dt.weekday()].rstrip(".")
        mon = _bd.get_month_names("abbreviated", "format", "en")[dt.month].rstrip(".")
        clock = (
            "00:00:00" if time == "none" else dt.strftime("%H:%M" if time == "hm" else "%H:%M:%S")
        )
        return f"{wd} {mon} {dt.day} {clock} {dt.year}"
    if pid == "rfc5322":
        wd = _bd.get_day_names("abbreviated", "format", "en")[dt.weekday()].rstrip(".")
        mon = _bd.get_month_names("abbreviated", "format", "en")[dt.month].rstrip(".")
        zone = _offset_text(offset_min or 0, "basic") if offset_min is not None else "GMT"
        return f"{wd}, {dt.day} {mon} {yy} {dt:%H:%M:%S} {zone}"
    mon = _bd.get_month_names(width, "format", language)[dt.month]
    if ordinal:
        dd = f"{dt.day}{_ordinal_suffix(dt.day, language)}"
    wd = ""
    if weekday:
        wd = _bd.get_day_names(width, "format", language)[dt.weekday()] + " "
        if pid == "name-mdy":
            wd = wd.strip() + ", "
    if pid == "name-dmy":
        return f"{wd}{dd} {mon} {yy}"
    if pid == "name-mdy":
        return f"{wd}{mon} {dd}, {yy}"
    # name-ymd reads a four-digit year only: "23 märz 25" would be D Month YY to any reader.
    return f"{dt.year:04d} {mon} {dd}"
