"""A table's scan runs columns on threads (``infer.scan(workers=)``): the reports must be the
ones a scan of one column after the other gives, in column order, and a Stop must end it."""

from __future__ import annotations

import threading

import pandas as pd
import pytest

from datemend.core.infer import scan, scan_workers
from datemend.core.progress import Cancelled, Progress
from datemend.core.table import RawTable


def _table() -> RawTable:
    n = 3000
    df = pd.DataFrame(
        {
            "Joined": [f"{1 + i % 28}/{1 + i % 12}/{1990 + i % 30}" for i in range(n)],
            "Seen": [f"{2000 + i % 25}-{1 + i % 12:02d}-{1 + i % 27:02d}" for i in range(n)],
            "Member no": [str(100000 + i) for i in range(n)],
            "Paid": [str(40000 + i % 9000) for i in range(n)],  # serial-like numbers
            "Notes": ["ok" if i % 3 else "n/a" for i in range(n)],
            "Stamp": [str(1_600_000_000 + 3600 * i) for i in range(n)],
        }
    )
    return RawTable.from_dataframe(df, text_only=True)


def test_workers_are_between_one_and_four() -> None:
    assert 1 <= scan_workers() <= 4


def test_threaded_scan_gives_the_reports_of_a_serial_one() -> None:
    one = scan(_table(), workers=1)
    two = scan(_table(), workers=3)
    assert [r.column for r in two] == ["Joined", "Seen", "Member no", "Paid", "Notes", "Stamp"]
    assert [repr(r) for r in two] == [repr(r) for r in one]
    assert any(r.is_date for r in one) and not all(r.is_date for r in one)


def test_progress_hears_of_columns_in_order() -> None:
    heard: list[str] = []
    scan(_table(), workers=2, progress=Progress(lambda d, t, text: heard.append(text)))
    assert heard[:6] == [f"scanning {c}" for c in _table().names]
    assert heard[-1] == "scan done"


def test_stop_ends_a_threaded_scan() -> None:
    seen = threading.Event()
    holder: list[Progress] = []

    def stop_at_second(done: int, total: int, text: str) -> None:
        if done == 1:
            holder[0].cancel()  # as the window's Stop button does, from the front end
            seen.set()

    holder.append(Progress(stop_at_second))
    with pytest.raises(Cancelled):
        scan(_table(), workers=2, progress=holder[0])
    assert seen.is_set()
