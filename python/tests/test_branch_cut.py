"""Exact proofs with branch and cut, which the module has when built with the cargo feature
`cuts` (python/README.md):

    python3 -m pip install ./python --config-settings="build-args=--features cuts"

References: TSPLIB 95's published optimal tour lengths (Reinelt, "TSPLIB 95", 1995, and the
TSPLIB optima list; copied in instances/optima.txt): st70 675, eil51 426 (symmetric), ftv33
1286, ft53 6905 (asymmetric). Every tour's length is recomputed here from the file's
coordinates or matrix, independently of the package; the command line's JSON for the keys.

On the light build (no branch and cut) these tests fail, saying how to build the module with
it, unless WEND_PY_LIGHT=1 says the light build is intended: they then check that it proves the
symmetric instances with branch and bound and refuses what needs branch and cut, with a message
naming the install command.
"""

from __future__ import annotations

import json
import os

import numpy as np
import pytest

import wend
from conftest import (
    INSTANCES,
    matrix_tour_length,
    parse_coords,
    parse_full_matrix,
    parse_optima,
    run_cli,
    tour_length,
)

WITH_CUTS = 'python3 -m pip install ./python --config-settings="build-args=--features cuts"'
HAS_CUTS = "branch-and-cut" in wend.exact_methods()
LIGHT = os.environ.get("WEND_PY_LIGHT") == "1"
# A guard against a proof that runs away; each takes well under a second when it works.
GUARD_SECONDS = 120.0


def expect_cuts() -> bool:
    """True when the module should prove with branch and cut; False when the light build is
    intended (WEND_PY_LIGHT=1) and is what is installed. Fails when the two disagree."""
    if LIGHT:
        assert not HAS_CUTS, (
            "WEND_PY_LIGHT=1 says the light build is intended, but the installed module has "
            "branch and cut; unset WEND_PY_LIGHT or install the light build (pip install ./python)"
        )
        return False
    assert HAS_CUTS, (
        "the installed wend module was built without branch and cut (cargo feature `cuts`); "
        f"install it with: {WITH_CUTS} -- or set WEND_PY_LIGHT=1 if the light build is intended"
    )
    return True


def assert_light_refusal(excinfo) -> None:
    text = str(excinfo.value)
    assert "built without branch and cut" in text, text
    assert "--features cuts" in text, text


def test_exact_methods_name_what_the_build_has():
    with_cuts = expect_cuts()
    names = wend.exact_methods()
    assert names[:2] == ["dynamic-programme", "branch-and-bound"]
    assert names == ["dynamic-programme", "branch-and-bound"] + (
        ["branch-and-cut"] if with_cuts else [])
    assert "exact_methods" in wend.__all__
    assert "branch-and-cut" in (wend.exact_methods.__doc__ or "")


def symmetric_case(name: str):
    kind, coords = parse_coords(INSTANCES / f"{name}.tsp")
    assert kind == "EUC_2D"
    return coords, lambda order: tour_length(kind, coords, order)


def asymmetric_case(name: str):
    rows = parse_full_matrix(INSTANCES / f"{name}.atsp")
    return rows, lambda order: matrix_tour_length(rows, order)


def solve_case(name: str, entry: str, **options):
    """Solves TSPLIB instance `name` through the entry point `entry` (file, points or matrix);
    returns the result, the node count and the independent length function."""
    if name in ("st70", "eil51"):
        coords, length = symmetric_case(name)
        n = len(coords)
        if entry == "points":
            return wend.solve_points(np.array(coords), "EUC_2D", **options), n, length
        return wend.solve_file(INSTANCES / f"{name}.tsp", **options), n, length
    rows, length = asymmetric_case(name)
    n = len(rows)
    if entry == "matrix":
        return wend.solve_matrix(np.array(rows, dtype=np.int64), **options), n, length
    return wend.solve_file(INSTANCES / f"{name}.atsp", **options), n, length


def assert_proven(r, n: int, length, optimum: int, method: str, kind: str) -> None:
    assert r.method == "exact"
    assert r.exact_method == method
    assert r.proven_optimal is True
    assert r.length == optimum
    assert r.lower_bound == optimum
    assert (r.type, r.nodes) == (kind, n)
    order = r.order.tolist()
    assert sorted(order) == list(range(n))
    # The tour's length recomputed here from the file's coordinates or matrix.
    assert length(order) == optimum
    assert isinstance(r.subproblems, int) and r.subproblems >= 1
    assert r.first_tour_length is not None and r.first_tour_length >= optimum
    assert isinstance(r.seconds, float) and 0.0 <= r.seconds < GUARD_SECONDS
    assert r.trace.shape == (0, 2)


# Each instance through a different entry point: the file, the points, the matrix.
@pytest.mark.parametrize(
    "name, entry, kind",
    [
        ("st70", "file", "TSP"),
        ("eil51", "points", "TSP"),
        ("ftv33", "matrix", "ATSP"),
        ("ft53", "file", "ATSP"),
    ],
)
def test_exact_proves_the_published_optimum_with_branch_and_cut(name, entry, kind):
    optimum = parse_optima()[name]
    assert optimum == {"st70": 675, "eil51": 426, "ftv33": 1286, "ft53": 6905}[name]
    if expect_cuts():
        r, n, length = solve_case(name, entry, exact=True, time_limit=GUARD_SECONDS)
        assert_proven(r, n, length, optimum, "branch-and-cut", kind)
    elif kind == "TSP":
        # The light build: branch and bound on the 1-tree bound above 16 nodes.
        r, n, length = solve_case(name, entry, exact=True, time_limit=GUARD_SECONDS)
        assert_proven(r, n, length, optimum, "branch-and-bound", kind)
    else:
        # The light build refuses asymmetric costs above the dynamic programme's 24 nodes.
        with pytest.raises(ValueError, match="limited to 24 nodes") as excinfo:
            solve_case(name, entry, exact=True, time_limit=GUARD_SECONDS)
        assert_light_refusal(excinfo)


@pytest.mark.parametrize("entry", ["file", "points"])
def test_branch_and_cut_asked_for_by_name(entry):
    optimum = parse_optima()["st70"]
    if expect_cuts():
        r, n, length = solve_case("st70", entry, exact=True, exact_method="branch-and-cut")
        assert_proven(r, n, length, optimum, "branch-and-cut", "TSP")
    else:
        with pytest.raises(ValueError, match="branch-and-cut") as excinfo:
            solve_case("st70", entry, exact=True, exact_method="branch-and-cut")
        assert_light_refusal(excinfo)


def test_branch_and_bound_still_proves_st70():
    # Asked for by name, branch and bound runs in either build.
    r, n, length = solve_case("st70", "file", exact=True, exact_method="branch-and-bound",
                              time_limit=GUARD_SECONDS)
    assert_proven(r, n, length, parse_optima()["st70"], "branch-and-bound", "TSP")


def test_small_instances_still_go_to_the_dynamic_programme():
    # burma14 (TSPLIB 95 optimum 3323): 14 nodes, within the dynamic programme's range.
    r = wend.solve_file(INSTANCES / "burma14.tsp", exact=True)
    assert (r.exact_method, r.length, r.lower_bound, r.subproblems) == (
        "dynamic-programme", 3323, 3323, 0)


# Reference: `wend solve --exact --json`, which proves with branch and cut.
@pytest.mark.parametrize("name", ["st70.tsp", "ft53.atsp"])
def test_the_command_and_the_module_agree(wend_cli, name):
    path = INSTANCES / name
    cli = json.loads(run_cli(wend_cli, "solve", str(path), "--exact", "--json").stdout)
    assert cli["exact_method"] == "branch-and-cut" and cli["proven_optimal"] is True
    if not expect_cuts():
        if name.endswith(".atsp"):
            with pytest.raises(ValueError, match="built without branch and cut"):
                wend.solve_file(path, exact=True)
        return
    r = wend.solve_file(path, exact=True)
    assert set(r.keys()) - {"order", "trace"} == set(cli)
    for key in ("exact_method", "proven_optimal", "length", "lower_bound", "type", "nodes"):
        assert r.to_dict()[key] == cli[key], key
