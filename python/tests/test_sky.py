"""Observing plans from Python (planning proposals to be confirmed by the operations team's
validated tools)."""

from __future__ import annotations

import csv
import io

import numpy as np
import pandas as pd
import pytest

import wend
from conftest import INSTANCES, run_cli

DEMO = INSTANCES / "sky" / "demo-targets.csv"
START = "2027-03-01T00:00:00Z"

# Decimals plan.csv prints each column with (sky/src/output.rs).
DECIMALS = {
    "elongation_start_deg": 4,
    "elongation_end_deg": 4,
    "slew_deg": 3,
    "slew_s": 1,
    "wait_before_s": 1,
    "busy_before_s": 1,
    "momentum_nms": 4,
}


def read_cli_csv(path):
    lines = [l for l in path.read_text().splitlines() if not l.startswith("#")]
    return list(csv.DictReader(io.StringIO("\n".join(lines))))


@pytest.fixture(scope="module")
def cli_plan(wend_cli, tmp_path_factory):
    out = tmp_path_factory.mktemp("sky")
    run_cli(wend_cli, "sky", "plan", str(DEMO), "--start", START, "--seed", "0",
            "--threads", "2", "--out", str(out))
    return read_cli_csv(out / "plan.csv"), read_cli_csv(out / "unscheduled.csv")


def test_plan_rows_equal_the_command_line_s(cli_plan):
    # Reference: plan.csv and unscheduled.csv of `wend sky plan` on the same table and seed.
    targets = pd.read_csv(DEMO, comment="#")
    p = wend.plan_sky(targets, start=START, seed=0, threads=2)
    rows, unscheduled = cli_plan
    assert list(p.plan.columns) == list(rows[0].keys())
    assert len(p.plan) == len(rows) > 0
    for got, want in zip(p.plan.itertuples(index=False), rows):
        got = got._asdict()
        assert got["position"] == int(want["position"])
        assert got["id"] == want["id"]
        assert got["dump"] == int(want["dump"])
        for c in ("start_utc", "end_utc"):
            assert got[c] == pd.Timestamp(want[c])
        for c, d in DECIMALS.items():
            assert abs(got[c] - float(want[c])) <= 0.5 * 10.0**-d + 1e-9, c
    assert p.unscheduled["id"].tolist() == [u["id"] for u in unscheduled]
    assert p.unscheduled["reason"].tolist() == [u["reason"] for u in unscheduled]
    assert p.summary["scheduled"] == len(rows)


def test_plan_carries_the_caution():
    p = wend.plan_sky(seed=0, threads=2)
    assert "planning proposals" in p.caution
    assert p.plan.attrs["caution"] == p.caution
    assert p.unscheduled.attrs["caution"] == p.caution
    assert "planning proposals" in p.summary["caution"]
    assert "planning proposals" in wend.plan_sky.__doc__


def test_a_dict_of_arrays_plans_like_the_data_frame():
    df = pd.read_csv(DEMO, comment="#")
    as_dict = {c: df[c].to_numpy() for c in df.columns}
    a = wend.plan_sky(df, start=START, seed=0, threads=2)
    b = wend.plan_sky(as_dict, start=START, seed=0, threads=2)
    assert a.plan["id"].tolist() == b.plan["id"].tolist()


def test_empty_instrument_cells_mean_the_first_instrument(wend_cli, tmp_path):
    # Reference: the command line on a targets file whose instrument cells are empty.
    df = pd.read_csv(DEMO, comment="#").head(20)
    df["instrument"] = None
    path = tmp_path / "t.csv"
    df.to_csv(path, index=False)
    out = tmp_path / "out"
    run_cli(wend_cli, "sky", "plan", str(path), "--start", START, "--seed", "0",
            "--threads", "2", "--out", str(out))
    p = wend.plan_sky(pd.read_csv(path), start=START, seed=0, threads=2)
    assert p.plan["id"].tolist() == [r["id"] for r in read_cli_csv(out / "plan.csv")]


def test_front_is_non_dominated():
    p = wend.plan_sky(seed=0, threads=2, front=True, time_limit=4.0)
    f = p.front
    assert list(f.columns) == ["plan", "busy_overhead_s", "wait_s", "elapsed_s",
                               "propellant_kg", "dumps", "scheduled"]
    assert f.attrs["caution"] == p.caution
    assert len(p.front_plans) == len(f) > 0
    pts = f[["busy_overhead_s", "propellant_kg"]].to_numpy()
    # No plan of a front is at least as good in both objectives and better in one than another.
    for i in range(len(pts)):
        for j in range(len(pts)):
            if i != j:
                assert not (np.all(pts[i] <= pts[j]) and np.any(pts[i] < pts[j]))
    for k, plan in enumerate(p.front_plans):
        assert len(plan) == f["scheduled"].iloc[k]
    # The summary names the hypervolume's unit and reference point, as the command does.
    assert p.summary["hypervolume_h_g"] > 0
    assert set(p.summary["hypervolume_reference"]) == {"busy_overhead_h", "propellant_g"}
    assert "hypervolume" not in p.summary


def test_summary_time_words_match_the_plan_rows():
    # Reference: the plan's own rows, which the summary's totals must add up to.
    p = wend.plan_sky(seed=0, threads=2)
    s = p.summary
    assert "overhead_s" not in s
    assert abs(s["busy_overhead_s"] - p.plan["busy_before_s"].sum()) < 1e-6
    assert abs(s["wait_s"] - p.plan["wait_before_s"].sum()) < 1e-6
    elapsed = (p.plan["end_utc"].iloc[-1] - pd.Timestamp(START)).total_seconds()
    assert abs(s["elapsed_s"] - elapsed) <= 1.0
    assert s["stop_reason"] in ("searches_done", "time_limit", "cancelled")


def test_bad_targets_raise_value_error():
    df = pd.read_csv(DEMO, comment="#")
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
