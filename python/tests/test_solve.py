"""Solving from Python: the same tours as the command line, lengths checked independently."""

from __future__ import annotations

import itertools
import json
import threading
import time

import numpy as np
import pytest

import wend
from conftest import (
    INSTANCES,
    parse_coords,
    parse_optima,
    parse_tour_file,
    run_cli,
    tour_length,
    tsplib_distance,
)


def cli_solve(exe, tmp_path, path, *args):
    """`wend solve --json --tour-out`: the JSON object and the 0-based tour of the TOUR file."""
    out = tmp_path / "cli.tour"
    done = run_cli(exe, "solve", str(path), "--json", "--tour-out", str(out), *args)
    return json.loads(done.stdout), parse_tour_file(out)


# Reference: the command line on the same file with the same seed, threads and budget.
@pytest.mark.parametrize(
    "name, py_opts, cli_args",
    [
        ("berlin52.tsp", dict(seed=3, threads=2, iterations=200, runs=2),
         ["--seed", "3", "--threads", "2", "--iterations", "200", "--runs", "2"]),
        ("kroA100.tsp", dict(method="2opt", seed=5, threads=1, runs=4),
         ["--method", "2opt", "--seed", "5", "--threads", "1", "--runs", "4"]),
        ("ft53.atsp", dict(seed=1, threads=2, iterations=100, runs=2),
         ["--seed", "1", "--threads", "2", "--iterations", "100", "--runs", "2"]),
        ("st70.tsp", dict(seed=2, threads=2, iterations=100, runs=2, start=4, end=9),
         ["--seed", "2", "--threads", "2", "--iterations", "100", "--runs", "2",
          "--start", "5", "--end", "10"]),
        ("eil51.tsp", dict(seed=0, threads=2, iterations=100, runs=2, open=True),
         ["--seed", "0", "--threads", "2", "--iterations", "100", "--runs", "2", "--open"]),
    ],
)
def test_same_tour_as_the_command_line(wend_cli, tmp_path, name, py_opts, cli_args):
    path = INSTANCES / name
    r = wend.solve_file(path, **py_opts)
    summary, cli_order = cli_solve(wend_cli, tmp_path, path, *cli_args)
    assert r.order.tolist() == cli_order
    assert r.length == summary["length"]
    assert r.stop_reason == summary["stop_reason"]
    assert r.ends == summary["ends"]


COORD_INSTANCES = ["berlin52", "att48", "eil51", "st70", "burma14", "ulysses16", "kroA100"]


# References: TSPLIB 95's published optima (instances/optima.txt) and its distance functions,
# recomputed in conftest.py from the file's coordinates.
@pytest.mark.parametrize("name", COORD_INSTANCES)
def test_tours_are_never_shorter_than_the_optimum(name):
    path = INSTANCES / f"{name}.tsp"
    kind, coords = parse_coords(path)
    r = wend.solve_file(path, seed=7, iterations=50, runs=1, threads=1)
    order = r.order.tolist()
    assert r.order.dtype == np.int64
    assert sorted(order) == list(range(len(coords)))
    assert r.length == tour_length(kind, coords, order)
    assert r.length >= parse_optima()[name]


def test_points_give_the_file_s_tour():
    # Reference: the same coordinates read from the file by the test itself, and the length
    # recomputed with TSPLIB's EUC_2D.
    path = INSTANCES / "kroA100.tsp"
    kind, coords = parse_coords(path)
    pts = np.array(coords)
    a = wend.solve_points(pts, "EUC_2D", seed=11, iterations=100, runs=2, threads=2)
    b = wend.solve_file(path, seed=11, iterations=100, runs=2, threads=2)
    assert a.order.tolist() == b.order.tolist()
    assert a.length == tour_length(kind, coords, a.order.tolist())
    assert a.length >= parse_optima()["kroA100"]


def test_integer_points_are_accepted():
    pts = np.array([[0, 0], [0, 3], [4, 3], [4, 0]], dtype=np.int32)
    r = wend.solve_points(pts)
    # A 3 x 4 rectangle: the shortest closed tour is its perimeter.
    assert r.length == 14


def brute_force(cost, closed=True, start=None, end=None):
    """The optimum over every order, by enumeration (the reference for small matrices)."""
    n = len(cost)
    best = None
    for perm in itertools.permutations(range(n)):
        if closed and perm[0] != 0:
            continue
        if start is not None and perm[0] != start:
            continue
        if end is not None and perm[-1] != end:
            continue
        steps = n if closed else n - 1
        length = sum(cost[perm[k]][perm[(k + 1) % n]] for k in range(steps))
        best = length if best is None else min(best, length)
    return best


def test_asymmetric_matrix_matches_enumeration():
    rng = np.random.default_rng(4)
    m = rng.integers(1, 100, size=(8, 8))
    np.fill_diagonal(m, 0)
    r = wend.solve_matrix(m, seed=0)
    order = r.order.tolist()
    assert sorted(order) == list(range(8))
    assert r.length == sum(m[order[k], order[(k + 1) % 8]] for k in range(8))
    assert r.length == brute_force(m.tolist())


def test_whole_float_matrix_is_accepted():
    m = np.array([[0, 2, 9], [1, 0, 6], [15, 7, 0]], dtype=float)
    r = wend.solve_matrix(m)
    assert r.length == brute_force(m.astype(int).tolist())


def test_open_path_and_fixed_ends():
    rng = np.random.default_rng(9)
    pts = rng.uniform(0, 1000, size=(8, 2))
    cost = [[tsplib_distance("EUC_2D", a, b) for b in pts] for a in pts]
    r = wend.solve_points(pts, open=True, seed=1)
    assert r.ends == "open"
    order = r.order.tolist()
    assert r.length == sum(cost[order[k]][order[k + 1]] for k in range(7))
    assert r.length == brute_force(cost, closed=False)
    f = wend.solve_points(pts, start=2, end=5, seed=1)
    order = f.order.tolist()
    assert order[0] == 2 and order[-1] == 5
    assert f.length == brute_force(cost, closed=False, start=2, end=5)


def test_lower_bound_brackets_the_optimum():
    # Reference: TSPLIB's published optimum of berlin52 (instances/optima.txt).
    r = wend.solve_file(INSTANCES / "berlin52.tsp", seed=0, iterations=100, runs=1,
                        bound=True, bound_time=5.0)
    opt = parse_optima()["berlin52"]
    assert r.lower_bound is not None
    assert 0 < r.lower_bound <= opt <= r.length
    assert r.gap_percent is not None and r.gap_percent >= 0
    assert wend.solve_file(INSTANCES / "berlin52.tsp", iterations=10).lower_bound is None


def test_trace_is_the_anytime_curve():
    path = INSTANCES / "kroA100.tsp"
    r = wend.solve_file(path, seed=2, iterations=300, runs=2, threads=1)
    t = r.trace
    assert t.ndim == 2 and t.shape[1] == 2 and t.shape[0] >= 1
    assert np.all(np.diff(t[:, 0]) >= 0)
    assert np.all(np.diff(t[:, 1]) < 0)
    assert t[-1, 1] == r.length
    assert t[0, 0] <= r.seconds


def test_methods_lists_names():
    names = [m for m, _ in wend.methods()]
    assert "lk" in names and "2opt" in names


def test_gil_is_released_while_solving():
    # While the core runs on another thread, this thread keeps running Python code.
    pts = np.random.default_rng(0).uniform(0, 10000, size=(3000, 2))
    out = {}

    def work():
        out["r"] = wend.solve_points(pts, time_limit=1.5, threads=1)

    th = threading.Thread(target=work)
    th.start()
    time.sleep(0.2)
    counted = 0
    t0 = time.monotonic()
    while time.monotonic() - t0 < 0.5:
        counted += 1
    alive = th.is_alive()
    th.join()
    assert alive, "the solve ended too early to tell"
    assert counted > 10000
    assert out["r"].stop_reason == "time_limit"


BAD_POINTS = [
    (np.array([[0.0, 0.0], [np.nan, 1.0], [2.0, 2.0]]), "not a finite number"),
    (np.array([[0.0, 0.0], [np.inf, 1.0], [2.0, 2.0]]), "not a finite number"),
    (np.zeros((4, 4)), "n x 2 or n x 3"),
    (np.zeros(6), "n x 2 or n x 3"),
    (np.zeros((0, 2)), "empty"),
    (np.array([["a", "b"], ["c", "d"]]), "numbers"),
]


@pytest.mark.parametrize("points, words", BAD_POINTS)
def test_bad_points_raise_value_error(points, words):
    with pytest.raises(ValueError, match=words):
        wend.solve_points(points)


BAD_MATRICES = [
    (np.zeros((3, 4), dtype=int), "square"),
    (np.zeros((0, 0), dtype=int), "empty"),
    (np.array([[0, 1.5], [1.5, 0]]), "whole number"),
    (np.array([[0, np.nan], [1, 0]]), "not a finite number"),
    (np.zeros(4, dtype=int), "square"),
]


@pytest.mark.parametrize("matrix, words", BAD_MATRICES)
def test_bad_matrices_raise_value_error(matrix, words):
    with pytest.raises(ValueError, match=words):
        wend.solve_matrix(matrix)


def test_bad_options_raise_value_error():
    pts = np.array([[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]])
    with pytest.raises(ValueError, match="method: unknown variant .no-such-method."):
        wend.solve_points(pts, method="no-such-method")
    with pytest.raises(ValueError, match="unknown distance"):
        wend.solve_points(pts, "EUC_4D")
    with pytest.raises(ValueError, match="threads"):
        wend.solve_points(pts, threads=0)
    with pytest.raises(ValueError, match="seed"):
        wend.solve_points(pts, seed=-1)
    with pytest.raises(ValueError, match="time_limit"):
        wend.solve_points(pts, time_limit=-1.0)
    with pytest.raises(ValueError, match="out of range"):
        wend.solve_points(pts, start=4)
    with pytest.raises(ValueError, match="lk"):
        wend.solve_points(pts, params={"no_such_key": 1})
    with pytest.raises(ValueError, match="n x 3"):
        wend.solve_points(pts, "EUC_3D")


def test_malformed_file_names_file_and_line(tmp_path):
    bad = tmp_path / "bad.tsp"
    bad.write_text(
        "NAME : bad\nTYPE : TSP\nDIMENSION : 3\nEDGE_WEIGHT_TYPE : EUC_2D\n"
        "NODE_COORD_SECTION\n1 0 0\n2 x 1\n3 2 2\nEOF\n"
    )
    with pytest.raises(ValueError, match=r"bad\.tsp:7"):
        wend.solve_file(bad)
    with pytest.raises(ValueError, match=r"bad\.tsp:7"):
        wend.read_tsplib(bad)


def test_missing_file_raises_os_error(tmp_path):
    with pytest.raises(FileNotFoundError, match="nothing.tsp"):
        wend.solve_file(tmp_path / "nothing.tsp")
    with pytest.raises(OSError):
        wend.read_tour(tmp_path / "nothing.tour")


def test_same_tour_as_the_command_line_on_10000_nodes(wend_cli, tmp_path):
    # Reference: the command line on the same generated file (10,000 nodes: the two-level
    # tour layout), same seed, threads and kick budget.
    path = tmp_path / "u10k.tsp"
    run_cli(wend_cli, "generate", "--nodes", "10000", "--seed", "1", "--out", str(path))
    args = dict(seed=0, threads=2, iterations=300, runs=2)
    r = wend.solve_file(path, **args)
    summary, cli_order = cli_solve(wend_cli, tmp_path, path, "--seed", "0", "--threads", "2",
                                   "--iterations", "300", "--runs", "2")
    assert r.order.tolist() == cli_order
    assert r.length == summary["length"]
