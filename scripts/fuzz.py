"""Fuzz the input readers with many more examples than the test suite, with fresh seeds.

    PYTHONPATH=$PWD python scripts/fuzz.py                 # 8,000 examples per reader
    PYTHONPATH=$PWD python scripts/fuzz.py -n 20000 --reader gerber

The inputs are those of ``tests/test_fuzz_readers.py`` (``tests/fuzz_inputs.py``). For each
reader the script prints how many inputs were read, how many were refused with an
InputError, the slowest example, the most frequent refusals (to see how deep the fuzzing
gets), and, for anything else that escaped, the exception and the input that raised it;
it exits 1 if anything other than an InputError escaped or an example took longer than
``--max-seconds``.
"""
from __future__ import annotations

import argparse
import collections
import re
import sys
import tempfile
import time
import traceback
import warnings
from pathlib import Path

from hypothesis import HealthCheck, given, settings

from copperpath.geometry.errors import InputError
from tests import fuzz_inputs as fz


def _reader_runs(folder):
    (folder / "case").mkdir()
    fz.prepare_case_folder(folder / "case")
    return {
        "case": (fz.case_inputs, lambda data: fz.run_case(folder / "case", data)),
        "gerber": (fz.gerber_inputs, fz.run_gerber),
        "excellon": (fz.excellon_inputs, fz.run_excellon),
        "fabrication": (fz.fab_specs, lambda spec: fz.run_fab(fz.build_fab(folder / "fab", spec))),
    }


def fuzz(name, strategy, run, n, max_seconds, save):
    counts, refusals, failures, slowest = collections.Counter(), collections.Counter(), [], (0.0, None)

    @settings(max_examples=n, deadline=None, database=None, phases=["generate"],
              suppress_health_check=list(HealthCheck))
    @given(strategy)
    def one(example):
        nonlocal slowest
        start = time.perf_counter()
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                run(example)
            counts["read"] += 1
        except InputError as exc:
            counts["refused"] += 1
            refusals[re.sub(r"[-+]?\d[\d.e+-]*", "#", str(exc).split(": ", 1)[-1])[:90]] += 1
        except Exception as exc:  # noqa: BLE001 -- what the fuzzing looks for
            counts["escaped"] += 1
            failures.append((repr(example)[:400], "".join(traceback.format_exception_only(exc)).strip()[:300]))
            save.mkdir(parents=True, exist_ok=True)
            (save / f"{name}-{len(failures)}.txt").write_text(repr(example))
        took = time.perf_counter() - start
        if took > slowest[0]:
            slowest = (took, repr(example)[:200])

    start = time.perf_counter()
    one()
    print(f"{name}: {n} examples in {time.perf_counter() - start:.0f} s: {counts['read']} read, "
          f"{counts['refused']} refused, {counts['escaped']} escaped; slowest {slowest[0]:.2f} s", flush=True)
    for msg, k in refusals.most_common(8):
        print(f"    {k:6d}  {msg}")
    for example, exc in failures[:10]:
        print(f"  ESCAPED {exc}\n    input: {example}")
    if failures:
        print(f"  the {len(failures)} inputs that escaped (Python literals) are in {save}/{name}-*.txt")
    return not failures and slowest[0] <= max_seconds


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("-n", type=int, default=8000, help="examples per reader (default 8000)")
    ap.add_argument("--reader", choices=["case", "gerber", "excellon", "fabrication"], action="append",
                    help="fuzz only this reader (repeatable)")
    ap.add_argument("--max-seconds", type=float, default=5.0, help="longest allowed example (default 5 s)")
    ap.add_argument("--save", type=Path, default=Path("fuzz-failures"),
                    help="folder for the inputs that escaped (default ./fuzz-failures)")
    args = ap.parse_args(argv)
    ok = True
    with tempfile.TemporaryDirectory(prefix="copperpath-fuzz-") as tmp:
        runs = _reader_runs(Path(tmp))
        for name in args.reader or list(runs):
            ok &= fuzz(name, *runs[name], args.n, args.max_seconds, args.save)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
