"""The distinct texts of a column held as Python strings, by Arrow's hashing.

Two steps cost most of a big workbook column's scan: turning its Python strings into Arrow
strings (``pyarrow.array``, which holds Python's lock) and hashing those (Arrow's dictionary
encoding, which lets go of it). On a machine with two cores or more, a column of many text
cells is converted in parts and each part is hashed on a helper thread while the next part is
converted, and while the caller goes on with other work (the column's number cells). When
the first part's texts repeat (most columns), the later parts are looked up among the texts
seen so far and only the cells not found are hashed anew (``_Probe``); otherwise the parts'
distinct texts are joined afterwards (``_join``). Either way the codes and distinct texts, in
order of first appearance, are exactly what one hashing of the whole column gives.
"""

from __future__ import annotations

import itertools
import os
import threading
from collections.abc import Callable

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc

__all__ = ["OVERLAP_FROM", "start_encoding"]

#: Text cells from this many on are hashed part by part on a helper thread (below it, a thread
#: and the joining of parts cost more than the overlap gains).
OVERLAP_FROM = 200_000

#: Shares of the cells in each part: the last is smallest, as its hashing overlaps only with
#: what the caller does next (measured on the 1M-row benchmark column: 70 → 59 ms for the
#: conversion and hashing alone).
PARTS = (0.45, 0.35, 0.2)

#: (code of each cell, -1 at skipped cells; distinct texts as Python strings; the same as Arrow)
Encoded = tuple[np.ndarray, np.ndarray, pa.Array]


def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # not on every platform
        return os.cpu_count() or 1


def _codes(enc: pa.DictionaryArray | pa.Array) -> np.ndarray:
    """The indices of a dictionary array (or an integer array) as numpy, without copying
    (null slots unspecified)."""
    ix = enc.indices if isinstance(enc, pa.DictionaryArray) else enc
    width = ix.type.byte_width
    return np.frombuffer(ix.buffers()[1], f"<i{width}", count=len(ix), offset=ix.offset * width)


def start_encoding(
    values: np.ndarray, skip: np.ndarray, *, parts: tuple[float, ...] | None = None
) -> Callable[[], Encoded | None]:
    """Begin hashing the cells of ``values`` (an object array) not in ``skip``; returns the
    function that ends it. That function gives ``Encoded`` (codes in order of first
    appearance, int32 while the column has fewer than 2**31 cells), or None when Arrow cannot
    take the cells as strings (a cell is no ``str``, or a text cell holds None): the caller
    then takes another path. ``parts`` (shares of the cells) overrides the choice of parts;
    ``(1.0,)`` hashes in one go on the calling thread."""
    n = len(values)
    if parts is None:
        overlap = n - int(np.count_nonzero(skip)) >= OVERLAP_FROM and _cores() >= 2
        parts = PARTS if overlap else (1.0,)
    cuts = np.rint(np.concatenate([[0.0], np.cumsum(parts)]) * n).astype(np.int64)
    cuts[-1] = n
    bounds = [(int(a), int(b)) for a, b in itertools.pairwise(cuts) if b > a]
    if len(bounds) <= 1:
        arr = _convert(values, skip)
        if arr is None:
            return lambda: None
        enc = pc.dictionary_encode(arr)
        done = _join([enc], [(0, n)], skip)
        return lambda: done
    return _Overlapped(values, skip, bounds).finish


def _convert(values: np.ndarray, skip: np.ndarray) -> pa.Array | None:
    try:
        arr = pa.array(values, pa.string(), mask=skip)
    except (pa.ArrowException, TypeError, ValueError, UnicodeError):
        return None
    if arr.null_count != int(np.count_nonzero(skip)):  # a text cell held None
        return None
    return arr


def _join(
    encs: list[pa.DictionaryArray], bounds: list[tuple[int, int]], skip: np.ndarray
) -> Encoded:
    """The parts' codes and distinct texts as one hashing of the whole would give them: the
    parts' dictionaries, one after the other, hashed again keep the order of first
    appearance."""
    n = bounds[-1][1]
    if len(encs) == 1:
        codes = _codes(encs[0])
        codes = codes.astype(np.int32 if codes.itemsize <= 4 else np.int64)
        dictionary = encs[0].dictionary
    else:
        dicts = [e.dictionary for e in encs]
        whole = pc.dictionary_encode(pa.concat_arrays(dicts))
        dictionary = whole.dictionary
        trans = _codes(whole)
        codes = np.empty(n, dtype=np.int32 if n < 2**31 else np.int64)
        # the first part's distinct texts come first, in its own order: its codes stand
        first = 1 if np.array_equal(trans[: len(dicts[0])], np.arange(len(dicts[0]))) else 0
        base = len(dicts[0]) if first else 0
        if first:
            codes[bounds[0][0] : bounds[0][1]] = _codes(encs[0])
        for (a, b), enc, d in zip(bounds[first:], encs[first:], dicts[first:], strict=True):
            # clip: Arrow leaves the codes of null (skipped) slots unspecified
            np.take(trans[base : base + len(d)], _codes(enc), out=codes[a:b], mode="clip")
            base += len(d)
    codes[skip] = -1
    objects = dictionary.to_numpy(zero_copy_only=False).astype(object, copy=False)
    return codes, objects, dictionary


class _Probe:
    """The parts after the first looked up among the distinct texts seen so far (most texts
    of a column repeat, so most cells are found), only the cells not found hashed anew: no
    second hashing of the parts' distinct texts to join them. The distinct texts keep the
    order of first appearance: the first part's, then each part's new ones in its order."""

    def __init__(self, first: pa.DictionaryArray, bounds: list[tuple[int, int]]) -> None:
        n = bounds[-1][1]
        self.codes = np.empty(n, dtype=np.int32 if n < 2**31 else np.int64)
        a, b = bounds[0]
        self.codes[a:b] = _codes(first)
        self.known = [first.dictionary]
        self.size = len(first.dictionary)

    def add(self, arr: pa.Array, a: int, b: int) -> None:
        seen = self.known[0] if len(self.known) == 1 else pa.concat_arrays(self.known)
        found = pc.index_in(arr, value_set=seen)  # null where skipped or not seen yet
        self.codes[a:b] = _codes(found)
        if found.null_count > arr.null_count:
            new = pc.and_(found.is_null(), arr.is_valid()).to_numpy(zero_copy_only=False)
            enc = pc.dictionary_encode(arr.filter(pa.array(new)))
            part = self.codes[a:b]
            part[new] = _codes(enc) + self.size
            self.known.append(enc.dictionary)
            self.size += len(enc.dictionary)

    def finish(self, skip: np.ndarray) -> Encoded:
        dictionary = self.known[0] if len(self.known) == 1 else pa.concat_arrays(self.known)
        self.codes[skip] = -1
        objects = dictionary.to_numpy(zero_copy_only=False).astype(object, copy=False)
        return self.codes, objects, dictionary


class _Overlapped:
    """Convert part by part on the calling thread; hash each part, then join them, on one
    helper thread. The helper says when it has taken a part, so the caller's next conversion
    (which holds Python's lock throughout) starts only once the helper's hashing (which does
    not) is under way."""

    def __init__(self, values: np.ndarray, skip: np.ndarray, bounds: list[tuple[int, int]]) -> None:
        self._skip = skip
        self._bounds = bounds
        self._parts: list[pa.Array | None] = []
        self._ready = threading.Semaphore(0)  # one release per part handed over
        self._taken = threading.Semaphore(0)  # one release per part the helper has taken
        self._result: Encoded | None = None
        self._error: BaseException | None = None
        self._failed = False
        self._thread = threading.Thread(target=self._work, name="datemend-hash", daemon=True)
        self._thread.start()
        try:
            for i, (a, b) in enumerate(bounds):
                arr = _convert(values[a:b], skip[a:b])
                self._parts.append(arr)
                self._ready.release()
                if arr is None:
                    self._failed = True
                    break
                if i < len(bounds) - 1:  # no conversion follows the last part
                    self._taken.acquire()
        except BaseException:  # (memory, an interrupt): the helper is told to end, not left
            self._parts.append(None)
            self._ready.release()
            self._thread.join()
            raise

    def _work(self) -> None:
        encs: list[pa.DictionaryArray] = []
        probe: _Probe | None = None
        try:
            for i in range(len(self._bounds)):
                self._ready.acquire()
                arr = self._parts[i]
                if arr is None:
                    return
                self._taken.release()
                if probe is not None:
                    probe.add(arr, *self._bounds[i])
                    continue
                encs.append(pc.dictionary_encode(arr))
                if i == 0 and len(encs[0].dictionary) * 2 <= len(arr) - arr.null_count:
                    probe = _Probe(encs[0], self._bounds)  # texts repeat: look the rest up
            if probe is not None:
                self._result = probe.finish(self._skip)
            else:
                self._result = _join(encs, self._bounds, self._skip)
        except BaseException as exc:  # handed to the caller by finish()
            self._error = exc
            for _ in range(len(self._bounds)):  # the caller never waits on a dead helper
                self._taken.release()

    def finish(self) -> Encoded | None:
        self._thread.join()
        if self._error is not None:
            raise self._error
        return None if self._failed else self._result
