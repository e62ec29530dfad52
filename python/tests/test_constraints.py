"""Solving under constraints from Python: windows, service, optional stops, precedence, fixed
edges, a constraints table; results checked against published optima and against schedules
recomputed here from the rules, independently of the package.

Outside references:
- the optimal travel cost of n20w20.001, 378: Dumas, Desrosiers, Gelinas and Solomon, "An
  optimal algorithm for the traveling salesman problem with time windows", Operations Research
  43(2), 1995 (the in-repo copy is instances/tsptw/n20w20.001.txt);
- the schedule rules of the package documentation (wait for a window to open, late after it
  closes, leave after service), recomputed below in plain Python.
"""

from __future__ import annotations

import math
import pickle

import numpy as np
import pytest

import wend
from conftest import INSTANCES

N20 = INSTANCES / "tsptw" / "n20w20.001.txt"
N20_OPTIMUM = 378  # Dumas et al. 1995 (see the module docstring)


def read_time_windows(path):
    """The plain time-window layout read with NumPy: (matrix, windows)."""
    tokens = np.array(path.read_text().split(), dtype=np.int64)
    n = int(tokens[0])
    matrix = tokens[1:1 + n * n].reshape(n, n)
    windows = tokens[1 + n * n:].reshape(n, 2)
    assert len(tokens) == 1 + n * n + 2 * n
    return matrix, windows


def recompute(order, matrix, windows=None, service=None, start_time=0, closed=True):
    """The schedule of `order` by the documented rules, one window per stop at most: a list of
    (stop, arrival, start, departure), the travel cost, the completion time and the stops
    served late (or returned to late)."""
    n = len(matrix)
    service = [0] * n if service is None else list(service)
    rows, late, travel = [], [], 0
    t = start_time
    prev = None
    for s in order:
        s = int(s)
        if prev is not None:
            t += int(matrix[prev][s])
            travel += int(matrix[prev][s])
        arrival = t
        start = arrival
        if windows is not None and not math.isnan(float(windows[s][0])):
            start = max(arrival, int(windows[s][0]))
            if start > int(windows[s][1]):
                late.append(s)
        t = start + service[s]
        rows.append((s, arrival, start, t))
        prev = s
    completion = t
    if closed:
        back = int(matrix[prev][int(order[0])])
        travel += back
        completion = t + back
        depot_window = None if windows is None else windows[int(order[0])]
        if depot_window is not None and not math.isnan(float(depot_window[1])) and \
                completion > int(depot_window[1]):
            late.append(int(order[0]))
    return rows, travel, completion, late


def check_schedule(r, matrix, windows=None, service=None, start_time=0, closed=True):
    """The result's schedule, travel cost and completion time equal the recomputed ones."""
    rows, travel, completion, late = recompute(r.order, matrix, windows, service, start_time,
                                               closed)
    sched = r.schedule
    got = list(zip(sched["stop"], sched["arrival"], sched["start"], sched["departure"]))
    assert [tuple(int(x) for x in row) for row in got] == rows
    assert r.travel_cost == travel == r.length
    assert r.completion_time == completion
    return late


# Reference: the published optimum (Dumas et al. 1995) and the recomputed schedule.
def test_a_time_window_file_solves_to_the_published_optimum():
    r = wend.solve_file(N20, seed=1, threads=1)
    assert isinstance(r, wend.SequenceResult)
    assert r.feasible and r.violations == []
    assert r.travel_cost == N20_OPTIMUM
    matrix, windows = read_time_windows(N20)
    assert check_schedule(r, matrix, windows) == []
    assert sorted(r.order.tolist()) == list(range(21)) and r.order[0] == 0
    assert (r.nodes, r.depot, r.start_time, r.route, r.minimised) == (21, 0, 0, "closed",
                                                                        "travel")
    assert r.method == "constrained-search" and r.instance == "n20w20.001"


# Reference: the same optimum with the matrix and windows read here with NumPy.
def test_the_same_instance_from_arrays():
    matrix, windows = read_time_windows(N20)
    r = wend.solve_matrix(matrix, windows=windows.astype(float), seed=2, threads=1)
    assert r.feasible and r.travel_cost == N20_OPTIMUM
    assert check_schedule(r, matrix, windows) == []
    # Every start of service lies in its window (checked on the arrays directly).
    s = r.schedule
    for stop, start in zip(s["stop"], s["start"]):
        assert windows[stop][0] <= start <= windows[stop][1]


def test_the_exact_programme_proves_the_published_optimum():
    r = wend.solve_file(N20, exact=True)
    assert r.method == "exact" and r.proven_optimal and not r.proven_infeasible
    assert r.travel_cost == N20_OPTIMUM == r.lower_bound
    matrix, windows = read_time_windows(N20)
    assert check_schedule(r, matrix, windows) == []


# A small instance: six points on a line, costs counted by hand from |i - j| * 10.
LINE = np.array([[10 * i, 0.0] for i in range(6)])
LINE_COST = np.array([[10 * abs(i - j) for j in range(6)] for i in range(6)])


def test_precedence_is_kept_and_lags_hold():
    # Unconstrained, 0 1 2 3 4 5 (or its reverse) costs 100; asking 4 before 1 forces a detour.
    r = wend.solve_points(LINE, precedence=[[4, 1]], seed=1, threads=1)
    at = {int(s): k for k, s in enumerate(r.order)}
    assert r.feasible and at[4] < at[1]
    check_schedule(r, LINE_COST)
    # With a least lag of 100 between the starts at 2 and 3: the vehicle may not wait (lags
    # never make it wait), so 3 must be reached at least 100 after 2 is served.
    r = wend.solve_matrix(LINE_COST, precedence=np.array([[2, 3, 100, np.nan]]), seed=1,
                          threads=1)
    s = r.schedule.set_index("stop")
    assert r.feasible and s.loc[3, "start"] - s.loc[2, "start"] >= 100
    check_schedule(r, LINE_COST)


def test_an_optional_stop_with_a_tiny_penalty_is_left_out():
    pts = np.vstack([LINE, [[25.0, 1000.0]]])  # stop 6 far off the line
    penalty = [np.nan] * 6 + [1]
    r = wend.solve_points(pts, penalty=penalty, seed=1, threads=1)
    assert r.feasible and r.skipped == [6] and 6 not in r.order.tolist()
    assert r.penalty == 1 and r.travel_cost == 100  # 0 -> 5 and back: 50 + 50
    assert r.objective == r.travel_cost + r.penalty
    check_schedule(r, LINE_COST)


def test_no_feasible_order_is_a_result_with_violations():
    # Stops 1 and 2 are 10 from the depot and 20 apart; both must be served by time 10.
    m = np.array([[0, 10, 10], [10, 0, 20], [10, 20, 0]])
    windows = np.array([[np.nan, np.nan], [0, 10], [0, 10]])
    r = wend.solve_matrix(m, windows=windows, seed=1, threads=1)
    assert r.feasible is False
    assert r.violations and all(v["kind"] == "late" for v in r.violations)
    (v,) = r.violations
    assert v["by"] == 20 and len(v["stops"]) == 1 and v["stops"][0] in (1, 2)
    assert "late" in v["message"]
    late = check_schedule(r, m, windows)
    assert late == v["stops"]
    proof = wend.solve_matrix(m, windows=windows, exact=True)
    assert proof.feasible is False and proof.proven_infeasible


def test_several_windows_per_stop_and_service():
    # Stop 1 is open at 0..5 and 100..200; it is 10 away, so service starts at 100.
    m = np.array([[0, 10], [10, 0]])
    r = wend.solve_matrix(m, windows=[[], [(0, 5), (100, 200)]], service=[0, 7], seed=1)
    s = r.schedule
    assert list(s["start"]) == [0, 100] and list(s["wait"]) == [0, 90]
    assert list(s["departure"]) == [0, 107] and r.wait == 90
    assert r.completion_time == 117 and r.feasible
    assert s["slack"].isna().tolist() == [True, False] and s["slack"][1] == 100


def test_a_path_minimising_completion():
    windows = np.full((6, 2), np.nan)
    windows[1] = [60, 100]  # stop 1 opens at 60: serve it last, reached at 90 either way
    r = wend.solve_matrix(LINE_COST, windows=windows, route="path", objective="completion",
                          seed=1, threads=1)
    assert r.feasible and r.route == "path" and r.minimised == "completion"
    # 0 2 3 4 5 1 and 0 5 4 3 2 1 both end at stop 1 at time 90 (hand count); waiting at 1
    # first ends at 100.
    assert r.order[-1] == 1 and r.completion_time == 90 == r.objective
    check_schedule(r, LINE_COST, windows, closed=False)


def test_depot_start_time_fixed_edges_and_initial_order():
    r = wend.solve_matrix(LINE_COST, depot=3, start_time=1000, fixed_edges=[[0, 5]],
                          initial_order=[3, 2, 1, 0, 5, 4], seed=1, threads=1)
    assert r.feasible and r.order[0] == 3 and r.depot == 3
    o = r.order.tolist()
    assert o[(o.index(0) + 1) % 6] == 5
    assert r.schedule["arrival"][0] == 1000
    check_schedule(r, LINE_COST, start_time=1000)


def test_a_constraints_table_reads_as_the_arrays():
    # The same constraints as a table (stops numbered from 1) and as arrays (from 0).
    windows = np.full((6, 2), np.nan)
    windows[5] = [0, 50]
    arrays = wend.solve_matrix(LINE_COST, windows=windows, precedence=[[4, 1]], seed=1,
                               threads=1)
    rows = [
        {"kind": "window", "stop": 6, "earliest": 0, "latest": 50},
        {"kind": "before", "stop": 5, "other": 2},
    ]
    from_dicts = wend.solve_matrix(LINE_COST, constraints=rows, seed=1, threads=1)
    pd = pytest.importorskip("pandas")
    from_frame = wend.solve_matrix(LINE_COST, constraints=pd.DataFrame(rows), seed=1,
                                   threads=1)
    for r in (from_dicts, from_frame):
        assert r.order.tolist() == arrays.order.tolist()
        assert r.travel_cost == arrays.travel_cost and r.feasible == arrays.feasible


def test_a_constraints_file_with_solve_file(tmp_path):
    csv = tmp_path / "more.csv"
    csv.write_text("kind,stop,other,earliest,latest,value\nbefore,3,2,,,\n")
    r = wend.solve_file(N20, constraints=csv, seed=1, threads=1)
    at = {int(s): k for k, s in enumerate(r.order)}
    assert at[2] < at[1]  # nodes 3 and 2 of the table are stops 2 and 1
    matrix, windows = read_time_windows(N20)
    late = check_schedule(r, matrix, windows)
    assert r.feasible == (late == [])


def test_plain_files_still_give_tours():
    r = wend.solve_file(INSTANCES / "burma14.tsp", iterations=5, runs=1)
    assert type(r) is wend.TourResult and r.length > 0


def test_a_result_pickles_and_lists_its_keys():
    r = wend.solve_matrix(LINE_COST, windows=np.full((6, 2), np.nan), seed=1)
    back = pickle.loads(pickle.dumps(r))
    assert type(back) is wend.SequenceResult and back.travel_cost == r.travel_cost
    assert "schedule" in r.keys() and "SequenceResult(" in repr(r)


@pytest.mark.parametrize(
    "kwargs, words",
    [
        (dict(windows=np.zeros((6, 3))), "windows"),
        (dict(windows=np.zeros((5, 2))), "windows"),
        (dict(windows=[[0, 1.5]] * 6), "windows row 0"),
        (dict(windows=[[np.inf, 3]] * 6), "windows row 0"),
        (dict(service=[0, 1, np.nan, 0, 0, 0]), "service[2]"),
        (dict(service=[0] * 5), "service"),
        (dict(penalty=[np.nan] * 5 + [-1]), "penalty"),
        (dict(precedence=[[0, 1], [2, 9]]), "precedence row 1"),
        (dict(precedence=np.zeros((2, 3))), "precedence"),
        (dict(precedence=[[1, 2, np.nan, 0.5]]), "precedence row 0"),
        (dict(fixed_edges=[[1, 7]]), "fixed_edges row 0"),
        (dict(fixed_edges=[1, 2, 3]), "fixed_edges"),
        (dict(depot=6), "depot"),
        (dict(depot=np.nan), "depot"),
        (dict(route="loop"), "route"),
        (dict(objective="time"), "objective"),
        (dict(initial_order=[0, 1, 2, 9]), "initial_order[3]"),
        (dict(constraints=[{"kind": "window", "stop": 9, "earliest": 0, "latest": 1}]),
         "constraints:2"),
        (dict(constraints=42), "constraints"),
        (dict(precedence=[[1, 2], [2, 1]]), "cycle"),
        (dict(windows=np.zeros((6, 2)), open=True), "open"),
        (dict(windows=np.zeros((6, 2)), method="2opt"), "method"),
    ],
)
def test_bad_arguments_raise_value_errors_naming_them(kwargs, words):
    with pytest.raises((ValueError, OSError)) as e:
        wend.solve_matrix(LINE_COST, **kwargs)
    assert words in str(e.value)


def test_a_stop_given_windows_twice_is_refused():
    with pytest.raises(ValueError, match="stop 3 already has windows from the file"):
        wend.solve_file(N20, windows=[[]] * 3 + [[(0, 10)]] + [[]] * 17)
    with pytest.raises(ValueError, match="windows has 2 entries but there are 21 stops"):
        wend.solve_file(N20, windows=[[], []])
