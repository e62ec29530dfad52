"""Short tours, paths and observing sequences from the wend core, with NumPy arrays in and out.

Solving
    :func:`solve_points` (coordinates under a TSPLIB distance), :func:`solve_matrix` (a square
    integer cost matrix, symmetric or not) and :func:`solve_file` (a TSPLIB file) take the
    options of ``wend solve`` under the same names (``time_limit`` for ``--time-limit``, ...)
    and return a :class:`TourResult` with the keys of ``wend solve --json``, the order of the
    nodes (0-based) and the improvement trace.

Exact proofs
    ``exact=True`` proves the tour optimal: the dynamic programme for small instances, then
    branch and cut on the linear programme (symmetric and asymmetric costs) when the module
    was built with it, else branch and bound on the 1-tree bound (symmetric costs only).
    :func:`exact_methods` says which methods this build has; the default build is light (no
    C++ compiler needed) and leaves branch and cut out. To build it in::

        python3 -m pip install ./python --config-settings="build-args=--features cuts"

Solving under constraints
    The same functions take time windows (``windows``), service durations (``service``),
    optional stops with penalties (``penalty``), precedence pairs with lags (``precedence``),
    fixed edges (``fixed_edges``), a depot, a start time, a closed tour or a path (``route``),
    the objective (``travel`` or ``completion``), an ``initial_order`` and a constraints table
    (``constraints=``: a DataFrame, a list of dicts or a constraints CSV file); stops are
    0-based. :func:`solve_file` also solves a plain time-window benchmark file under its
    windows. They return a :class:`SequenceResult`: feasibility, travel cost, completion
    time, waiting, penalties, the schedule (a DataFrame) and every violation. No feasible
    order is a result with ``feasible == False``, not an exception.

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

Bad input raises :class:`ValueError` with the core's message (``file:line: ...`` for files,
``option: ...`` for an option the core refuses); a file that cannot be read or written raises
:class:`OSError`.
"""

from __future__ import annotations

import dataclasses as _dc
import inspect as _inspect
import io as _io
import json as _json
import math as _math
import os as _os
import typing as _t
import warnings as _warnings

import numpy as _np

from . import _constraints
from . import _native

__all__ = [
    "CAUTION",
    "METRICS",
    "Problem",
    "SequenceResult",
    "SkyPlan",
    "TourData",
    "TourResult",
    "exact_methods",
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


def __dir__() -> _t.List[str]:
    """The package's API (PEP 562): what ``__all__`` exports and ``__version__``."""
    return sorted([*__all__, "__version__"])


def __getattr__(name: str) -> _t.Any:
    """Names of earlier releases, kept for one release with a ``DeprecationWarning``."""
    if name == "DISTANCES":
        _warnings.warn(
            "wend.DISTANCES is deprecated and will be removed in the next release; "
            "use wend.METRICS",
            DeprecationWarning,
            stacklevel=2,
        )
        return METRICS
    raise AttributeError(f"module 'wend' has no attribute {name!r}")


#: The caution every observing plan carries.
CAUTION: str = _native.CAUTION

#: The TSPLIB distance names :func:`solve_points` and :func:`write_tsplib` accept as their
#: ``metric``.
METRICS: _t.Tuple[str, ...] = (
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

PathLike = _t.Union[str, "_os.PathLike[str]"]


class TourResult:
    """What a solve returns: one attribute per key of ``wend solve --json`` (with
    ``exact=True``, of ``wend solve --exact --json``), plus ``order`` and ``trace``.

    :meth:`keys` lists the attributes a result has and :meth:`to_dict` gives them as a
    dictionary. Node numbers are 0-based (``start``, ``end``, ``order``), where the command's
    are the file's, from 1.

    Attributes of every result:
        order: the nodes in visiting order, 0-based (``numpy.int64``). A closed tour starts at
            node 0 (or the fixed start); a path runs from its first node to its last.
        trace: every new best tour as a row ``(seconds, length)``, shape ``(k, 2)``: the
            anytime curve of the search (no rows for an exact proof).
        length: its exact length on the given costs (with the return step for a closed tour,
            without it for a path).
        lower_bound: a lower bound on every tour (or path with the same ends), from
            ``bound=True`` (Held–Karp for symmetric costs, the assignment bound for asymmetric
            ones) or from the proof, else ``None``.
        proven_gap_percent: ``100 (length - lower_bound) / lower_bound``, else ``None``.
        method: the method that ran (``exact`` for an exact proof).
        ends: ``closed``, ``open``, ``start``, ``end`` or ``start-end``.
        seconds: wall-clock seconds of the search or proof (without the bound).
        seed, threads, time_limit: the seed, the worker threads used and the time limit.
        file, instance: the TSPLIB file and its instance name (``None`` for points and
            matrices).
        type: ``TSP`` or ``ATSP`` (for points and matrices: by the costs' symmetry).
        nodes: how many nodes.
        tour_out: the TOUR file written, else ``None``.

    Of a heuristic search:
        runs: independent runs completed (restarts for ``2opt``; formerly ``restarts``).
        iterations: steps of an iterative method over all runs (kicks for ``lk``).
        stop_reason: why the search ended: ``iteration_budget``, ``restart_budget``,
            ``time_limit``, ``cancelled`` (Ctrl-C), ``exhaustive``, ``constructed``,
            ``target_reached`` or ``stall_limit``.
        start, end: the fixed first and last node asked for, else ``None``.

    Of an exact proof (``exact=True``):
        exact_method: the method that answered: ``dynamic-programme``, ``branch-and-cut``
            or ``branch-and-bound`` (see :func:`exact_methods`).
        proven_optimal: ``True`` when the tour is proven optimal; then ``lower_bound ==
            length``.
        subproblems: nodes of the branch-and-cut or branch-and-bound tree evaluated (0 for
            the dynamic programme).
        first_tour_length: the length of the heuristic tour the tree search started from,
            else ``None``.

    Keys the core adds later (``gap_note``, say) appear as attributes without a change here.
    """

    __slots__ = ("_keys",)

    def __init__(self, keys: _t.Mapping[str, _t.Any]) -> None:
        object.__setattr__(self, "_keys", dict(keys))

    def __getattr__(self, name: str) -> _t.Any:
        if name == "_keys":
            raise AttributeError(name)
        try:
            return self._keys[name]
        except KeyError:
            raise AttributeError(f"TourResult has no attribute {name!r}") from None

    def __setattr__(self, name: str, value: _t.Any) -> None:
        raise AttributeError("TourResult is read-only")

    def __reduce__(self) -> _t.Tuple[_t.Any, ...]:
        return (TourResult, (self._keys,))

    def __dir__(self) -> _t.List[str]:
        return sorted(set(self._keys) | {"gap_percent", "keys", "to_dict"})

    def __repr__(self) -> str:
        shown = ", ".join(
            f"{k}={v!r}" for k, v in sorted(self._keys.items()) if k not in ("order", "trace")
        )
        return f"TourResult({shown})"

    def keys(self) -> _t.List[str]:
        """The names of this result's attributes, sorted (``order`` and ``trace`` included)."""
        return sorted(self._keys)

    def to_dict(self) -> _t.Dict[str, _t.Any]:
        """The attributes as a new dictionary (the arrays are not copied)."""
        return dict(self._keys)

    @property
    def gap_percent(self) -> _t.Optional[float]:
        """The same as :attr:`proven_gap_percent` (the name of earlier releases)."""
        return self._keys.get("proven_gap_percent")

    @property
    def restarts(self) -> int:
        """Deprecated: the name of earlier releases for :attr:`runs`."""
        _warnings.warn(
            "TourResult.restarts is deprecated; use TourResult.runs",
            DeprecationWarning,
            stacklevel=2,
        )
        return self.runs


class SequenceResult(TourResult):
    """What a solve under constraints returns (see the constraint arguments of
    :func:`solve_points`): one attribute per key, like :class:`TourResult` (whose
    :meth:`~TourResult.keys` and :meth:`~TourResult.to_dict` it has). Stops are 0-based.

    Attributes:
        feasible: ``True`` when the order breaks no constraint. When ``False``, no feasible
            order was found (or, with ``proven_infeasible``, none exists): ``order`` is the
            least-breaking order seen and ``violations`` says what it breaks. Not an exception.
        order: the stops in visiting order, the depot first (``numpy.int64``); optional stops
            left out are absent, a closed tour's return to the depot is not repeated.
        travel_cost: the sum of the travel costs (the return of a closed tour included);
            ``length`` is the same number under the tour results' name.
        completion_time: when the sequence ends: the return to the depot of a closed tour, the
            end of service at the last stop of a path.
        wait: total time spent waiting for windows to open.
        penalty: the sum of the penalties of the optional stops left out.
        objective: the value minimised: travel cost or completion time, plus ``penalty``.
        minimised: ``travel`` or ``completion``.
        route: ``closed`` or ``path``.
        skipped: the optional stops left out, in increasing order.
        violations: what the order breaks, one dict per violation: ``kind`` (``late``,
            ``missing-required``, ``precedence``, ``before-skipped``, ``min-lag``,
            ``max-lag``, ``fixed-edge``, ``duplicate``, ``unknown-stop``, ``wrong-start``,
            ``overflow``, ``rule``), ``stops`` (the stops it names, 0-based), ``by`` (how much,
            in time units, or ``None``) and ``message`` (a sentence); empty when feasible.
        schedule: one row per visited stop in order, columns ``stop``, ``arrival``, ``start``
            (of service), ``wait``, ``departure``, ``slack`` (latest start of the window used
            minus the start; negative when late; missing when the stop has no window): a
            pandas DataFrame when pandas is installed, else a list of dicts.
        proven_optimal, proven_infeasible: what the exact programme (``exact=True``) proved.
        lower_bound: a lower bound on the objective of every feasible order when one is known
            (the proven optimum; the assignment bound for a closed tour minimising travel with
            every stop required), else ``None``.
        method: ``constrained-search`` or ``exact``.
        runs, iterations, stop_reason, seconds, threads, seed, time_limit: as for
            :class:`TourResult` (``iterations``: kicks over all runs; labels of the exact
            programme).
        trace: every new best feasible objective as a row ``(seconds, objective)``.
        depot, start_time: the depot and the time the sequence leaves it.
        file, instance, type, nodes: as for :class:`TourResult`.
    """

    __slots__ = ()

    def __reduce__(self) -> _t.Tuple[_t.Any, ...]:
        return (SequenceResult, (self._keys,))

    def __repr__(self) -> str:
        shown = ", ".join(
            f"{k}={v!r}"
            for k, v in sorted(self._keys.items())
            if k not in ("order", "trace", "schedule", "violations")
        )
        return f"SequenceResult({shown}, violations={len(self._keys['violations'])})"


@_dc.dataclass(frozen=True)
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
    comments: _t.List[str]
    kind: str
    dimension: int
    edge_weight_type: str
    edge_weight_format: _t.Optional[str]
    points: _t.Optional[_np.ndarray] = _dc.field(repr=False)
    metric: _t.Optional[str]
    matrix: _t.Optional[_np.ndarray] = _dc.field(repr=False)
    display: _t.Optional[_np.ndarray] = _dc.field(repr=False)


@_dc.dataclass(frozen=True)
class TourData:
    """A TSPLIB TOUR file: its name, comments, dimension (or ``None``) and the 0-based order."""

    name: str
    comments: _t.List[str]
    dimension: _t.Optional[int]
    order: _np.ndarray = _dc.field(repr=False)


@_dc.dataclass(frozen=True)
class SkyPlan:
    """An observing plan. **Caution:** plans are planning proposals to be confirmed by the
    operations team's validated tools.

    Attributes:
        plan: one row per observation in time order, the columns of ``plan.csv``: seq,
            target, instrument, roll_deg, start_utc, end_utc, wait_before_s, idle,
            busy_before_s, dumps_before, dump_propellant_before_kg, slew_deg, slew_s,
            elongation_start_deg, elongation_end_deg, hx_nms, hy_nms, hz_nms,
            momentum_after_nms (numbers as numbers, the times as UTC timestamps).
        unscheduled: one row per target left out, lowest priority first, the columns of
            ``unscheduled.csv``: target, priority, reason, explanation, min_elongation_deg,
            max_elongation_deg.
        summary: the JSON summary of ``wend sky plan --json`` as a dictionary (``elapsed_s``:
            until the last observation ends, waiting and dumps included; ``busy_overhead_s``:
            slews, settles, thermal, setups and dumps, no waiting; ``wait_s``;
            ``propellant_kg``; with ``front=True`` also ``hypervolume_h_g`` and its
            ``hypervolume_reference``).
        front: with ``front=True``, one row per plan of the front of elapsed time against
            propellant, the columns of ``front.csv`` (plan, elapsed_s, end_utc,
            busy_overhead_s, wait_s, propellant_kg, dumps, scheduled); else ``None``.
        front_plans: with ``front=True``, each front plan's table (like ``plan``), in the
            order of ``front``; else an empty list.
        cancelled: ``True`` when Ctrl-C stopped the search (the plan is then made from the best
            order found so far).
        caution: the caution the plan carries (also in every DataFrame's ``attrs["caution"]``).
    """

    plan: _t.Any
    unscheduled: _t.Any
    summary: dict
    front: _t.Any
    front_plans: list
    cancelled: bool
    caution: str = CAUTION


def methods() -> _t.List[_t.Tuple[str, str]]:
    """The methods :func:`solve_points` and friends accept, as ``(name, description)``."""
    return [tuple(m) for m in _native.methods()]  # type: ignore[misc]


def exact_methods() -> _t.List[str]:
    """The exact methods this build of the module can run, as the names ``exact_method``
    takes: ``dynamic-programme`` and ``branch-and-bound`` always, ``branch-and-cut`` when the
    module was built with the cargo feature ``cuts``::

        python3 -m pip install ./python --config-settings="build-args=--features cuts"

    With branch and cut, ``exact=True`` uses it above the dynamic programme's range (16 nodes,
    24 for asymmetric costs), for symmetric and asymmetric costs, as ``wend solve --exact``
    does. Without it (the default, light build), branch and bound takes symmetric costs above
    16 nodes, asymmetric costs above 24 nodes are refused, and ``exact_method=
    "branch-and-cut"`` raises ValueError saying how to build the module with it.
    """
    return [str(m) for m in _native.exact_methods()]


def _int_option(name: str, value: _t.Any, low: int, optional: bool = True) -> _t.Optional[int]:
    if value is None:
        if optional:
            return None
        raise ValueError(f"{name} must be given")
    if isinstance(value, bool) or not isinstance(value, (int, _np.integer)):
        raise ValueError(f"{name} must be an integer, got {value!r}")
    v = int(value)
    if v < low or v >= 2**64:
        raise ValueError(f"{name} must be an integer of at least {low}, got {v}")
    return v


def _float_option(name: str, value: _t.Any) -> _t.Optional[float]:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(
        value, (int, float, _np.integer, _np.floating)
    ):
        raise ValueError(f"{name} must be a number of seconds, got {value!r}")
    return float(value)


# The options of the solve functions: the options of `wend solve` under the same names, with
# underscores for hyphens, their defaults and their types. `None` leaves an option to the core.
_OPTIONS: _t.Tuple[_t.Tuple[str, _t.Any, str], ...] = (
    ("method", "lk", "str"),
    ("time_limit", None, "_t.Optional[float]"),
    ("seed", 0, "int"),
    ("threads", None, "_t.Optional[int]"),
    ("runs", None, "_t.Optional[int]"),
    ("iterations", None, "_t.Optional[int]"),
    ("stall_limit", None, "_t.Optional[int]"),
    ("params", None, "_t.Optional[Mapping[str, _t.Any]]"),
    ("target", None, "_t.Optional[int]"),
    ("neighbour_count", None, "_t.Optional[int]"),
    ("neighbour_lists", None, "_t.Optional[str]"),
    ("layout", None, "_t.Optional[str]"),
    ("bound", False, "bool"),
    ("bound_time", None, "_t.Optional[float]"),
    ("exact", False, "bool"),
    ("exact_method", None, "_t.Optional[str]"),
    ("open", False, "bool"),
    ("start", None, "_t.Optional[int]"),
    ("end", None, "_t.Optional[int]"),
    ("tour_out", None, "_t.Optional[PathLike]"),
)
_DEFAULTS = {name: default for name, default, _ in _OPTIONS}

# Keywords of earlier releases, still read (with a DeprecationWarning) for one release.
_RENAMED = {"lower_bound": "bound", "settings": "params", "restarts": "runs"}

# Options an exact proof does not use, as the command refuses them beside --exact.
_NOT_WITH_EXACT = ("method", "runs", "iterations", "stall_limit", "params", "target",
                   "neighbour_count", "neighbour_lists", "layout", "bound")


def _renamed(function: str, old: str, new: str) -> None:
    _warnings.warn(
        f"{function}(): {old}= is deprecated and will be removed in the next release; "
        f"use {new}=",
        DeprecationWarning,
        stacklevel=4,
    )


def _json_value(name: str, value: _t.Any) -> _t.Any:
    """`value` as plain JSON data (NumPy scalars as Python numbers), or a ValueError naming
    the option; the core checks the types and ranges."""
    if isinstance(value, _np.generic):
        value = value.item()
    if name == "tour_out":
        return _os.fspath(value)
    if name == "params":
        if not isinstance(value, _t.Mapping):
            raise ValueError(
                f"params must be a mapping of parameter names to values, got {value!r}"
            )
        return {str(k): _json_value(f"params[{k!r}]", v) for k, v in value.items()}
    if isinstance(value, float) and not _math.isfinite(value):
        raise ValueError(f"{name} must be a finite number, got {value!r}")
    try:
        _json.dumps(value, allow_nan=False)
    except (TypeError, ValueError) as e:
        raise ValueError(f"{name}: {e}") from None
    return value


def _options_json(function: str, given: _t.Mapping[str, _t.Any]) -> str:
    """The options of a solve call as the JSON object the extension module reads."""
    options = dict(_DEFAULTS)
    for name, value in given.items():
        new = _RENAMED.get(name)
        if new is not None:
            _renamed(function, name, new)
            if new in given:
                raise TypeError(f"{function}() got both {name}= and {new}=")
            name = new
        elif name not in options:
            raise TypeError(f"{function}() got an unexpected keyword argument {name!r}")
        options[name] = value
    changed = [k for k in _NOT_WITH_EXACT if options[k] != _DEFAULTS[k]]
    if options["exact"] and changed:
        raise ValueError(f"exact=True cannot be combined with {', '.join(changed)}")
    if not options["exact"] and options["exact_method"] is not None:
        raise ValueError("exact_method needs exact=True")
    plain = {k: _json_value(k, v) for k, v in options.items() if v is not None}
    return _json.dumps(plain)


def _result(d: _t.Mapping[str, _t.Any]) -> TourResult:
    keys = _json.loads(d["json"])
    keys["order"] = d["order"]
    keys["trace"] = d["trace"]
    return TourResult(keys)


def _points_array(points: _t.Any) -> _np.ndarray:
    try:
        a = _np.asarray(points)
    except Exception as e:  # ragged lists and the like
        raise ValueError(f"points must be an n x 2 or n x 3 array of numbers: {e}") from None
    if a.dtype == object or not (
        _np.issubdtype(a.dtype, _np.floating) or _np.issubdtype(a.dtype, _np.integer)
    ) or a.dtype == _np.bool_:
        raise ValueError(f"points must be an array of numbers, got dtype {a.dtype}")
    if a.ndim != 2 or a.shape[1] not in (2, 3):
        raise ValueError(f"points must be an n x 2 or n x 3 array, got shape {a.shape}")
    if a.shape[0] == 0:
        raise ValueError("points is empty: give at least one node")
    a = _np.ascontiguousarray(a, dtype=_np.float64)
    bad = ~_np.isfinite(a)
    if bad.any():
        i, k = _np.argwhere(bad)[0]
        raise ValueError(f"node {i}: coordinate {k} is not a finite number ({a[i, k]})")
    return a


def _matrix_array(matrix: _t.Any) -> _np.ndarray:
    try:
        a = _np.asarray(matrix)
    except Exception as e:
        raise ValueError(f"the cost matrix must be a square array of integers: {e}") from None
    if a.ndim != 2 or a.shape[0] != a.shape[1]:
        raise ValueError(f"the cost matrix must be square, got shape {a.shape}")
    if a.shape[0] == 0:
        raise ValueError("the cost matrix is empty: give at least one node")
    if a.dtype == _np.bool_ or a.dtype == object:
        raise ValueError(f"the cost matrix must hold integers, got dtype {a.dtype}")
    if _np.issubdtype(a.dtype, _np.integer):
        if a.dtype == _np.uint64 and a.size and a.max() > _np.iinfo(_np.int64).max:
            raise ValueError("the cost matrix has entries too large for 64-bit integers")
        return _np.ascontiguousarray(a, dtype=_np.int64)
    if _np.issubdtype(a.dtype, _np.floating):
        bad = ~_np.isfinite(a)
        if bad.any():
            i, j = _np.argwhere(bad)[0]
            raise ValueError(f"cost matrix entry ({i}, {j}) is not a finite number ({a[i, j]})")
        whole = a == _np.round(a)
        if not whole.all():
            i, j = _np.argwhere(~whole)[0]
            raise ValueError(
                f"cost matrix entry ({i}, {j}) = {a[i, j]} is not a whole number; "
                "costs are integers (scale and round them first)"
            )
        if a.size and _np.abs(a).max() >= 2.0**63:
            raise ValueError("the cost matrix has entries too large for 64-bit integers")
        return _np.ascontiguousarray(a, dtype=_np.int64)
    raise ValueError(f"the cost matrix must hold integers, got dtype {a.dtype}")


_SOLVE_DOC = """
    Options: those of ``wend solve``, under the same names with underscores for hyphens
    (``time_limit`` for ``--time-limit``), all keyword-only:
        method: ``lk`` (default), ``2opt``, ``acs``, ``mmas``, ``anneal``, ``greedy``, ...
            (see :func:`methods`).
        time_limit: stop after this many seconds and return the best tour so far.
        seed: seed of all random choices (default 0); the same seed, runs and iterations give
            the same tour on any number of threads.
        threads: worker threads (default: one per core).
        runs: independent runs (``lk``, ``anneal``, colonies of ``acs`` and ``mmas``) or
            restarts (``2opt``).
        iterations: steps per run: kicks (``lk``), generations (``acs``, ``mmas``), batches of
            moves at one temperature (``anneal``); with such a budget the result does not
            depend on timing.
        stall_limit: end a run after this many steps in a row without a shorter tour.
        params: the method's parameters as ``{"key": value}`` (the command's
            ``--params KEY=VALUE``; :func:`methods` names the methods, ``wend solve
            --list-methods`` their keys).
        target: stop as soon as a tour of at most this length is found.
        neighbour_count: width of the neighbour lists the moves look at (default 10).
        neighbour_lists: where they come from: ``quadrant`` (default), ``nearest`` or
            ``alpha``.
        layout: the tour representation ``lk`` edits: ``auto`` (default), ``array`` or
            ``two-level``; the tour is the same, only the speed differs.
        bound: also compute a lower bound (``lower_bound``, ``proven_gap_percent``):
            Held–Karp for symmetric costs, the assignment bound for asymmetric ones.
        bound_time: seconds for the lower bound's ascent (default 10).
        exact: prove the tour optimal instead: the dynamic programme up to 16 nodes (24 for
            asymmetric costs), above that branch and cut on the linear programme (symmetric and
            asymmetric costs) when the module has it (see :func:`exact_methods`), else branch
            and bound on the 1-tree bound (symmetric costs only). With ``time_limit``, the best
            tour and bound when time runs out. Not with the search's options above.
        exact_method: with ``exact``: ``dynamic-programme``, ``branch-and-cut`` (when
            :func:`exact_methods` lists it) or ``branch-and-bound``.
        open: find an open path (no return to the first node) instead of a closed tour.
        start, end: fix the first and/or last node of the path (0-based); with the same node
            for both, a closed tour starting there.
        tour_out: also write the tour to this file in TSPLIB TOUR format, with the comment
            ``wend VERSION METHOD seed SEED length LENGTH``.

    Keywords of earlier releases still work for one release, with a DeprecationWarning:
    ``lower_bound`` (now ``bound``), ``settings`` (now ``params``), ``restarts`` (now
    ``runs``).

    Returns a :class:`TourResult`. Ctrl-C stops the search and returns the best tour so far
    (``stop_reason == "cancelled"``). Raises ValueError for bad input, with the core's message
    naming the option; TypeError for an unknown keyword.
"""


def _with_options(*leading: _inspect.Parameter) -> _t.Callable[[_t.Any], _t.Any]:
    """Gives a solve function the signature of its leading parameters and the options, and
    the options' documentation."""

    def dress(f: _t.Any) -> _t.Any:
        options = [
            _inspect.Parameter(name, _inspect.Parameter.KEYWORD_ONLY, default=d, annotation=a)
            for name, d, a in _OPTIONS
        ]
        f.__signature__ = _inspect.Signature(
            [*leading, *options], return_annotation="TourResult"
        )
        f.__doc__ = (f.__doc__ or "") + _SOLVE_DOC
        return f

    return dress


def _positional(
    name: str, annotation: str, default: _t.Any = _inspect.Parameter.empty
) -> _inspect.Parameter:
    return _inspect.Parameter(
        name, _inspect.Parameter.POSITIONAL_OR_KEYWORD, default=default, annotation=annotation
    )


def _with_constraints(f: _t.Any) -> _t.Any:
    """Adds the constraint arguments to a solve function's signature and documentation."""
    sig = f.__signature__
    extra = [
        _inspect.Parameter(name, _inspect.Parameter.KEYWORD_ONLY, default=d, annotation=a)
        for name, d, a in _constraints.KEYWORDS
    ]
    f.__signature__ = sig.replace(
        parameters=[*sig.parameters.values(), *extra],
        return_annotation="_t.Union[TourResult, SequenceResult]",
    )
    f.__doc__ = (f.__doc__ or "") + _constraints.DOC
    return f


def _sequence_result(d: _t.Mapping[str, _t.Any]) -> SequenceResult:
    keys = _json.loads(d["json"])
    keys["order"] = d["order"]
    keys["trace"] = d["trace"]
    keys["schedule"] = _constraints.schedule_table(keys["schedule"])
    return SequenceResult(keys)


def _constrained_options(
    function: str, options: _t.Dict[str, _t.Any], nodes: _t.Optional[int]
) -> _t.Tuple[_t.Any, ...]:
    """The arguments of a constrained native solve after the leading ones: the options' JSON,
    then those of :func:`_constraints.native_arguments`."""
    args = _constraints.split(options)
    _constraints.refuse_plain_options(options)
    return (_options_json(function, options), *_constraints.native_arguments(args, nodes))


def _asks_constraints(options: _t.Mapping[str, _t.Any]) -> bool:
    return any(options.get(name) is not None for name, _, _ in _constraints.KEYWORDS)


@_with_constraints
@_with_options(_positional("points", "_t.Any"), _positional("metric", "str", "EUC_2D"))
def solve_points(points: _t.Any, metric: str = "EUC_2D", **options: _t.Any) -> TourResult:
    """A short tour through points: an ``n x 2`` (or ``n x 3``) array of coordinates under a
    TSPLIB distance ``metric`` (``EUC_2D`` by default; see :data:`METRICS`), with TSPLIB's
    rounding to integer costs. ``distance=`` is the deprecated name of ``metric``.
    """
    if "distance" in options:
        _renamed("solve_points", "distance", "metric")
        if "metric" in options or metric != "EUC_2D":
            raise TypeError("solve_points() got both distance= and metric=")
        metric = options.pop("distance")
    a = _points_array(points)
    if not isinstance(metric, str):
        raise ValueError(f"metric must be a TSPLIB distance name, got {metric!r}")
    if _asks_constraints(options):
        rest = _constrained_options("solve_points", options, a.shape[0])
        return _sequence_result(_native.solve_points_constrained(a, metric, *rest))
    return _result(_native.solve_points(a, metric, _options_json("solve_points", options)))


@_with_constraints
@_with_options(_positional("matrix", "_t.Any"))
def solve_matrix(matrix: _t.Any, **options: _t.Any) -> TourResult:
    """A short tour over a square cost matrix (``matrix[i, j]`` is the cost of going from ``i``
    to ``j``; symmetric or not). Entries must be integers (an integer array, or a float array
    of whole numbers).
    """
    a = _matrix_array(matrix)
    if _asks_constraints(options):
        rest = _constrained_options("solve_matrix", options, a.shape[0])
        return _sequence_result(_native.solve_matrix_constrained(a, *rest))
    return _result(_native.solve_matrix(a, _options_json("solve_matrix", options)))


@_with_constraints
@_with_options(_positional("path", "PathLike"))
def solve_file(path: PathLike, **options: _t.Any) -> TourResult:
    """A short tour through a TSPLIB problem file (TYPE TSP or ATSP). With the same options it
    finds the same tour as ``wend solve`` (node numbers here are 0-based: ``start=0`` is the
    command's ``--start 1``). A file in the plain time-window layout (the number of nodes, the
    travel-time matrix, one ``earliest latest`` line per node) is solved under its windows,
    from node 0 at time 0, and gives a :class:`SequenceResult`; so does any file with
    constraint arguments.
    """
    p = _os.fspath(path)
    if _asks_constraints(options):
        rest = _constrained_options("solve_file", options, None)
        return _sequence_result(_native.solve_file_constrained(p, *rest, False))
    opts = _options_json("solve_file", options)
    # A time-window file is solved under its windows; any other file as a TSPLIB file.
    out = _native.solve_file_constrained(p, opts, "{}", None, None, None, True)
    if out is not None:
        return _sequence_result(out)
    return _result(_native.solve_file(p, opts))


def read_tsplib(path: PathLike) -> Problem:
    """Reads a TSPLIB problem file (TYPE TSP or ATSP). Raises ValueError naming the file and
    line for a malformed file, OSError when it cannot be read."""
    d = _native.read_tsplib(_os.fspath(path))
    return Problem(**d)


def write_tsplib(
    path: PathLike,
    *,
    points: _t.Any = None,
    metric: str = "EUC_2D",
    matrix: _t.Any = None,
    name: _t.Optional[str] = None,
    comments: _t.Sequence[str] = (),
    distance: _t.Optional[str] = None,
) -> None:
    """Writes a TSPLIB problem file from either ``points`` under the TSPLIB distance ``metric``
    (TYPE TSP) or a square integer ``matrix`` (TYPE TSP when symmetric, else ATSP, as a
    FULL_MATRIX). Coordinates are written exactly: reading the file back gives the same points
    and costs. ``name`` defaults to the file name without its extension. ``distance=`` is the
    deprecated name of ``metric``.
    """
    if distance is not None:
        _warnings.warn(
            "write_tsplib(): distance= is deprecated and will be removed in the next release; "
            "use metric=",
            DeprecationWarning,
            stacklevel=2,
        )
        metric = distance
    p = _os.fspath(path)
    if name is None:
        name = _os.path.splitext(_os.path.basename(p))[0] or "problem"
    comments = [str(c) for c in comments]
    if (points is None) == (matrix is None):
        raise ValueError("give either points or matrix")
    if points is not None:
        _native.write_points(p, _points_array(points), metric, name, comments)
    else:
        _native.write_matrix(p, _matrix_array(matrix), name, comments)


def read_tour(path: PathLike) -> TourData:
    """Reads a TSPLIB TOUR file; the order comes back 0-based."""
    return TourData(**_native.read_tour(_os.fspath(path)))


def write_tour(
    path: PathLike, order: _t.Any, *, name: _t.Optional[str] = None, comment: str = ""
) -> None:
    """Writes a 0-based order (a permutation of ``0..n``) as a TSPLIB TOUR file."""
    p = _os.fspath(path)
    a = _np.asarray(order)
    if a.ndim != 1 or not (_np.issubdtype(a.dtype, _np.integer)) or a.dtype == _np.bool_:
        raise ValueError(f"order must be a 1-d array of integers, got shape {a.shape}, "
                         f"dtype {a.dtype}")
    if name is None:
        name = _os.path.splitext(_os.path.basename(p))[0] + ".tour"
    _native.write_tour(p, [int(v) for v in a], name, str(comment))


_TARGET_COLUMNS = ("id", "ra_deg", "dec_deg", "duration_s", "instrument")


def _cell(v: _t.Any) -> str:
    if v is None:
        return ""
    if isinstance(v, (float, _np.floating)):
        f = float(v)
        if _math.isnan(f):
            return "nan"
        return repr(f)
    if isinstance(v, (_np.integer,)):
        return str(int(v))
    return str(v)


def _targets_csv(targets: _t.Any) -> str:
    """The targets table as the text of a targets CSV (the core checks every value)."""
    if hasattr(targets, "to_dict") and hasattr(targets, "columns"):
        columns = [str(c) for c in targets.columns]
        data = {str(c): list(targets[c]) for c in targets.columns}
    elif isinstance(targets, _t.Mapping):
        columns = [str(c) for c in targets.keys()]
        data = {str(c): list(_np.asarray(v, dtype=object).ravel()) for c, v in targets.items()}
    else:
        raise ValueError(
            "targets must be a pandas DataFrame, a dict of arrays or a CSV path with the "
            "columns id, ra_deg, dec_deg, duration_s and optionally instrument, priority, "
            "window_start, window_end, roll_min_deg, roll_max_deg"
        )
    lengths = {len(v) for v in data.values()}
    if len(lengths) > 1:
        raise ValueError(f"the target columns have different lengths: {sorted(lengths)}")
    import csv

    out = _io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(columns)
    n = lengths.pop() if lengths else 0
    # Columns whose empty cell means a default: the profile's first instrument, priority 5,
    # no proposal window, the profile's roll range.
    optional_columns = {
        "id",
        "instrument",
        "priority",
        "window_start",
        "window_end",
        "roll_min_deg",
        "roll_max_deg",
    }
    for i in range(n):
        row = []
        for c in columns:
            v = data[c][i]
            # An empty cell (NaN or None in pandas) of such a column stays empty.
            if c in optional_columns and _missing(v):
                row.append("")
            elif c == "priority" and isinstance(v, (float, _np.floating)) and float(v).is_integer():
                # A column of whole numbers with empty cells reads as floats in pandas.
                row.append(str(int(v)))
            else:
                row.append(_cell(v))
        w.writerow(row)
    return out.getvalue()


def _missing(v: _t.Any) -> bool:
    """An empty cell: None, NaN, or pandas' missing values (``pd.NA``, ``NaT``)."""
    if v is None:
        return True
    if isinstance(v, (float, _np.floating)):
        return _math.isnan(v)
    return type(v).__name__ in ("NAType", "NaTType")


def _table_csv(table: _t.Any, what: str) -> _t.Tuple[str, str]:
    """A targets or links table (a DataFrame, a dict of arrays or a CSV path) as CSV text, with
    the name errors give it."""
    if isinstance(table, (str, _os.PathLike)):
        path = _os.fspath(table)
        try:
            with open(path, encoding="utf-8") as f:
                return f.read(), path
        except OSError as e:
            raise ValueError(f"{path}: {e}") from None
    if what == "targets":
        return _targets_csv(table), "targets"
    return _links_csv(table), "links"


def _links_csv(links: _t.Any) -> str:
    """The links table as the text of a links CSV (the core checks every value)."""
    if hasattr(links, "to_dict") and hasattr(links, "columns"):
        columns = [str(c) for c in links.columns]
        data = {str(c): list(links[c]) for c in links.columns}
    elif isinstance(links, _t.Mapping):
        columns = [str(c) for c in links.keys()]
        data = {str(c): list(_np.asarray(v, dtype=object).ravel()) for c, v in links.items()}
    else:
        raise ValueError(
            "links must be a pandas DataFrame, a dict of arrays or a CSV path with the columns "
            "kind, first, second, min_lag_s, max_lag_s"
        )
    lengths = {len(v) for v in data.values()}
    if len(lengths) > 1:
        raise ValueError(f"the link columns have different lengths: {sorted(lengths)}")
    import csv

    out = _io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(columns)
    for i in range(lengths.pop() if lengths else 0):
        row = []
        for c in columns:
            v = data[c][i]
            # Empty cells (NaN or None in pandas) stay empty: a lag not given.
            if _missing(v):
                row.append("")
            else:
                row.append(_cell(v))
        w.writerow(row)
    return out.getvalue()


def _start_text(start: _t.Any) -> _t.Optional[str]:
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
    targets: _t.Any = None,
    *,
    links: _t.Any = None,
    start: _t.Any = None,
    horizon_days: float = 30.0,
    time_limit: _t.Optional[float] = None,
    seed: int = 0,
    threads: _t.Optional[int] = None,
    profile: _t.Optional[PathLike] = None,
    front: bool = False,
) -> SkyPlan:
    """Plans observations for a sun-shaded observatory far from Earth, as ``wend sky plan`` does.

    **Caution:** plans are planning proposals to be confirmed by the operations team's
    validated tools. Spacecraft operations can damage hardware.

    Args:
        targets: a pandas DataFrame, a dict of arrays or the path of a targets CSV, with the
            columns ``id``, ``ra_deg``, ``dec_deg``, ``duration_s`` and optionally
            ``instrument``, ``priority`` (1, the highest, to 9), ``window_start`` and
            ``window_end`` (the proposal window, ISO 8601 UTC), ``roll_min_deg`` and
            ``roll_max_deg``; ``None`` for the built-in demo targets of the invented Lantern
            Deep-Sky Observatory.
        links: timing links between targets, like ``targets`` (a DataFrame, a dict of arrays
            or the path of a links CSV) with the columns ``kind`` (``after``, ``before`` or
            ``group``), ``first``, ``second``, ``min_lag_s``, ``max_lag_s``; ``None`` for no
            links (with the demo targets: the demo's links).
        start: plan start, an ISO 8601 string with a UTC offset (``2027-03-01T00:00:00Z``) or
            a time-zone-aware datetime; needed with targets (the demo starts at
            2027-03-01T00:00:00Z).
        horizon_days: length of the planning horizon, days.
        time_limit: seconds for planning (default: as the command; with ``front=True`` the
            front search's seconds, default 30).
        seed: seed of the searches; with ``threads=1`` the same seed gives the same plan when
            the searches end on their budgets (``summary["stop_reason"]`` is
            ``searches_done``).
        threads: worker threads (default: one per core).
        profile: an observatory profile TOML file (default: the demo profile).
        front: also search the Pareto front of plans over elapsed time (until the last
            observation ends, waiting and dumps included) and propellant.

    Returns:
        a :class:`SkyPlan` whose DataFrames (``plan``, ``unscheduled``, ``front``) carry the
        caution in ``attrs["caution"]``. Needs pandas.

    Ctrl-C stops the search and returns the plan made from the best order so far
    (``SkyPlan.cancelled`` is then true). Raises ValueError for bad input.
    """
    import pandas as pd

    csv_text, source = (None, "targets") if targets is None else _table_csv(targets, "targets")
    links_text = None if links is None else _table_csv(links, "links")[0]
    d = _native.plan_sky(
        csv_text,
        source,
        None if profile is None else _os.fspath(profile),
        _start_text(start),
        float(horizon_days),
        _float_option("time_limit", time_limit),
        _int_option("seed", seed, 0, optional=False),
        _int_option("threads", threads, 1),
        bool(front),
        links_text,
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
        summary=_json.loads(d["summary_json"]),
        front=None if f is None else frame(f["rows"]),
        front_plans=[] if f is None else [frame(p) for p in f["plans"]],
        cancelled=bool(d["cancelled"]),
        caution=caution,
    )
