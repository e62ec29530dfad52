"""Short tours, paths and observing sequences from the wend core, with NumPy arrays in and out.

Solving
    :func:`solve_points` (coordinates under a TSPLIB distance), :func:`solve_matrix` (a square
    integer cost matrix, symmetric or not) and :func:`solve_file` (a TSPLIB file) return a
    :class:`TourResult`: the order of the nodes (0-based), its length, the lower bound when
    asked, the stop reason and the improvement trace.

Files
    :func:`read_tsplib`, :func:`write_tsplib`, :func:`read_tour`, :func:`write_tour`.
    Node numbers are 1-based in files and 0-based in Python.

Observing plans
    :func:`plan_sky` turns a table of sky targets into an observing sequence and returns
    pandas DataFrames. **Caution:** plans are planning proposals to be confirmed by the
    operations team's validated tools.

The core runs with the GIL released. Ctrl-C (KeyboardInterrupt) during a solve or a plan stops
the core and returns the best result found so far, with ``stop_reason == "cancelled"`` (for a
plan: ``SkyPlan.cancelled``); the KeyboardInterrupt is not raised again.

Bad input raises :class:`ValueError` with the core's message (``file:line: ...`` for files);
a file that cannot be read or written raises :class:`OSError`.
"""

from __future__ import annotations

import io
import json
import math
import os
from dataclasses import dataclass, field
from typing import Any, List, Mapping, Optional, Sequence, Tuple, Union

import numpy as np

from . import _native

__all__ = [
    "CAUTION",
    "DISTANCES",
    "Problem",
    "SkyPlan",
    "TourData",
    "TourResult",
    "methods",
    "plan_sky",
    "read_tour",
    "read_tsplib",
    "solve_file",
    "solve_matrix",
    "solve_points",
    "write_tour",
    "write_tsplib",
]

__version__: str = _native.VERSION

#: The caution every observing plan carries.
CAUTION: str = _native.CAUTION

#: The TSPLIB distance names :func:`solve_points` accepts.
DISTANCES: Tuple[str, ...] = (
    "EUC_2D",
    "EUC_3D",
    "CEIL_2D",
    "ATT",
    "GEO",
    "MAN_2D",
    "MAN_3D",
    "MAX_2D",
    "MAX_3D",
)

PathLike = Union[str, "os.PathLike[str]"]


@dataclass(frozen=True)
class TourResult:
    """What a solve returns.

    Attributes:
        order: the nodes in visiting order, 0-based (``numpy.int64``). A closed tour starts at
            node 0 (or the fixed start); a path runs from its first node to its last.
        length: its exact length on the given costs (with the return step for a closed tour,
            without it for a path).
        lower_bound: a lower bound on every tour (or path with the same ends) when asked for
            with ``lower_bound=True`` (Held–Karp for symmetric costs, the assignment bound for
            asymmetric ones), else ``None``.
        stop_reason: why the search ended: ``iteration_budget``, ``restart_budget``,
            ``time_limit``, ``cancelled`` (Ctrl-C), ``exhaustive``, ``constructed``,
            ``target_reached`` or ``stall_limit``.
        seconds: wall-clock seconds of the search.
        method: the method that ran.
        ends: ``closed``, ``open``, ``start``, ``end`` or ``start-end``.
        restarts: runs or restarts completed.
        iterations: steps of an iterative method over all runs (kicks for ``lk``).
        trace: every new best tour as a row ``(seconds, length)``, shape ``(k, 2)``: the
            anytime curve of the run.
    """

    order: np.ndarray = field(repr=False)
    length: int
    lower_bound: Optional[int]
    stop_reason: str
    seconds: float
    method: str
    ends: str
    restarts: int
    iterations: int
    trace: np.ndarray = field(repr=False)

    @property
    def gap_percent(self) -> Optional[float]:
        """How far above the lower bound the length is, in percent (``None`` without a bound)."""
        if self.lower_bound is None or self.lower_bound <= 0:
            return None
        return 100.0 * (self.length - self.lower_bound) / self.lower_bound


@dataclass(frozen=True)
class Problem:
    """A TSPLIB problem file.

    Attributes:
        name, comments, kind (``TSP`` or ``ATSP``), dimension, edge_weight_type,
        edge_weight_format: the header.
        points: ``n x 2`` or ``n x 3`` coordinates for coordinate instances, else ``None``.
        metric: their TSPLIB distance name, else ``None``.
        matrix: the full ``n x n`` integer matrix for explicit instances, else ``None``.
        display: ``n x 2`` points to draw the nodes at, when the file has them.
    """

    name: str
    comments: List[str]
    kind: str
    dimension: int
    edge_weight_type: str
    edge_weight_format: Optional[str]
    points: Optional[np.ndarray] = field(repr=False)
    metric: Optional[str]
    matrix: Optional[np.ndarray] = field(repr=False)
    display: Optional[np.ndarray] = field(repr=False)


@dataclass(frozen=True)
class TourData:
    """A TSPLIB TOUR file: its name, comments, dimension (or ``None``) and the 0-based order."""

    name: str
    comments: List[str]
    dimension: Optional[int]
    order: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class SkyPlan:
    """An observing plan. **Caution:** plans are planning proposals to be confirmed by the
    operations team's validated tools.

    Attributes:
        plan: one row per observation in time order, the columns of ``plan.csv``:
            position, id, start_utc, end_utc, elongation_start_deg, elongation_end_deg,
            slew_deg, slew_s, wait_before_s, busy_before_s, momentum_nms, dump.
        unscheduled: one row per target left out, the columns of ``unscheduled.csv``: id,
            reason, explanation, min_elongation_deg, max_elongation_deg.
        summary: the JSON summary of ``wend sky plan --json`` as a dictionary (``elapsed_s``:
            until the last observation ends, waiting included; ``busy_overhead_s``: slews,
            settles, thermal, setups and dumps, no waiting; ``wait_s``; with ``front=True``
            also ``hypervolume_h_g`` and its ``hypervolume_reference``).
        front: with ``front=True``, one row per plan of the front of busy overhead against
            propellant, the columns of ``front.csv`` (plan, busy_overhead_s, wait_s,
            elapsed_s, propellant_kg, dumps, scheduled); else ``None``.
        front_plans: with ``front=True``, each front plan's table (like ``plan``), in the
            order of ``front``; else an empty list.
        cancelled: ``True`` when Ctrl-C stopped the search (the plan is then made from the best
            order found so far).
        caution: the caution the plan carries (also in every DataFrame's ``attrs["caution"]``).
    """

    plan: Any
    unscheduled: Any
    summary: dict
    front: Any
    front_plans: list
    cancelled: bool
    caution: str = CAUTION


def methods() -> List[Tuple[str, str]]:
    """The methods :func:`solve_points` and friends accept, as ``(name, description)``."""
    return [tuple(m) for m in _native.methods()]  # type: ignore[misc]


def _int_option(name: str, value: Any, low: int, optional: bool = True) -> Optional[int]:
    if value is None:
        if optional:
            return None
        raise ValueError(f"{name} must be given")
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        raise ValueError(f"{name} must be an integer, got {value!r}")
    v = int(value)
    if v < low or v >= 2**64:
        raise ValueError(f"{name} must be an integer of at least {low}, got {v}")
    return v


def _float_option(name: str, value: Any) -> Optional[float]:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ValueError(f"{name} must be a number of seconds, got {value!r}")
    return float(value)


def _options(
    method: str,
    time_limit: Optional[float],
    seed: int,
    threads: Optional[int],
    iterations: Optional[int],
    restarts: Optional[int],
    open: bool,
    start: Optional[int],
    end: Optional[int],
    lower_bound: bool,
    bound_time: float,
    settings: Optional[Mapping[str, Any]],
) -> dict:
    if not isinstance(method, str):
        raise ValueError(f"method must be a method name, got {method!r}")
    pairs = []
    for k, v in (settings or {}).items():
        pairs.append((str(k), str(v)))
    return {
        "method": method,
        "time_limit": _float_option("time_limit", time_limit),
        "seed": _int_option("seed", seed, 0, optional=False),
        "threads": _int_option("threads", threads, 1),
        "iterations": _int_option("iterations", iterations, 0),
        "restarts": _int_option("restarts", restarts, 1),
        "open": bool(open),
        "start": _int_option("start", start, 0),
        "end": _int_option("end", end, 0),
        "lower_bound": bool(lower_bound),
        "bound_time": float(_float_option("bound_time", bound_time) or 0.0),
        "settings": pairs,
    }


def _result(d: dict) -> TourResult:
    return TourResult(
        order=d["order"],
        length=int(d["length"]),
        lower_bound=None if d["lower_bound"] is None else int(d["lower_bound"]),
        stop_reason=d["stop_reason"],
        seconds=float(d["seconds"]),
        method=d["method"],
        ends=d["ends"],
        restarts=int(d["restarts"]),
        iterations=int(d["iterations"]),
        trace=d["trace"],
    )


def _points_array(points: Any) -> np.ndarray:
    try:
        a = np.asarray(points)
    except Exception as e:  # ragged lists and the like
        raise ValueError(f"points must be an n x 2 or n x 3 array of numbers: {e}") from None
    if a.dtype == object or not (
        np.issubdtype(a.dtype, np.floating) or np.issubdtype(a.dtype, np.integer)
    ) or a.dtype == np.bool_:
        raise ValueError(f"points must be an array of numbers, got dtype {a.dtype}")
    if a.ndim != 2 or a.shape[1] not in (2, 3):
        raise ValueError(f"points must be an n x 2 or n x 3 array, got shape {a.shape}")
    if a.shape[0] == 0:
        raise ValueError("points is empty: give at least one node")
    a = np.ascontiguousarray(a, dtype=np.float64)
    bad = ~np.isfinite(a)
    if bad.any():
        i, k = np.argwhere(bad)[0]
        raise ValueError(f"node {i}: coordinate {k} is not a finite number ({a[i, k]})")
    return a


def _matrix_array(matrix: Any) -> np.ndarray:
    try:
        a = np.asarray(matrix)
    except Exception as e:
        raise ValueError(f"the cost matrix must be a square array of integers: {e}") from None
    if a.ndim != 2 or a.shape[0] != a.shape[1]:
        raise ValueError(f"the cost matrix must be square, got shape {a.shape}")
    if a.shape[0] == 0:
        raise ValueError("the cost matrix is empty: give at least one node")
    if a.dtype == np.bool_ or a.dtype == object:
        raise ValueError(f"the cost matrix must hold integers, got dtype {a.dtype}")
    if np.issubdtype(a.dtype, np.integer):
        if a.dtype == np.uint64 and a.size and a.max() > np.iinfo(np.int64).max:
            raise ValueError("the cost matrix has entries too large for 64-bit integers")
        return np.ascontiguousarray(a, dtype=np.int64)
    if np.issubdtype(a.dtype, np.floating):
        bad = ~np.isfinite(a)
        if bad.any():
            i, j = np.argwhere(bad)[0]
            raise ValueError(f"cost matrix entry ({i}, {j}) is not a finite number ({a[i, j]})")
        whole = a == np.round(a)
        if not whole.all():
            i, j = np.argwhere(~whole)[0]
            raise ValueError(
                f"cost matrix entry ({i}, {j}) = {a[i, j]} is not a whole number; "
                "costs are integers (scale and round them first)"
            )
        if a.size and np.abs(a).max() >= 2.0**63:
            raise ValueError("the cost matrix has entries too large for 64-bit integers")
        return np.ascontiguousarray(a, dtype=np.int64)
    raise ValueError(f"the cost matrix must hold integers, got dtype {a.dtype}")


_SOLVE_DOC = """
    Options (the same meaning as the ``wend solve`` options of the same idea):
        method: ``lk`` (default), ``2opt``, ``or-opt``, ``acs``, ``mmas``, ``anneal``, ...
            (see :func:`methods`).
        time_limit: stop after this many seconds and return the best tour so far.
        seed: seed of all random choices; the same seed, restarts and iterations give the same
            tour on any number of threads.
        threads: worker threads (default: one per core).
        iterations: steps per run (kicks for ``lk``, generations for the ant colonies); with
            such a budget the result does not depend on timing.
        restarts: independent runs (``lk``, ``anneal``, colonies) or restarts (``2opt``).
        open: find an open path (no return to the first node) instead of a closed tour.
        start, end: fix the first and/or last node of the path (0-based); with the same node
            for both, a closed tour starting there.
        lower_bound: also compute a lower bound (:attr:`TourResult.lower_bound`), for at most
            ``bound_time`` seconds.
        settings: method parameters by name, as ``{"key": value}``.

    Ctrl-C stops the search and returns the best tour so far (``stop_reason == "cancelled"``).
    Raises ValueError for bad input, with the core's message.
"""


def solve_points(
    points: Any,
    distance: str = "EUC_2D",
    *,
    method: str = "lk",
    time_limit: Optional[float] = None,
    seed: int = 0,
    threads: Optional[int] = None,
    iterations: Optional[int] = None,
    restarts: Optional[int] = None,
    open: bool = False,
    start: Optional[int] = None,
    end: Optional[int] = None,
    lower_bound: bool = False,
    bound_time: float = 10.0,
    settings: Optional[Mapping[str, Any]] = None,
) -> TourResult:
    """A short tour through points: an ``n x 2`` (or ``n x 3``) array of coordinates under a
    TSPLIB distance (``EUC_2D`` by default; see :data:`DISTANCES`), with TSPLIB's rounding to
    integer costs.
    """
    a = _points_array(points)
    if not isinstance(distance, str):
        raise ValueError(f"distance must be a TSPLIB distance name, got {distance!r}")
    opts = _options(method, time_limit, seed, threads, iterations, restarts, open, start, end,
                    lower_bound, bound_time, settings)
    return _result(_native.solve_points(a, distance, opts))


def solve_matrix(
    matrix: Any,
    *,
    method: str = "lk",
    time_limit: Optional[float] = None,
    seed: int = 0,
    threads: Optional[int] = None,
    iterations: Optional[int] = None,
    restarts: Optional[int] = None,
    open: bool = False,
    start: Optional[int] = None,
    end: Optional[int] = None,
    lower_bound: bool = False,
    bound_time: float = 10.0,
    settings: Optional[Mapping[str, Any]] = None,
) -> TourResult:
    """A short tour over a square cost matrix (``matrix[i, j]`` is the cost of going from ``i``
    to ``j``; symmetric or not). Entries must be integers (an integer array, or a float array
    of whole numbers).
    """
    a = _matrix_array(matrix)
    opts = _options(method, time_limit, seed, threads, iterations, restarts, open, start, end,
                    lower_bound, bound_time, settings)
    return _result(_native.solve_matrix(a, opts))


def solve_file(
    path: PathLike,
    *,
    method: str = "lk",
    time_limit: Optional[float] = None,
    seed: int = 0,
    threads: Optional[int] = None,
    iterations: Optional[int] = None,
    restarts: Optional[int] = None,
    open: bool = False,
    start: Optional[int] = None,
    end: Optional[int] = None,
    lower_bound: bool = False,
    bound_time: float = 10.0,
    settings: Optional[Mapping[str, Any]] = None,
) -> TourResult:
    """A short tour through a TSPLIB problem file (TYPE TSP or ATSP). With the same options it
    finds the same tour as ``wend solve`` (node numbers here are 0-based: ``start=0`` is the
    command's ``--start 1``).
    """
    opts = _options(method, time_limit, seed, threads, iterations, restarts, open, start, end,
                    lower_bound, bound_time, settings)
    return _result(_native.solve_file(os.fspath(path), opts))


for _f in (solve_points, solve_matrix, solve_file):
    _f.__doc__ = (_f.__doc__ or "") + _SOLVE_DOC


def read_tsplib(path: PathLike) -> Problem:
    """Reads a TSPLIB problem file (TYPE TSP or ATSP). Raises ValueError naming the file and
    line for a malformed file, OSError when it cannot be read."""
    d = _native.read_tsplib(os.fspath(path))
    return Problem(**d)


def write_tsplib(
    path: PathLike,
    *,
    points: Any = None,
    distance: str = "EUC_2D",
    matrix: Any = None,
    name: Optional[str] = None,
    comments: Sequence[str] = (),
) -> None:
    """Writes a TSPLIB problem file from either ``points`` under ``distance`` (TYPE TSP) or a
    square integer ``matrix`` (TYPE TSP when symmetric, else ATSP, as a FULL_MATRIX).
    Coordinates are written exactly: reading the file back gives the same points and costs.
    ``name`` defaults to the file name without its extension.
    """
    p = os.fspath(path)
    if name is None:
        name = os.path.splitext(os.path.basename(p))[0] or "problem"
    comments = [str(c) for c in comments]
    if (points is None) == (matrix is None):
        raise ValueError("give either points or matrix")
    if points is not None:
        _native.write_points(p, _points_array(points), distance, name, comments)
    else:
        _native.write_matrix(p, _matrix_array(matrix), name, comments)


def read_tour(path: PathLike) -> TourData:
    """Reads a TSPLIB TOUR file; the order comes back 0-based."""
    return TourData(**_native.read_tour(os.fspath(path)))


def write_tour(
    path: PathLike, order: Any, *, name: Optional[str] = None, comment: str = ""
) -> None:
    """Writes a 0-based order (a permutation of ``0..n``) as a TSPLIB TOUR file."""
    p = os.fspath(path)
    a = np.asarray(order)
    if a.ndim != 1 or not (np.issubdtype(a.dtype, np.integer)) or a.dtype == np.bool_:
        raise ValueError(f"order must be a 1-d array of integers, got shape {a.shape}, "
                         f"dtype {a.dtype}")
    if name is None:
        name = os.path.splitext(os.path.basename(p))[0] + ".tour"
    _native.write_tour(p, [int(v) for v in a], name, str(comment))


_TARGET_COLUMNS = ("id", "ra_deg", "dec_deg", "duration_s", "instrument")


def _cell(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, (float, np.floating)):
        f = float(v)
        if math.isnan(f):
            return "nan"
        return repr(f)
    if isinstance(v, (np.integer,)):
        return str(int(v))
    return str(v)


def _targets_csv(targets: Any) -> str:
    """The targets table as the text of a targets CSV (the core checks every value)."""
    if hasattr(targets, "to_dict") and hasattr(targets, "columns"):
        columns = [str(c) for c in targets.columns]
        data = {str(c): list(targets[c]) for c in targets.columns}
    elif isinstance(targets, Mapping):
        columns = [str(c) for c in targets.keys()]
        data = {str(c): list(np.asarray(v, dtype=object).ravel()) for c, v in targets.items()}
    else:
        raise ValueError(
            "targets must be a pandas DataFrame or a dict of arrays with the columns "
            "id, ra_deg, dec_deg, duration_s and optionally instrument"
        )
    lengths = {len(v) for v in data.values()}
    if len(lengths) > 1:
        raise ValueError(f"the target columns have different lengths: {sorted(lengths)}")
    import csv

    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(columns)
    n = lengths.pop() if lengths else 0
    text_columns = {"id", "instrument"}
    for i in range(n):
        row = []
        for c in columns:
            v = data[c][i]
            # An empty cell of a text column (NaN or None in pandas) stays empty: for the
            # instrument, the profile's first.
            if c in text_columns and (v is None or (isinstance(v, float) and math.isnan(v))):
                row.append("")
            else:
                row.append(_cell(v))
        w.writerow(row)
    return out.getvalue()


def _start_text(start: Any) -> Optional[str]:
    if start is None or isinstance(start, str):
        return start
    import datetime as _dt

    if isinstance(start, _dt.datetime):
        if start.tzinfo is None:
            raise ValueError("start must carry a time zone (e.g. datetime.timezone.utc)")
        return start.isoformat()
    if isinstance(start, _dt.date):
        return start.isoformat()
    raise ValueError(f"start must be an ISO 8601 string or a datetime, got {start!r}")


def plan_sky(
    targets: Any = None,
    *,
    start: Any = None,
    horizon_days: float = 14.0,
    time_limit: Optional[float] = None,
    seed: int = 0,
    threads: Optional[int] = None,
    profile: Optional[PathLike] = None,
    front: bool = False,
) -> SkyPlan:
    """Plans observations for a sun-shaded observatory far from Earth, as ``wend sky plan`` does.

    **Caution:** plans are planning proposals to be confirmed by the operations team's
    validated tools. Spacecraft operations can damage hardware.

    Args:
        targets: a pandas DataFrame or a dict of arrays with the targets CSV's columns ``id``,
            ``ra_deg``, ``dec_deg``, ``duration_s`` and optionally ``instrument``; ``None`` for
            the built-in demo targets of the invented Lantern Deep-Sky Observatory.
        start: plan start, an ISO 8601 string with a UTC offset (``2027-03-01T00:00:00Z``) or
            a time-zone-aware datetime; needed with targets (the demo starts at
            2027-03-01T00:00:00Z).
        horizon_days: length of the planning horizon, days.
        time_limit: seconds for the order search (default: as the command; with
            ``front=True`` the front search's seconds, default 30).
        seed: seed of the order search.
        threads: worker threads (default: one per core).
        profile: an observatory profile TOML file (default: the demo profile).
        front: also search the front of plans over busy overhead (waiting excluded) and
            propellant.

    Returns:
        a :class:`SkyPlan` whose DataFrames (``plan``, ``unscheduled``, ``front``) carry the
        caution in ``attrs["caution"]``. Needs pandas.

    Ctrl-C stops the search and returns the plan made from the best order so far
    (``SkyPlan.cancelled`` is then true). Raises ValueError for bad input.
    """
    import pandas as pd

    csv_text = None if targets is None else _targets_csv(targets)
    d = _native.plan_sky(
        csv_text,
        "targets",
        None if profile is None else os.fspath(profile),
        _start_text(start),
        float(horizon_days),
        _float_option("time_limit", time_limit),
        _int_option("seed", seed, 0, optional=False),
        _int_option("threads", threads, 1),
        bool(front),
    )
    caution = d["caution"]

    def frame(columns: dict) -> "pd.DataFrame":
        df = pd.DataFrame(columns)
        for c in ("start_utc", "end_utc"):
            if c in df.columns:
                df[c] = pd.to_datetime(df[c], utc=True)
        df.attrs["caution"] = caution
        return df

    f = d["front"]
    return SkyPlan(
        plan=frame(d["plan"]),
        unscheduled=frame(d["unscheduled"]),
        summary=json.loads(d["summary_json"]),
        front=None if f is None else frame(f["rows"]),
        front_plans=[] if f is None else [frame(p) for p in f["plans"]],
        cancelled=bool(d["cancelled"]),
        caution=caution,
    )
