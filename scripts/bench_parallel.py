"""Wall time of one case solved serially and with --workers N (issue 14), and whether every
number agrees.

    python scripts/bench_parallel.py [CASE] [--workers 2] [--scheduler local]

The machine is shared: run it twice and read the spread.
"""
import argparse
import time

import numpy as np

import copperpath


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("case", nargs="?", default="tests/data/scaleout/loop.toml")
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--scheduler")
    args = ap.parse_args()
    case = copperpath.load_case(args.case)
    t = time.perf_counter()
    a = copperpath.solve(case)
    serial = time.perf_counter() - t
    t = time.perf_counter()
    b = copperpath.solve(case, workers=args.workers, scheduler=args.scheduler)
    split = time.perf_counter() - t
    run = b.result.info["parallel"]
    same = all(np.array_equal(getattr(a.result, k), getattr(b.result, k))
               for k in ("impedance", "dc_inductance", "currents", "potentials"))
    print(f"{args.case}: {a.system.network.n_branches} unknowns, {len(a.frequencies)} frequencies, "
          f"{a.system.method}; serial {serial:.1f} s (solve {a.timing['solve']:.1f} s), "
          f"{run['where']} {split:.1f} s (solve {b.timing['solve']:.1f} s, {run['tasks']} tasks); "
          f"memory per task {run['memory_per_task_bytes'] / 2**20:.0f} MiB + shared "
          f"{run['shared_system_bytes'] / 2**20:.0f} MiB; identical: {same}")


if __name__ == "__main__":
    main()
