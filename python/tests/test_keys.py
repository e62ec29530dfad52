"""The keys of a Python result are the keys docs/output-keys.md lists for `wend solve --json`
(section "## solve") and `wend solve --exact --json` (section "## solve --exact"), plus the
two arrays only Python has, `order` and `trace`."""

from __future__ import annotations

import json
import re

import pytest

import wend
from conftest import INSTANCES, ROOT, run_cli

DOC = ROOT / "docs" / "output-keys.md"
ARRAYS = {"order", "trace"}


def documented_keys(section: str, doc=DOC) -> set:
    """The first cells (`key` in backticks) of the table under the heading `## {section}`."""
    keys = set()
    inside = False
    for line in doc.read_text(encoding="utf-8").splitlines():
        if line.startswith("## "):
            inside = line[3:].strip() == section
            continue
        if not inside or not line.startswith("|"):
            continue
        first = line.strip("|").split("|")[0].strip()
        m = re.fullmatch(r"`([^`]+)`", first)
        if m:
            keys.add(m.group(1))
    assert keys, f"{doc}: no keys under '## {section}'"
    return keys


def test_the_key_reader_reads_a_table(tmp_path):
    # The reader itself, on a page written here: rows under the right heading only.
    page = tmp_path / "keys.md"
    page.write_text(
        "# Keys\n\n## solve\n\n| key | present | unit | meaning |\n|---|---|---|---|\n"
        "| `length` | always | | the length |\n| `seed` | always | | the seed |\n\n"
        "## solve --exact\n\n| key | present | unit | meaning |\n|---|---|---|---|\n"
        "| `proven_optimal` | always | | |\n"
    )
    assert documented_keys("solve", page) == {"length", "seed"}
    assert documented_keys("solve --exact", page) == {"proven_optimal"}


def result_names(r) -> set:
    names = set(r.keys())
    for name in names:
        getattr(r, name)  # every listed name is an attribute
    return names


def test_a_search_result_has_the_documented_keys(tmp_path):
    r = wend.solve_file(INSTANCES / "berlin52.tsp", seed=1, iterations=20, runs=1, threads=1,
                        tour_out=tmp_path / "b.tour")
    assert result_names(r) == documented_keys("solve") | ARRAYS


def test_a_proof_has_the_documented_keys():
    r = wend.solve_file(INSTANCES / "burma14.tsp", exact=True)
    assert result_names(r) == documented_keys("solve --exact") | ARRAYS


def test_points_and_matrices_have_the_same_keys():
    pts = [[0.0, 0.0], [3.0, 4.0], [6.0, 0.0], [3.0, -4.0], [1.0, 1.0]]
    a = wend.solve_points(pts, iterations=5, runs=1)
    b = wend.solve_matrix([[0, 4, 9], [3, 0, 2], [8, 1, 0]], iterations=5, runs=1)
    want = documented_keys("solve") | ARRAYS
    assert result_names(a) == want and result_names(b) == want
    assert (a.file, a.instance, a.tour_out, a.type, a.nodes) == (None, None, None, "TSP", 5)
    assert (b.type, b.nodes) == ("ATSP", 3)


# Reference: the command line's JSON on the same file, with and without --exact.
@pytest.mark.parametrize("exact", [False, True])
def test_the_command_prints_the_same_keys(wend_cli, exact):
    path = INSTANCES / "burma14.tsp"
    args = ["--exact"] if exact else ["--iterations", "5", "--runs", "1"]
    cli = json.loads(run_cli(wend_cli, "solve", str(path), "--json", *args).stdout)
    r = wend.solve_file(path, exact=exact) if exact else wend.solve_file(
        path, iterations=5, runs=1)
    assert set(r.keys()) - ARRAYS == set(cli)


def test_a_result_under_constraints_has_the_documented_keys():
    want = documented_keys("Python result under constraints") | ARRAYS
    on_file = wend.solve_file(INSTANCES / "tsptw" / "n20w20.001.txt", seed=1, iterations=5,
                              runs=1)
    on_matrix = wend.solve_matrix([[0, 4, 9], [3, 0, 2], [8, 1, 0]],
                                  windows=[[0, 100], [0, 1], [0, 100]], iterations=5)
    proof = wend.solve_file(INSTANCES / "tsptw" / "n20w20.001.txt", exact=True)
    for r in (on_file, on_matrix, proof):
        assert result_names(r) == want
    assert not on_matrix.feasible and on_matrix.violations
    assert set(on_matrix.violations[0]) == {"kind", "stops", "by", "message"}
