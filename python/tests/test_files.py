"""Reading and writing TSPLIB problem and TOUR files from Python."""

from __future__ import annotations

import json

import numpy as np
import pytest

import wend
from conftest import INSTANCES, parse_coords, parse_optima, parse_tour_file, run_cli, tour_length


def test_read_tsplib_gives_the_file_s_points():
    # Reference: the coordinates as the test reads them itself.
    p = wend.read_tsplib(INSTANCES / "berlin52.tsp")
    kind, coords = parse_coords(INSTANCES / "berlin52.tsp")
    assert (p.name, p.kind, p.dimension, p.metric) == ("berlin52", "TSP", 52, kind)
    assert p.points.shape == (52, 2)
    assert np.array_equal(p.points, np.array(coords))
    assert p.matrix is None


def test_read_tsplib_explicit_matrix():
    p = wend.read_tsplib(INSTANCES / "ft53.atsp")
    assert p.kind == "ATSP" and p.points is None
    assert p.matrix.shape == (53, 53) and p.matrix.dtype == np.int64
    # Reference: the first weights of ft53 as printed in the file (FULL_MATRIX, row by row).
    first = [int(t) for t in
             (INSTANCES / "ft53.atsp").read_text().split("EDGE_WEIGHT_SECTION")[1].split()[:53]]
    assert p.matrix[0].tolist() == first


def test_optimal_tour_file_has_the_published_length():
    # Reference: TSPLIB 95's published optimum of att48 and its ATT distance (conftest.py).
    t = wend.read_tour(INSTANCES / "tours" / "att48.opt.tour")
    kind, coords = parse_coords(INSTANCES / "att48.tsp")
    assert t.order.dtype == np.int64 and sorted(t.order.tolist()) == list(range(48))
    assert t.order.tolist() == parse_tour_file(INSTANCES / "tours" / "att48.opt.tour")
    assert tour_length(kind, coords, t.order.tolist()) == parse_optima()["att48"]


def test_points_round_trip_and_the_command_line_agrees(wend_cli, tmp_path):
    rng = np.random.default_rng(1)
    pts = rng.uniform(0, 1000, size=(60, 2)) / 3.0
    path = tmp_path / "r60.tsp"
    wend.write_tsplib(path, points=pts, comments=["sixty points"])
    back = wend.read_tsplib(path)
    assert np.array_equal(back.points, pts)
    assert back.name == "r60" and back.comments == ["sixty points"]
    r = wend.solve_points(pts, seed=4, iterations=50, runs=2, threads=2)
    # Reference: the command line on the written file, same seed and budget.
    out = run_cli(wend_cli, "solve", str(path), "--json", "--seed", "4", "--iterations", "50",
                  "--runs", "2", "--threads", "2", "--tour-out", str(tmp_path / "t.tour"))
    assert json.loads(out.stdout)["length"] == r.length
    assert parse_tour_file(tmp_path / "t.tour") == r.order.tolist()


def test_matrix_round_trip(tmp_path):
    m = np.array([[0, 3, 4], [5, 0, 6], [7, 8, 0]])
    path = tmp_path / "m3.atsp"
    wend.write_tsplib(path, matrix=m)
    back = wend.read_tsplib(path)
    assert back.kind == "ATSP" and np.array_equal(back.matrix, m)
    sym = m + m.T
    wend.write_tsplib(tmp_path / "s3.tsp", matrix=sym)
    assert wend.read_tsplib(tmp_path / "s3.tsp").kind == "TSP"


def test_tour_round_trip(tmp_path):
    order = np.array([2, 0, 3, 1])
    path = tmp_path / "x.tour"
    wend.write_tour(path, order, comment="four nodes")
    # Reference: the file read by the test's own parser (1-based ids in the file).
    assert parse_tour_file(path) == [2, 0, 3, 1]
    t = wend.read_tour(path)
    assert t.order.tolist() == [2, 0, 3, 1] and t.dimension == 4
    assert t.comments == ["four nodes"]


def test_bad_writes_raise_value_error(tmp_path):
    with pytest.raises(ValueError, match="twice"):
        wend.write_tour(tmp_path / "d.tour", [0, 1, 1])
    with pytest.raises(ValueError, match="not a node index"):
        wend.write_tour(tmp_path / "d.tour", [0, 5, 1])
    with pytest.raises(ValueError, match="either points or matrix"):
        wend.write_tsplib(tmp_path / "e.tsp")
    with pytest.raises(ValueError, match="not a finite number"):
        wend.write_tsplib(tmp_path / "e.tsp", points=[[0, 0], [float("nan"), 1]])


def test_malformed_tour_file(tmp_path):
    path = tmp_path / "bad.tour"
    path.write_text("NAME : bad\nTYPE : TOUR\nDIMENSION : 3\nTOUR_SECTION\n1\n2\n2\n-1\nEOF\n")
    with pytest.raises(ValueError, match=r"bad\.tour:\d+"):
        wend.read_tour(path)


def test_write_to_missing_directory_raises_os_error(tmp_path):
    with pytest.raises(OSError):
        wend.write_tour(tmp_path / "no" / "such" / "dir.tour", [0, 1])
