# %% [markdown]
# # Gap against time: two methods on a few TSPLIB instances
#
# A notebook-style script (cells marked `# %%`; it runs as a plain script too). It solves a few
# instances of `instances/` with `lk` and `2opt` for a few seeds, records each run's
# improvement trace (the time and length of every new best tour) and plots the gap to the
# published optimum against time.
#
#     pip install ./python matplotlib
#     python examples/python_gap_vs_time.py [OUT.png [SECONDS]]

# %%
import sys
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt
import numpy as np

import wend

ROOT = Path(__file__).resolve().parents[1]
INSTANCES = ROOT / "instances"
OUT = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("gap_vs_time.png")

NAMES = ["ch150", "a280", "att532", "gr666"]
METHODS = {"lk": "tab:blue", "2opt": "tab:orange"}
SEEDS = [0, 1, 2]
SECONDS = float(sys.argv[2]) if len(sys.argv) > 2 else 1.5  # per run

# %% The published optima (TSPLIB 95), as listed in instances/optima.txt.
optima = {}
for line in (INSTANCES / "optima.txt").read_text().splitlines():
    if line.strip() and not line.startswith("#"):
        name, value = line.split(":")
        optima[name.strip()] = int(value)

# %% Run every method on every instance for every seed, keeping the traces.
runs = []
for name in NAMES:
    for method in METHODS:
        for seed in SEEDS:
            r = wend.solve_file(INSTANCES / f"{name}.tsp", method=method, seed=seed,
                                time_limit=SECONDS, threads=1)
            gap = 100.0 * (r.trace[:, 1] - optima[name]) / optima[name]
            runs.append((name, method, seed, r.trace[:, 0], gap, r))
            print(f"{name:8} {method:5} seed {seed}: length {r.length} "
                  f"({100.0 * (r.length - optima[name]) / optima[name]:.2f} % above the optimum), "
                  f"{len(r.trace)} improvements, {r.runs} run(s), {r.seconds:.2f} s, {r.stop_reason}")

# %% Plot: one panel per instance, gap (log scale) against time, one line per run.
fig, axes = plt.subplots(1, len(NAMES), figsize=(4 * len(NAMES), 3.6), sharey=True)
for ax, name in zip(axes, NAMES):
    for inst, method, seed, t, gap, r in runs:
        if inst != name:
            continue
        # A step curve held to the end of the run; a gap of 0 is drawn at the floor.
        tt = np.append(t, r.seconds)
        gg = np.maximum(np.append(gap, gap[-1]), 1e-3)
        ax.step(tt, gg, where="post", color=METHODS[method], alpha=0.8,
                label=method if seed == SEEDS[0] else None)
    ax.set_xscale("symlog", linthresh=0.01)
    ax.set_yscale("log")
    ax.set_title(f"{name} (optimum {optima[name]})")
    ax.set_xlabel("seconds")
    ax.grid(True, which="both", alpha=0.3)
axes[0].set_ylabel("gap to the optimum, %  (floor 0.001 %)")
axes[0].legend(title=f"{len(SEEDS)} seeds each")
fig.suptitle("wend from Python: best tour so far against time")
fig.tight_layout()
fig.savefig(OUT, dpi=110)
print(f"wrote {OUT}")
