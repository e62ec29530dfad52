"""Wall time of one solve from Python against the same solve by the command line.

    python python/scripts/bench_vs_cli.py INSTANCE.tsp --iterations K [--repeats 5]

Runs `wend solve INSTANCE --seed 0 --threads 2 --iterations K --runs 2 --tour-out F`
(with `--json` when asked) and
`wend.solve_file(INSTANCE, seed=0, threads=2, iterations=K, runs=2)` alternately, checks
that every run gives the same tour, and prints the median wall times and their ratio. The
command's time is the whole process (reading the file included); the Python time is the call
(reading the file included), in an interpreter that has already imported wend.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import wend

ROOT = Path(__file__).resolve().parents[2]


def tour_of(path: Path) -> list:
    return wend.read_tour(path).order.tolist()


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("instance")
    ap.add_argument("--iterations", type=int, required=True)
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--cli", default=str(ROOT / "target" / "release" / "wend"))
    ap.add_argument("--json", action="store_true",
                    help="run the command with --json (no progress lines on stderr)")
    a = ap.parse_args()
    common = ["--seed", "0", "--threads", str(a.threads), "--iterations", str(a.iterations),
              "--runs", "2"] + (["--json"] if a.json else [])
    cli_times, py_times = [], []
    reference = None
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "cli.tour"
        for k in range(a.repeats):
            t0 = time.perf_counter()
            subprocess.run([a.cli, "solve", a.instance, *common, "--tour-out", str(out)],
                           check=True, stdout=subprocess.DEVNULL)
            cli_times.append(time.perf_counter() - t0)
            cli_tour = tour_of(out)

            t0 = time.perf_counter()
            r = wend.solve_file(a.instance, seed=0, threads=a.threads,
                                iterations=a.iterations, runs=2)
            py_times.append(time.perf_counter() - t0)
            py_tour = r.order.tolist()

            same = cli_tour == py_tour and (reference is None or reference == py_tour)
            reference = reference or py_tour
            print(f"repeat {k + 1}: command {cli_times[-1]:.2f} s, python {py_times[-1]:.2f} s, "
                  f"length {r.length}, same tour: {same}", flush=True)
            if not same:
                print("the tours differ", file=sys.stderr)
                return 1
    mc, mp = statistics.median(cli_times), statistics.median(py_times)
    print(f"median: command {mc:.3f} s, python {mp:.3f} s, python / command {mp / mc:.3f}")
    print(f"all: command {[round(t, 3) for t in cli_times]}, python {[round(t, 3) for t in py_times]}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
