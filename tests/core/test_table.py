"""RawColumn.text(): each cell as the text a user would search for (expected values by hand)."""

import datetime as dt

import numpy as np

from datemend.core.table import RawColumn, kinds_of


def test_text_of_each_kind_and_booleans_stay_apart_from_numbers():
    # Python holds True == 1 == 1.0: a shortcut over distinct values must not merge them.
    values = [1, True, 1.0, 0, False, "x", None, 2.5, dt.datetime(2024, 1, 2, 3, 4)]
    values += [dt.date(2024, 1, 2), dt.time(9, 30), "   ", "#N/A"]
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    kinds = kinds_of(arr)
    kinds[-1] = 8  # CellKind.ERROR: an error cell keeps its text
    got = RawColumn("c", arr, kinds).text().tolist()
    assert got == [
        "1",
        "TRUE",
        "1",
        "0",
        "FALSE",
        "x",
        None,
        "2.5",
        "2024-01-02T03:04:00",
        "2024-01-02",
        "09:30:00",
        None,
        "#N/A",
    ]
