"""Compile and audit generated protocols of 1,000, 10,000 and 100,000 trials on the demo display.

The protocol is the shipped after-image nulling design (4 conditions, adjustment response, blocks by axis in a
Latin square) with its repeats raised. Each size is timed best of three in one run.
Last line: ``trials_10k_s=… scaling_100k_over_10k=…``. Targets: under 0.1 s for 10,000 trials, scaling ≤ 12×.
"""

from __future__ import annotations

import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from stimlab.audit.preflight import audit_protocol  # noqa: E402
from stimlab.experiment.compile import compile_protocol  # noqa: E402
from stimlab.experiment.protocol import validate_protocol  # noqa: E402
from stimlab.profiles.demo import demo_profile  # noqa: E402


def generated(trials: int) -> dict:
    protocol = json.loads((ROOT / "protocols" / "afterimage_null.json").read_text())
    protocol["conditions"]["repeats"] = trials // 4
    return validate_protocol(protocol)


def best_time(protocol, profile, repeats=3):
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        compiled = compile_protocol(protocol, profile)
        report = audit_protocol(compiled, protocol, profile, max_age_days=10**6)
        best = min(best, time.perf_counter() - start)
    assert len(compiled.data["trials"]) == protocol["conditions"]["repeats"] * 4 and report["passed"]
    return best


def main() -> None:
    profile = demo_profile()
    times = {}
    for trials in (1_000, 10_000, 100_000):
        times[trials] = best_time(generated(trials), profile)
        print(f"  {trials:>7,} trials: {times[trials]:.4f} s ({times[trials] / trials * 1e6:.2f} µs per trial)")
    print(f"trials_10k_s={times[10_000]:.4f} scaling_100k_over_10k={times[100_000] / times[10_000]:.2f}")


if __name__ == "__main__":
    main()
