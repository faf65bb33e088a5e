"""Property-based fuzzing of the input readers (hypothesis): whatever the input, a reader
returns or raises :class:`copperpath.geometry.errors.InputError`, and within a few seconds.

The inputs are built from each format's grammar with hostile values and byte mutations
(``tests/fuzz_inputs.py``). 2,000 examples per reader here, derandomised so that CI is
reproducible; ``scripts/fuzz.py`` runs more with fresh random seeds.
"""
from __future__ import annotations

import tempfile
import time
import warnings
from pathlib import Path

from hypothesis import HealthCheck, given, settings

from copperpath.geometry.errors import InputError
from tests import fuzz_inputs as fz

#: Longest time one example may take, in seconds (a shared CI machine; typical is milliseconds).
MAX_SECONDS = 10.0
FUZZ = settings(max_examples=2000, deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                       HealthCheck.filter_too_much])


def only_input_errors(run, *args):
    """Call ``run(*args)``; let only InputError through, and check the time it took."""
    start = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        try:
            run(*args)
        except InputError as exc:
            assert "\n" not in str(exc), str(exc)
    took = time.perf_counter() - start
    assert took < MAX_SECONDS, f"one example took {took:.1f} s"


_CASE_DIR = Path(tempfile.mkdtemp(prefix="fuzz-case-"))
fz.prepare_case_folder(_CASE_DIR)
_FAB_DIR = Path(tempfile.mkdtemp(prefix="fuzz-fab-"))


@FUZZ
@given(fz.case_inputs)
def test_case_reader(data):
    only_input_errors(fz.run_case, _CASE_DIR, data)


@FUZZ
@given(fz.gerber_inputs)
def test_gerber_reader(data):
    only_input_errors(fz.run_gerber, data)


@FUZZ
@given(fz.excellon_inputs)
def test_excellon_reader(data):
    only_input_errors(fz.run_excellon, data)


@FUZZ
@given(fz.fab_specs)
def test_fabrication_reader(spec):
    only_input_errors(lambda: fz.run_fab(fz.build_fab(_FAB_DIR / "src", spec)))
