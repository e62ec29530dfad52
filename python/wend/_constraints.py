"""The constraint arguments of the solve functions: their checks and their conversion into what
the extension module reads (a JSON object of 0-based constraints, a constraints table as CSV
text or a file, a start order).

Every check raises ValueError naming the argument and, for arrays, the row. The core checks the
whole afterwards (precedence cycles, overlapping windows, a stop given windows twice, ...) and
its messages come through as ValueError too.
"""

from __future__ import annotations

import csv as _csv
import io as _io
import json as _json
import math as _math
import os as _os
import typing as _t

import numpy as _np

#: The keyword-only constraint arguments of the solve functions, their defaults and types.
KEYWORDS: _t.Tuple[_t.Tuple[str, _t.Any, str], ...] = (
    ("windows", None, "_t.Any"),
    ("service", None, "_t.Any"),
    ("penalty", None, "_t.Any"),
    ("precedence", None, "_t.Any"),
    ("fixed_edges", None, "_t.Any"),
    ("depot", None, "_t.Optional[int]"),
    ("start_time", None, "_t.Optional[int]"),
    ("route", None, "_t.Optional[str]"),
    ("objective", None, "_t.Optional[str]"),
    ("initial_order", None, "_t.Any"),
    ("constraints", None, "_t.Any"),
)

#: What stands for the open side of a one-sided window (an earliest of NaN or -inf, a latest of
#: NaN or +inf): far beyond any schedule, small enough that no sum of times overflows.
OPEN = 2**53

#: The columns of a constraints table, as in the constraints CSV.
TABLE_COLUMNS = ("kind", "stop", "other", "earliest", "latest", "value")

#: The options of a plain solve that have no meaning under constraints, and what to use.
NOT_UNDER_CONSTRAINTS = {
    "open": "route='path'",
    "start": "depot=",
    "end": "a path from depot= (route='path') ending anywhere",
    "exact_method": "exact=True alone",
}

DOC = """
    Constraints, all keyword-only and optional (any of them, or a time-window file given to
    :func:`solve_file`, makes the solve a constrained one that returns a
    :class:`SequenceResult`). Stops are 0-based; times are integers in the costs' units
    (travelling from ``i`` to ``j`` takes ``cost[i, j]``):
        windows: the window of service start of each stop, an ``(n, 2)`` array of
            ``(earliest, latest)`` rows (NaN or -inf earliest, NaN or +inf latest: that side
            open; both open: no window); or, for several windows per stop, a list of ``n``
            lists of ``(earliest, latest)`` pairs (``[]`` or ``None``: no window), disjoint and
            sorted. A vehicle arriving early waits for the window to open.
        service: the service duration of each stop (length ``n``, at least 0).
        penalty: per stop, NaN (or ``None``) when the stop must be visited, else the penalty
            for leaving it out (at least 0): such a stop is optional.
        precedence: an ``(m, 2)`` array of ``(before, after)`` pairs, or ``(m, 4)`` with
            ``(before, after, min_lag, max_lag)``: ``after`` is served after ``before``, its
            start of service at least ``min_lag`` and at most ``max_lag`` after the start at
            ``before`` (NaN: no such lag).
        fixed_edges: a ``(k, 2)`` array of ``(a, b)``: ``b`` comes directly after ``a``.
        depot: the stop the sequence starts at (and a closed tour ends at); default 0.
        start_time: the time the sequence leaves the depot; default 0.
        route: ``"closed"`` (default, back to the depot, within its window) or ``"path"``
            (ending anywhere).
        objective: what is minimised: ``"travel"`` (default, the sum of the travel costs) or
            ``"completion"`` (the time the sequence ends, waiting counted); plus the
            penalties of the stops left out either way.
        initial_order: an order of stops to start the search from (improved, not kept).
        constraints: a constraints table in the layout of the project's constraints CSV: a
            pandas DataFrame or a list of dicts with the columns ``kind``, ``stop``,
            ``other``, ``earliest``, ``latest``, ``value`` (stops numbered from 1, as in the
            CSV; empty cells as NaN or ``None``; kinds ``window``, ``service``, ``optional``,
            ``before``, ``edge``, ``depot``, ``start``, ``path``), or the path of such a CSV
            file. Its errors name the table's line (line 2 is the first row).

    The constraints of a table, of the file and of the arguments are added together: a stop
    may get its windows, service and penalty from one place only; precedence pairs and fixed
    edges add up; ``depot``, ``start_time`` and ``route`` given as arguments override a
    table's. Under constraints ``method`` stays at its default (the constrained search) and
    ``exact=True`` runs the exact programme (up to 64 stops, no lags); ``open``, ``start``,
    ``end``, ``exact_method`` and ``tour_out`` are not available.

    When no order meets every constraint, the result says so (``feasible`` is ``False``, with
    the least-breaking order found and its ``violations``) rather than raising.
"""


def split(options: _t.Dict[str, _t.Any]) -> _t.Dict[str, _t.Any]:
    """Takes the constraint arguments out of ``options``; those given as ``None`` are dropped."""
    out = {}
    for name, _default, _annotation in KEYWORDS:
        if name in options:
            value = options.pop(name)
            if value is not None:
                out[name] = value
    return out


def refuse_plain_options(options: _t.Mapping[str, _t.Any]) -> None:
    """ValueError for an option of a plain solve that has no meaning under constraints."""
    for name, instead in NOT_UNDER_CONSTRAINTS.items():
        value = options.get(name)
        if value is not None and value is not False:
            raise ValueError(f"{name} is not available under constraints; use {instead}")


def _array(name: str, value: _t.Any) -> _np.ndarray:
    try:
        a = _np.asarray(value, dtype=_np.float64)
    except (TypeError, ValueError) as e:
        raise ValueError(f"{name} must be an array of numbers: {e}") from None
    return a


def _whole(name: str, v: float, low: _t.Optional[int] = None) -> int:
    """A finite whole number as an int, else ValueError naming it."""
    if not _math.isfinite(v):
        raise ValueError(f"{name} is not a finite number ({v})")
    if v != round(v):
        raise ValueError(f"{name} = {v} is not a whole number; times and costs are integers")
    if abs(v) >= OPEN:
        raise ValueError(f"{name} = {v} is too large (the limit is 2**53)")
    i = int(v)
    if low is not None and i < low:
        raise ValueError(f"{name} = {i} must be at least {low}")
    return i


def _stop(name: str, v: float, nodes: _t.Optional[int]) -> int:
    s = _whole(name, v, 0)
    if nodes is not None and s >= nodes:
        raise ValueError(f"{name} = {s} is not a stop (there are {nodes}, numbered from 0)")
    return s


def _rows(name: str, value: _t.Any, widths: _t.Tuple[int, ...]) -> _np.ndarray:
    """A 2-d array of numbers with one of the given row widths (an empty list: no rows)."""
    a = _array(name, value)
    if a.size == 0 and a.ndim <= 2:
        return a.reshape(0, widths[0])
    if a.ndim != 2 or a.shape[1] not in widths:
        shapes = " or ".join(f"(m, {w})" for w in widths)
        raise ValueError(f"{name} must be an array of shape {shapes}, got shape {a.shape}")
    return a


def _per_stop(name: str, value: _t.Any, nodes: _t.Optional[int]) -> _np.ndarray:
    a = _array(name, [_np.nan if v is None else v for v in value]
               if isinstance(value, (list, tuple)) else value)
    if a.ndim != 1:
        raise ValueError(f"{name} must be one value per stop (1-d), got shape {a.shape}")
    if nodes is not None and a.shape[0] != nodes:
        raise ValueError(f"{name} has {a.shape[0]} entries but there are {nodes} stops")
    return a


def _window(name: str, earliest: float, latest: float) -> _t.Optional[_t.Dict[str, int]]:
    """One window from its two ends (NaN or an infinity on the open side); None when both are
    open."""
    if earliest == _math.inf or latest == -_math.inf:
        raise ValueError(f"{name}: a window cannot open at +inf or close at -inf")
    low_open = _math.isnan(earliest) or earliest == -_math.inf
    high_open = _math.isnan(latest) or latest == _math.inf
    if low_open and high_open:
        return None
    e = -OPEN if low_open else _whole(f"{name} earliest", earliest)
    l_ = OPEN if high_open else _whole(f"{name} latest", latest)
    if l_ < e:
        raise ValueError(f"{name}: the window closes at {l_} before it opens at {e}")
    return {"earliest": e, "latest": l_}


def _windows(value: _t.Any, nodes: _t.Optional[int]) -> _t.List[_t.List[_t.Dict[str, int]]]:
    try:
        a = _np.asarray(value, dtype=_np.float64)
    except (TypeError, ValueError):
        a = None  # ragged: a list of lists of pairs
    table = a is not None and a.ndim == 2 and a.shape[1] > 0  # one (earliest, latest) row
    if table:
        if a.shape[1] != 2:
            raise ValueError(f"windows must be an (n, 2) array of (earliest, latest) rows, "
                             f"got shape {a.shape}")
        rows = [[pair] for pair in a]
    elif isinstance(value, (str, bytes)) or not isinstance(value, _t.Iterable):
        raise ValueError("windows must be an (n, 2) array or a list of n lists of "
                         f"(earliest, latest) pairs, got {value!r}")
    else:
        rows = [[] if w is None else list(w) for w in value]
    if nodes is not None and len(rows) != nodes:
        raise ValueError(f"windows has {len(rows)} rows but there are {nodes} stops")
    out = []
    for i, pairs in enumerate(rows):
        stop = []
        for k, pair in enumerate(pairs):
            where = f"windows row {i}" if table else f"windows[{i}][{k}]"
            p = _array(where, pair)
            if p.shape != (2,):
                raise ValueError(f"{where} must be a pair (earliest, latest), got {pair!r}")
            w = _window(where, float(p[0]), float(p[1]))
            if w is not None:
                stop.append(w)
        out.append(stop)
    return out


def _precedence(value: _t.Any, nodes: _t.Optional[int]) -> _t.List[_t.Dict[str, _t.Any]]:
    a = _rows("precedence", value, (2, 4))
    out = []
    for i, row in enumerate(a):
        where = f"precedence row {i}"
        before = _stop(f"{where} before", float(row[0]), nodes)
        after = _stop(f"{where} after", float(row[1]), nodes)
        lags = [None if _math.isnan(v) else _whole(f"{where} {n}", float(v))
                for n, v in zip(("min_lag", "max_lag"), row[2:])]
        lags += [None] * (2 - len(lags))
        out.append({"before": before, "after": after, "min_lag": lags[0], "max_lag": lags[1]})
    return out


def _fixed_edges(value: _t.Any, nodes: _t.Optional[int]) -> _t.List[_t.List[int]]:
    a = _rows("fixed_edges", value, (2,))
    return [[_stop(f"fixed_edges row {i} {end}", float(v), nodes)
             for end, v in zip(("from", "to"), row)] for i, row in enumerate(a)]


def _scalar(name: str, value: _t.Any) -> float:
    if isinstance(value, bool) or not isinstance(
            value, (int, float, _np.integer, _np.floating)):
        raise ValueError(f"{name} must be an integer, got {value!r}")
    return float(value)


def _word(name: str, value: _t.Any, words: _t.Tuple[str, ...]) -> str:
    if value not in words:
        raise ValueError(f"{name} must be one of {', '.join(map(repr, words))}, got {value!r}")
    return str(value)


def _table_cell(v: _t.Any) -> str:
    if v is None:
        return ""
    if isinstance(v, (float, _np.floating)):
        f = float(v)
        if _math.isnan(f):
            return ""
        return str(int(f)) if f == round(f) and abs(f) < OPEN else repr(f)
    if isinstance(v, _np.integer):
        return str(int(v))
    try:
        import pandas as _pd

        if v is _pd.NA:
            return ""
    except ImportError:
        pass
    return str(v)


def table_csv(table: _t.Any) -> str:
    """A constraints table (a DataFrame or a list of dicts) as constraints CSV text; the core
    reads and checks it."""
    if hasattr(table, "columns") and hasattr(table, "to_dict"):
        columns = [str(c) for c in table.columns]
        records = [dict(zip(columns, row)) for row in table.itertuples(index=False, name=None)]
    elif isinstance(table, (list, tuple)) and all(isinstance(r, _t.Mapping) for r in table):
        columns = []
        for r in table:
            columns += [str(k) for k in r if str(k) not in columns]
        records = [{str(k): v for k, v in r.items()} for r in table]
    else:
        raise ValueError(
            "constraints must be a pandas DataFrame, a list of dicts or the path of a "
            f"constraints CSV file, with the columns {', '.join(TABLE_COLUMNS)}"
        )
    out = _io.StringIO()
    w = _csv.writer(out, lineterminator="\n")
    w.writerow(columns)
    for r in records:
        w.writerow([_table_cell(r.get(c)) for c in columns])
    return out.getvalue()


def native_arguments(
    args: _t.Mapping[str, _t.Any], nodes: _t.Optional[int]
) -> _t.Tuple[str, _t.Optional[str], _t.Optional[str], _t.Optional[_t.List[int]]]:
    """The constraint arguments as the extension module takes them: the JSON object of the
    array arguments, the table as CSV text or a file path, and the start order. ``nodes`` is
    the number of stops when known (for a file, the core checks the counts)."""
    given: _t.Dict[str, _t.Any] = {}
    if "windows" in args:
        given["windows"] = _windows(args["windows"], nodes)
    if "service" in args:
        a = _per_stop("service", args["service"], nodes)
        given["service"] = [_whole(f"service[{i}]", float(v), 0) for i, v in enumerate(a)]
    if "penalty" in args:
        a = _per_stop("penalty", args["penalty"], nodes)
        given["penalty"] = [None if _math.isnan(v) else _whole(f"penalty[{i}]", float(v), 0)
                            for i, v in enumerate(a)]
    if "precedence" in args:
        given["precedence"] = _precedence(args["precedence"], nodes)
    if "fixed_edges" in args:
        given["fixed_edges"] = _fixed_edges(args["fixed_edges"], nodes)
    if "depot" in args:
        given["depot"] = _stop("depot", _scalar("depot", args["depot"]), nodes)
    if "start_time" in args:
        given["start_time"] = _whole("start_time", _scalar("start_time", args["start_time"]))
    if "route" in args:
        given["route"] = _word("route", args["route"], ("closed", "path"))
    if "objective" in args:
        given["objective"] = _word("objective", args["objective"], ("travel", "completion"))
    start = None
    if "initial_order" in args:
        a = _array("initial_order", args["initial_order"])
        if a.ndim != 1:
            raise ValueError(f"initial_order must be a 1-d sequence of stops, got shape {a.shape}")
        start = [_stop(f"initial_order[{i}]", float(v), nodes) for i, v in enumerate(a)]
    text = path = None
    table = args.get("constraints")
    if isinstance(table, (str, _os.PathLike)):
        path = _os.fspath(table)
    elif table is not None:
        text = table_csv(table)
    return _json.dumps(given), text, path, start


def schedule_table(rows: _t.List[_t.Mapping[str, _t.Any]]) -> _t.Any:
    """The schedule as a pandas DataFrame (``slack`` a nullable integer column) when pandas is
    installed, else the list of row dicts."""
    try:
        import pandas as _pd
    except ImportError:
        return [dict(r) for r in rows]
    columns = ("stop", "arrival", "start", "wait", "departure", "slack")
    data = {c: [r[c] for r in rows] for c in columns}
    df = _pd.DataFrame({c: _pd.array(data[c], dtype="Int64") if c == "slack"
                        else _np.asarray(data[c], dtype=_np.int64) for c in columns})
    return df
