"""Ctrl-C during a solve stops the core and returns the best tour so far."""

from __future__ import annotations

import os
import signal
import threading
import time

import numpy as np
import pytest

import wend


@pytest.fixture(autouse=True)
def python_handles_sigint():
    """SIGINT raises KeyboardInterrupt, as in a notebook or a terminal, even when the test run
    was started with SIGINT ignored (as background jobs of a shell are)."""
    old = signal.signal(signal.SIGINT, signal.default_int_handler)
    yield
    signal.signal(signal.SIGINT, old)


def test_ctrl_c_returns_the_best_tour_quickly():
    pts = np.random.default_rng(3).uniform(0, 100000, size=(5000, 2))
    timer = threading.Timer(1.0, lambda: os.kill(os.getpid(), signal.SIGINT))
    t0 = time.monotonic()
    timer.start()
    try:
        r = wend.solve_points(pts, time_limit=60.0, threads=2)
    finally:
        timer.cancel()
    elapsed = time.monotonic() - t0
    assert r.stop_reason == "cancelled"
    assert elapsed < 2.5, f"took {elapsed:.2f} s to stop"
    assert sorted(r.order.tolist()) == list(range(5000))
    assert r.length > 0


def test_ctrl_c_stops_a_sky_plan():
    timer = threading.Timer(0.5, lambda: os.kill(os.getpid(), signal.SIGINT))
    t0 = time.monotonic()
    timer.start()
    try:
        p = wend.plan_sky(time_limit=30.0, seed=0, threads=2, front=True)
    finally:
        timer.cancel()
    assert time.monotonic() - t0 < 10.0
    assert p.cancelled
    assert len(p.plan) > 0 and len(p.front) > 0
