"""Small columns run their regexes in Python's ``re``, large ones in Arrow's RE2: both paths
must give the same state, value, offset and reason for every golden input (the reference here
is the other path; each golden value is itself checked in its own test file)."""

from __future__ import annotations

import numpy as np
from tests.core import test_parse_iso, test_parse_names, test_parse_numbers, test_parse_numeric

from datemend.core.fields import SMALL
from datemend.core.parse import parse_texts
from datemend.core.spec import ParseSpec

TEXTS = sorted(
    {r[0] for r in test_parse_iso.ROWS}
    | {r[0] for r in test_parse_names.ROWS}
    | {r[0] for r in test_parse_numeric.ROWS}
    | {r[0] for r in test_parse_numbers.ROWS}
)
SPEC = ParseSpec(
    patterns=(
        "iso-date",
        "iso-week",
        "iso-ordinal",
        "compact-ymd",
        "rfc5322",
        "name-dmy",
        "name-mdy",
        "name-ymd",
        "asctime",
        "num-slash",
        "num-dash",
        "num-dot",
        "num-space",
        "ymd-slash",
        "ymd-dot",
        "ymd-space",
        "serial",
        "epoch-s",
        "epoch-ms",
    ),
    locales=("en", "fr", "de", "es", "it", "pt", "nl"),
)


def test_python_and_arrow_paths_agree() -> None:
    assert len(TEXTS) > SMALL  # one call takes the Arrow path
    big = parse_texts(TEXTS, SPEC)
    small = [parse_texts([t], SPEC) for t in TEXTS]  # one text each: the Python path
    for i, t in enumerate(TEXTS):
        s = small[i]
        got = (int(s.state[0]), s.value[0], int(s.offset[0]), bool(s.has_time[0]), s.reason[0])
        want = (int(big.state[i]), big.value[i], int(big.offset[i]), bool(big.has_time[i]))
        assert got[:4] == want or (np.isnat(got[1]) and np.isnat(want[1]) and got[0] == want[0]), t
        assert got[4] == big.reason[i], t
