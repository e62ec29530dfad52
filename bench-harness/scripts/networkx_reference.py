#!/usr/bin/env python3
"""Run networkx's general-purpose TSP approximations on TSPLIB instances and write the results
in wend's runs.jsonl schema, so that `wend bench --report` puts them in the same tables and plots.

    pip install -r bench-harness/scripts/requirements.txt
    python3 bench-harness/scripts/networkx_reference.py --out DIR --seeds 3 --time-limit 1 \
        --known-lengths instances/optima.txt instances/kroA100.tsp ...

Each tour is written as a TSPLIB TOUR file and its length is computed by `wend measure`, so both
programs' lengths come from the same distance code. networkx's methods have no time limit;
`--time-limit` only labels the records so that they pair with a wend sweep run at that limit.
Christofides is skipped above --christofides-max nodes (its matching step is cubic).
"""
import argparse
import json
import os
import platform
import subprocess
import sys
import time

import networkx as nx
import tsplib95
from networkx.algorithms import approximation as approx


def machine():
    cores = os.cpu_count()
    cpu = "unknown CPU"
    try:
        for line in open("/proc/cpuinfo"):
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    return f"{cores} cores, {cpu}, {platform.system().lower()} {platform.machine()}"


def read_optima(path):
    optima = {}
    if path:
        for line in open(path):
            line = line.split("#", 1)[0].strip()
            if ":" in line:
                name, value = line.split(":", 1)
                optima[name.strip()] = int(value)
    return optima


def graph(problem):
    g = nx.Graph()
    nodes = list(problem.get_nodes())
    for i, a in enumerate(nodes):
        for b in nodes[i + 1:]:
            g.add_edge(a, b, weight=problem.get_weight(a, b))
    return g, nodes


def write_tour(path, name, order, nodes):
    index = {v: k + 1 for k, v in enumerate(nodes)}  # 1-based ids in file order
    with open(path, "w") as f:
        f.write(f"NAME : {name}\nTYPE : TOUR\nDIMENSION : {len(order)}\nTOUR_SECTION\n")
        for v in order:
            f.write(f"{index[v]}\n")
        f.write("-1\nEOF\n")


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("instances", nargs="+")
    ap.add_argument("--out", required=True)
    ap.add_argument("--seeds", type=int, default=1)
    ap.add_argument("--time-limit", type=float, default=1.0)
    ap.add_argument("--known-lengths", "--optima", dest="known_lengths",
                    help="file of known optimal lengths (--optima: the old spelling)")
    ap.add_argument("--wend", default="target/release/wend")
    ap.add_argument("--christofides-max", type=int, default=400)
    ap.add_argument("--methods",
                    help="comma-separated: run only these of nx-greedy, nx-christofides, "
                         "nx-annealing, nx-threshold")
    args = ap.parse_args()

    os.makedirs(os.path.join(args.out, "tours"), exist_ok=True)
    optima = read_optima(args.known_lengths)
    mach = machine()
    runs_path = os.path.join(args.out, "runs.jsonl")
    methods = {
        "nx-greedy": lambda g, s: approx.greedy_tsp(g, source=None),
        "nx-christofides": lambda g, s: approx.christofides(g),
        "nx-annealing": lambda g, s: approx.simulated_annealing_tsp(g, "greedy", seed=s),
        "nx-threshold": lambda g, s: approx.threshold_accepting_tsp(g, "greedy", seed=s),
    }
    if args.methods:
        wanted = [m.strip() for m in args.methods.split(",") if m.strip()]
        unknown = set(wanted) - set(methods)
        if unknown:
            sys.exit(f"unknown methods {sorted(unknown)}; choose from {sorted(methods)}")
        methods = {m: f for m, f in methods.items() if m in wanted}
    deterministic = {"nx-greedy", "nx-christofides"}
    with open(runs_path, "a") as out:
        for path in args.instances:
            name = os.path.splitext(os.path.basename(path))[0]
            problem = tsplib95.load(path)
            if str(problem.type).split()[0] != "TSP":
                print(f"{path}: skipped, networkx's approximations need symmetric costs", file=sys.stderr)
                continue
            g, nodes = graph(problem)
            for method, run in methods.items():
                if method == "nx-christofides" and len(nodes) > args.christofides_max:
                    print(f"{name}: christofides skipped ({len(nodes)} nodes)", file=sys.stderr)
                    continue
                for seed in range(args.seeds):
                    t0 = time.perf_counter()
                    cycle = run(g, seed)
                    seconds = time.perf_counter() - t0
                    order = cycle[:-1] if cycle[0] == cycle[-1] else cycle
                    tour_rel = f"tours/{name}.{method}.s{seed}.tour"
                    write_tour(os.path.join(args.out, tour_rel), name, order, nodes)
                    measured = subprocess.run(
                        [args.wend, "measure", path, os.path.join(args.out, tour_rel), "--json"],
                        check=True, capture_output=True, text=True)
                    length = json.loads(measured.stdout)["length"]
                    opt = optima.get(name)
                    rec = {
                        "instance": name, "file": path, "type": "TSP", "nodes": len(nodes),
                        "method": method, "seed": seed, "time_limit": args.time_limit,
                        "threads": 1, "length": length, "optimum": opt,
                        "gap_percent": None if not opt else 100.0 * (length - opt) / opt,
                        "seconds": seconds, "time_to_best": seconds, "lower_bound": None,
                        "stop_reason": "finished", "runs": 1, "iterations": 0, "trace": [[seconds, length]],
                        "tour_file": tour_rel, "version": f"networkx {nx.__version__}",
                        "commit": "n/a", "machine": mach,
                    }
                    out.write(json.dumps(rec) + "\n")
                    out.flush()
                    print(f"{name} {method} seed {seed}: {length} in {seconds:.2f} s", file=sys.stderr)
                    if method in deterministic:
                        # Same answer for every seed: record it once per seed without rerunning.
                        for s in range(seed + 1, args.seeds):
                            rec = dict(rec, seed=s)
                            out.write(json.dumps(rec) + "\n")
                        break


if __name__ == "__main__":
    main()
