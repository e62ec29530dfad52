# Type stubs of the extension module; the documented surface is wend/__init__.py.
from typing import Any, Dict, List, Optional, Tuple

import numpy as np

CAUTION: str
VERSION: str

# `options` is a JSON object under the solve functions' option names; the result holds `json`
# (the keys of `wend solve --json` as a JSON object), `order` and `trace`.
def solve_points(points: np.ndarray, metric: str, options: str) -> Dict[str, Any]: ...
def solve_matrix(matrix: np.ndarray, options: str) -> Dict[str, Any]: ...
def solve_file(path: str, options: str) -> Dict[str, Any]: ...
def read_tsplib(path: str) -> Dict[str, Any]: ...
def write_points(
    path: str, points: np.ndarray, metric: str, name: str, comments: List[str]
) -> None: ...
def write_matrix(path: str, matrix: np.ndarray, name: str, comments: List[str]) -> None: ...
def read_tour(path: str) -> Dict[str, Any]: ...
def write_tour(path: str, order: List[int], name: str, comment: str) -> None: ...
def plan_sky(
    targets_csv: Optional[str],
    source: str,
    profile_path: Optional[str],
    start: Optional[str],
    horizon_days: float,
    time_limit: Optional[float],
    seed: int,
    threads: Optional[int],
    front: bool,
    links_csv: Optional[str] = None,
) -> Dict[str, Any]: ...
def methods() -> List[Tuple[str, str]]: ...

# The exact methods this build can run: "dynamic-programme", "branch-and-bound", and
# "branch-and-cut" when built with the cargo feature `cuts`.
def exact_methods() -> List[str]: ...

# Under constraints: `given` is a JSON object of the constraint arguments, `table_text` /
# `table_path` a constraints table, `start` an order to improve (0-based). The result holds
# `json` (the keys of `wend solve --json` under constraints, the schedule among them), `order`
# and `trace`.
def solve_points_constrained(
    points: np.ndarray,
    metric: str,
    options: str,
    given: str,
    table_text: Optional[str],
    table_path: Optional[str],
    start: Optional[List[int]],
) -> Dict[str, Any]: ...
def solve_matrix_constrained(
    matrix: np.ndarray,
    options: str,
    given: str,
    table_text: Optional[str],
    table_path: Optional[str],
    start: Optional[List[int]],
) -> Dict[str, Any]: ...
# `None` when `only_with_windows` and the file has no time windows.
def solve_file_constrained(
    path: str,
    options: str,
    given: str,
    table_text: Optional[str],
    table_path: Optional[str],
    start: Optional[List[int]],
    only_with_windows: bool,
) -> Optional[Dict[str, Any]]: ...
