"""Shared helpers of the Python package's tests.

The outside references these tests check against, each named where it is used:
- the `wend` command line (built from the same workspace) for the same seed and options;
- TSPLIB 95's published optimal tour lengths (instances/optima.txt);
- TSPLIB 95's distance functions (Reinelt, "TSPLIB 95", section 2), recomputed here in plain
  Python from the files' coordinates, independently of the package; and the explicit cost
  matrices of the asymmetric files, read here from the files.

The environment variable WEND_PY_LIGHT=1 says the module under test is the light build
(without the cargo feature `cuts`, hence without branch and cut): the branch-and-cut tests then
check its refusals instead, and fail if the module has branch and cut after all. Without it
they expect branch and cut and fail on a light build, saying how to build the module with it.
"""

from __future__ import annotations

import math
import os
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
INSTANCES = ROOT / "instances"


@pytest.fixture(scope="session")
def wend_cli() -> Path:
    """The `wend` binary of this workspace (built when missing)."""
    exe = Path(os.environ.get("WEND_CLI", ROOT / "target" / "release" / "wend"))
    if not exe.exists():
        subprocess.run(
            ["cargo", "build", "--release", "-p", "wend-bench"], cwd=ROOT, check=True
        )
    assert exe.exists(), f"no wend binary at {exe}"
    return exe


def run_cli(exe: Path, *args: str) -> subprocess.CompletedProcess:
    return subprocess.run(
        [str(exe), *args], cwd=ROOT, check=True, capture_output=True, text=True
    )


def parse_optima() -> dict:
    """instances/optima.txt: TSPLIB 95's published optimal lengths, `name : length`."""
    out = {}
    for line in (INSTANCES / "optima.txt").read_text().splitlines():
        line = line.strip()
        if not line or line.startswith("#"):
            continue
        name, value = line.split(":")
        out[name.strip()] = int(value)
    return out


def parse_coords(path: Path):
    """(edge weight type, list of (x, y)) of a TSPLIB coordinate file, read independently."""
    kind = None
    coords = []
    in_section = False
    for raw in path.read_text().splitlines():
        line = raw.strip()
        if not line:
            continue
        if in_section:
            if line == "EOF" or not line[0].isdigit() and line[0] not in "+-.":
                break
            parts = line.split()
            coords.append((float(parts[1]), float(parts[2])))
            continue
        if ":" in line:
            key, value = (s.strip() for s in line.split(":", 1))
            if key == "EDGE_WEIGHT_TYPE":
                kind = value
        elif line.startswith("NODE_COORD_SECTION"):
            in_section = True
    return kind, coords


def nint(x: float) -> int:
    return int(x + 0.5)


def tsplib_distance(kind: str, a, b) -> int:
    """TSPLIB 95's distance functions (Reinelt 1995, section 2), with their rounding."""
    xd, yd = a[0] - b[0], a[1] - b[1]
    if kind == "EUC_2D":
        return nint(math.sqrt(xd * xd + yd * yd))
    if kind == "CEIL_2D":
        return int(math.ceil(math.sqrt(xd * xd + yd * yd)))
    if kind == "ATT":
        r = math.sqrt((xd * xd + yd * yd) / 10.0)
        t = nint(r)
        return t + 1 if t < r else t
    if kind == "GEO":
        def rad(v):
            deg = int(v)
            return math.pi * (deg + 5.0 * (v - deg) / 3.0) / 180.0
        lat_a, lon_a, lat_b, lon_b = rad(a[0]), rad(a[1]), rad(b[0]), rad(b[1])
        q1 = math.cos(lon_a - lon_b)
        q2 = math.cos(lat_a - lat_b)
        q3 = math.cos(lat_a + lat_b)
        return int(6378.388 * math.acos(0.5 * ((1.0 + q1) * q2 - (1.0 - q1) * q3)) + 1.0)
    raise ValueError(kind)


def tour_length(kind: str, coords, order, closed: bool = True) -> int:
    n = len(order)
    steps = n if closed else n - 1
    return sum(
        tsplib_distance(kind, coords[order[k]], coords[order[(k + 1) % n]])
        for k in range(steps)
    )


def parse_tour_file(path: Path) -> list:
    """The 0-based order of a TSPLIB TOUR file, read independently."""
    nodes = []
    in_section = False
    for raw in Path(path).read_text().splitlines():
        line = raw.strip()
        if line.startswith("TOUR_SECTION"):
            in_section = True
            continue
        if in_section:
            for tok in line.split():
                v = int(tok)
                if v == -1:
                    return nodes
                nodes.append(v - 1)
    return nodes


def parse_full_matrix(path: Path) -> list:
    """The rows of a TSPLIB file with EDGE_WEIGHT_FORMAT FULL_MATRIX, read independently."""
    dimension = None
    form = None
    numbers: list = []
    in_section = False
    for raw in Path(path).read_text().splitlines():
        line = raw.strip()
        if not line:
            continue
        if in_section:
            if line == "EOF" or not (line[0].isdigit() or line[0] == "-"):
                break
            numbers.extend(int(tok) for tok in line.split())
            continue
        if line.startswith("EDGE_WEIGHT_SECTION"):
            in_section = True
        elif ":" in line:
            key, value = (s.strip() for s in line.split(":", 1))
            if key == "DIMENSION":
                dimension = int(value)
            elif key == "EDGE_WEIGHT_FORMAT":
                form = value
    assert form == "FULL_MATRIX", f"{path}: EDGE_WEIGHT_FORMAT {form}"
    assert dimension is not None and len(numbers) == dimension * dimension, path
    return [numbers[i * dimension:(i + 1) * dimension] for i in range(dimension)]


def matrix_tour_length(rows, order) -> int:
    """The closed tour's length over a cost matrix: the step from i to j costs rows[i][j]."""
    n = len(order)
    return sum(rows[order[k]][order[(k + 1) % n]] for k in range(n))
