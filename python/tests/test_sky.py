"""Observing plans from Python (planning proposals to be confirmed by the operations team's
validated tools).

References: the files `wend sky plan` writes for the same inputs, seed and one thread (plain
CSV, read with pandas with no options), and the inputs' own windows and links.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import wend
from conftest import INSTANCES, run_cli

DEMO = INSTANCES / "sky" / "demo-targets.csv"
DEMO_LINKS = INSTANCES / "sky" / "demo-links.csv"
START = "2027-03-01T00:00:00Z"

PLAN_COLUMNS = [
    "seq", "target", "instrument", "roll_deg", "start_utc", "end_utc", "wait_before_s",
    "idle", "busy_before_s", "dumps_before", "dump_propellant_before_kg", "slew_deg",
    "slew_s", "elongation_start_deg", "elongation_end_deg", "hx_nms", "hy_nms", "hz_nms",
    "momentum_after_nms",
]
TEXT = ["seq", "target", "instrument", "idle", "dumps_before"]
# Decimals plan.csv prints each number column with (README, sky outputs; sky/src/output.rs).
DECIMALS = {
    "roll_deg": 2,
    "wait_before_s": 1,
    "busy_before_s": 1,
    "dump_propellant_before_kg": 9,
    "slew_deg": 3,
    "slew_s": 1,
    "elongation_start_deg": 4,
    "elongation_end_deg": 4,
    "hx_nms": 5,
    "hy_nms": 5,
    "hz_nms": 5,
    "momentum_after_nms": 5,
}
# Budgets, not the clock, end the searches with this much time and one thread, so that a seed
# gives one plan (README, sky adapter).
REPRODUCIBLE = dict(seed=0, threads=1, time_limit=60.0)
CLI_REPRODUCIBLE = ["--seed", "0", "--threads", "1", "--time-limit", "60"]


def demo_targets() -> pd.DataFrame:
    return pd.read_csv(DEMO)


def assert_same_plan(p, rows: pd.DataFrame, unscheduled: pd.DataFrame):
    """The Python plan equals the command's plan.csv and unscheduled.csv."""
    assert list(p.plan.columns) == PLAN_COLUMNS == list(rows.columns)
    assert len(p.plan) == len(rows) > 0
    for c in TEXT:
        assert p.plan[c].tolist() == rows[c].tolist(), c
    for c in ("start_utc", "end_utc"):
        assert p.plan[c].tolist() == pd.to_datetime(rows[c], utc=True).tolist(), c
    for c, d in DECIMALS.items():
        diff = np.abs(p.plan[c].to_numpy(dtype=float) - rows[c].to_numpy(dtype=float))
        assert diff.max() <= 0.5 * 10.0**-d + 1e-9, c
    assert list(p.unscheduled.columns) == list(unscheduled.columns)
    for c in ("target", "priority", "reason", "explanation"):
        assert p.unscheduled[c].tolist() == unscheduled[c].tolist(), c


@pytest.fixture(scope="module")
def cli_demo(wend_cli, tmp_path_factory):
    out = tmp_path_factory.mktemp("sky")
    run_cli(wend_cli, "sky", "plan", str(DEMO), "--links", str(DEMO_LINKS), "--start", START,
            *CLI_REPRODUCIBLE, "--out", str(out))
    return out


@pytest.fixture(scope="module")
def py_demo():
    return wend.plan_sky(demo_targets(), links=pd.read_csv(DEMO_LINKS), start=START,
                         **REPRODUCIBLE)


def test_plan_rows_equal_the_command_line_s(cli_demo, py_demo):
    # Reference: plan.csv and unscheduled.csv of `wend sky plan` on the same files and seed,
    # read as plain CSV (the header on the first line).
    rows = pd.read_csv(cli_demo / "plan.csv")
    unscheduled = pd.read_csv(cli_demo / "unscheduled.csv")
    summary = pd.read_json(cli_demo / "summary.json", typ="series")
    assert summary["stop_reason"] == py_demo.summary["stop_reason"] == "searches_done"
    assert_same_plan(py_demo, rows, unscheduled)
    assert py_demo.summary["scheduled"] == len(rows)
    assert py_demo.summary["horizon_days"] == 30.0


def test_the_demo_links_hold(py_demo):
    # Reference: demo-links.csv (README, sky inputs: `after` lags between the starts, `group`
    # directly after with no waiting).
    plan = py_demo.plan.reset_index(drop=True)
    at = {t: k for k, t in enumerate(plan["target"])}
    for link in pd.read_csv(DEMO_LINKS).itertuples(index=False):
        a, b = at[link.first], at[link.second]
        if link.kind == "group":
            assert b == a + 1 and plan["wait_before_s"].iloc[b] < 0.05
        else:
            lag = (plan["start_utc"].iloc[b] - plan["start_utc"].iloc[a]).total_seconds()
            assert link.min_lag_s - 1 <= lag <= link.max_lag_s + 1


def test_plan_carries_the_caution(py_demo):
    p = py_demo
    assert "planning proposals" in p.caution
    assert p.plan.attrs["caution"] == p.caution
    assert p.unscheduled.attrs["caution"] == p.caution
    assert "planning proposals" in p.summary["caution"]
    assert "planning proposals" in wend.plan_sky.__doc__


def test_a_dict_of_arrays_or_paths_plan_like_the_data_frames(py_demo):
    df = demo_targets()
    links = pd.read_csv(DEMO_LINKS)
    as_dict = {c: df[c].to_numpy() for c in df.columns}
    links_dict = {c: links[c].to_numpy() for c in links.columns}
    b = wend.plan_sky(as_dict, links=links_dict, start=START, **REPRODUCIBLE)
    assert py_demo.plan["target"].tolist() == b.plan["target"].tolist()
    c = wend.plan_sky(DEMO, links=DEMO_LINKS, start=START, **REPRODUCIBLE)
    assert py_demo.plan["target"].tolist() == c.plan["target"].tolist()


def test_empty_instrument_cells_mean_the_first_instrument(wend_cli, tmp_path):
    # Reference: the command line on a targets file whose instrument cells are empty.
    df = demo_targets().head(20)
    df["instrument"] = None
    path = tmp_path / "t.csv"
    df.to_csv(path, index=False)
    out = tmp_path / "out"
    run_cli(wend_cli, "sky", "plan", str(path), "--start", START, *CLI_REPRODUCIBLE,
            "--out", str(out))
    p = wend.plan_sky(pd.read_csv(path), start=START, **REPRODUCIBLE)
    assert_same_plan(p, pd.read_csv(out / "plan.csv"), pd.read_csv(out / "unscheduled.csv"))


def test_links_of_a_small_pool_equal_the_command_line_s(wend_cli, tmp_path):
    # Reference: the command line with --links on the same invented pool; the link kept.
    pool = pd.DataFrame({
        "id": ["A", "B", "C", "D"],
        "ra_deg": [120.0, 122.0, 118.0, 118.0],
        "dec_deg": [9.0, 8.0, 12.0, 12.0],
        "duration_s": [7200, 7200, 3600, 3600],
        "priority": pd.array([3, 3, 4, None], dtype="Int64"),
    })
    links = pd.DataFrame({
        "kind": ["after", "group"], "first": ["A", "C"], "second": ["B", "D"],
        "min_lag_s": pd.array([21600, None], dtype="Int64"),
        "max_lag_s": pd.array([43200, None], dtype="Int64"),
    })
    pool.to_csv(tmp_path / "pool.csv", index=False)
    links.to_csv(tmp_path / "links.csv", index=False)
    out = tmp_path / "out"
    run_cli(wend_cli, "sky", "plan", str(tmp_path / "pool.csv"), "--links",
            str(tmp_path / "links.csv"), "--start", START, "--horizon-days", "3",
            *CLI_REPRODUCIBLE, "--out", str(out))
    p = wend.plan_sky(pool, links=links, start=START, horizon_days=3, **REPRODUCIBLE)
    assert_same_plan(p, pd.read_csv(out / "plan.csv"), pd.read_csv(out / "unscheduled.csv"))
    order = p.plan["target"].tolist()
    assert sorted(order) == ["A", "B", "C", "D"]
    assert order.index("D") == order.index("C") + 1
    lag = (p.plan.set_index("target").loc["B", "start_utc"]
           - p.plan.set_index("target").loc["A", "start_utc"]).total_seconds()
    assert 21600 - 1 <= lag <= 43200 + 1


def test_front_is_non_dominated():
    p = wend.plan_sky(seed=0, threads=2, front=True, time_limit=4.0)
    f = p.front
    assert list(f.columns) == ["plan", "elapsed_s", "end_utc", "busy_overhead_s", "wait_s",
                               "propellant_kg", "dumps", "scheduled"]
    assert f.attrs["caution"] == p.caution
    assert len(p.front_plans) == len(f) > 0
    pts = f[["elapsed_s", "propellant_kg"]].to_numpy()
    # No plan of a front is at least as good in both objectives and better in one than another.
    for i in range(len(pts)):
        for j in range(len(pts)):
            if i != j:
                assert not (np.all(pts[i] <= pts[j]) and np.any(pts[i] < pts[j]))
    # The fastest end is no slower than the single plan; every plan schedules the same set.
    assert pts[:, 0].min() <= p.summary["elapsed_s"] + 1e-6
    sets = [frozenset(plan["target"]) for plan in p.front_plans]
    assert len(set(sets)) == 1
    for k, plan in enumerate(p.front_plans):
        assert len(plan) == f["scheduled"].iloc[k]
        elapsed = (plan["end_utc"].iloc[-1] - pd.Timestamp(START)).total_seconds()
        assert abs(elapsed - f["elapsed_s"].iloc[k]) <= 1.0
    # The summary names the hypervolume's unit and reference point, as the command does.
    assert p.summary["hypervolume_h_g"] > 0
    assert set(p.summary["hypervolume_reference"]) == {"elapsed_h", "propellant_g"}
    assert "hypervolume" not in p.summary


def test_summary_time_words_match_the_plan_rows(py_demo):
    # Reference: the plan's own rows, which the summary's totals must add up to.
    p = py_demo
    s = p.summary
    assert "overhead_s" not in s
    assert abs(s["busy_overhead_s"] - p.plan["busy_before_s"].sum()) < 1e-6
    assert abs(s["wait_s"] - p.plan["wait_before_s"].sum()) < 1e-6
    elapsed = (p.plan["end_utc"].iloc[-1] - pd.Timestamp(START)).total_seconds()
    assert abs(s["elapsed_s"] - elapsed) <= 1.0
    assert s["dumps"] == p.plan["dumps_before"].sum()
    assert s["peak_momentum_nms"] <= s["dump_threshold_nms"]
    assert (p.plan["momentum_after_nms"] <= s["dump_threshold_nms"]).all()


def test_bad_targets_raise_value_error():
    df = demo_targets()
    with pytest.raises(ValueError, match="ra_deg"):
        wend.plan_sky(df.drop(columns=["ra_deg"]), start=START)
    bad = df.copy()
    bad.loc[3, "ra_deg"] = 400.0
    with pytest.raises(ValueError, match="row 4"):
        wend.plan_sky(bad, start=START)
    bad = df.copy()
    bad.loc[0, "dec_deg"] = float("nan")
    with pytest.raises(ValueError, match="row 1"):
        wend.plan_sky(bad, start=START)
    with pytest.raises(ValueError, match="start"):
        wend.plan_sky(df)
    with pytest.raises(ValueError, match="start"):
        wend.plan_sky(df, start="2027-03-01T00:00:00")
    with pytest.raises(ValueError, match="horizon_days"):
        wend.plan_sky(df, start=START, horizon_days=-1)
    with pytest.raises(ValueError):
        wend.plan_sky([1, 2, 3], start=START)
    with pytest.raises(ValueError, match="NOPE"):
        wend.plan_sky(df, start=START,
                      links={"kind": ["after"], "first": ["LDS-001"], "second": ["NOPE"],
                             "min_lag_s": [None], "max_lag_s": [None]})
