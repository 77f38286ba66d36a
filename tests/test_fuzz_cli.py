"""The command line under hostile input: every command, in-process, judged by one contract.

Hypothesis drives the generators of ``tests/hostile.py`` (seeded: ``derandomize``, so CI runs
the same examples every time; bounded so the whole file stays under a minute): damaged
Touchstone files (1.x and 2.0; S, Z and Y; RI, MA and DB), two-ports, netlists, oscillator
manifests, I-V tables and drive-level files; readable files saying extreme things; generated
ladders and meshes with values at their bounds; outputs that are inputs under another name;
and every command's options given hostile values and paths (the options are read from the
parser itself, so a new option is fuzzed as soon as it exists).

The only outcomes allowed (CONVENTIONS.md): exit 0, 2, 3 or 4; exactly one line on stderr
with exit 2 and nothing there otherwise (Python warnings count: a shell shows them); strict
JSON with ``--json``; no file written but the named outputs, no input changed; an answer in
time. ``benchmarks/robustness_campaign.py`` runs the same generators some 8,400 times.
"""

from __future__ import annotations

import random
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import hostile

OPTIONS = hostile.command_options()


def fuzz(examples: int) -> settings:
    return settings(
        max_examples=examples,
        deadline=None,
        derandomize=True,
        database=None,
        suppress_health_check=[
            HealthCheck.too_slow,
            HealthCheck.data_too_large,
            HealthCheck.large_base_example,
        ],
    )


def holds_the_contract(case: hostile.Case) -> None:
    with tempfile.TemporaryDirectory(prefix="oneport-fuzz-") as folder:
        outcome = hostile.run_case(case, Path(folder), time_limit_s=60)
    assert not outcome.problems, (case.argv, outcome.problems, outcome.err[:500])


RANDOMS = st.randoms(use_true_random=False)


@fuzz(100)
@given(RANDOMS)
def test_damaged_touchstone_files(rng: random.Random) -> None:
    holds_the_contract(hostile.touchstone_case(rng))


@fuzz(20)
@given(RANDOMS)
def test_damaged_two_ports(rng: random.Random) -> None:
    holds_the_contract(hostile.two_port_case(rng))


@fuzz(80)
@given(RANDOMS)
def test_damaged_netlists(rng: random.Random) -> None:
    holds_the_contract(hostile.netlist_case(rng))


@fuzz(30)
@given(RANDOMS)
def test_damaged_manifests_tables_and_levels(rng: random.Random) -> None:
    holds_the_contract(hostile.manifest_case(rng))


@fuzz(40)
@given(RANDOMS)
def test_files_saying_extreme_things(rng: random.Random) -> None:
    holds_the_contract(hostile.edge_data_case(rng))


@fuzz(40)
@given(RANDOMS)
def test_generated_ladders_and_meshes_at_their_bounds(rng: random.Random) -> None:
    holds_the_contract(hostile.edge_netlist_case(rng))


@fuzz(20)
@given(RANDOMS)
def test_outputs_that_are_inputs_by_another_name(rng: random.Random) -> None:
    holds_the_contract(hostile.linked_output_case(rng))


@fuzz(120)
@given(RANDOMS)
def test_every_option_with_hostile_values(rng: random.Random) -> None:
    holds_the_contract(hostile.option_case(rng, OPTIONS))


def test_the_judge_catches_what_it_must():
    """The contract's judge itself: a traceback, two stderr lines, invalid JSON, a stray file
    and a changed input are each reported (so a passing fuzz run means something)."""
    case = hostile.Case("self-test", ["check", "--json"])
    broken = hostile.Outcome(1, "{NaN}", "a\nb\n", 0.0, [])
    problems = hostile.judge(case, ["check", "--json"], broken)
    assert any("exit code 1" in p for p in problems)
    assert any("stderr" in p for p in problems)
    assert any("invalid JSON" in p for p in problems)
    assert hostile.strict_json_problem('{"x": Infinity}') is not None
    assert hostile.strict_json_problem('{"x": null}') is None
    changed = hostile._file_problems(
        {"in.s1p": ("file", b"a")}, {"in.s1p": ("file", b"b"), "x.tmp": ("file", b"")}, ()
    )
    assert changed == ["lost or changed file: in.s1p", "stray file: x.tmp"]


@pytest.mark.parametrize("name", ["touchstone", "netlist", "manifest"])
def test_the_generators_also_make_valid_inputs(name):
    """Not only refusals: with these seeds each kind also reaches a verdict (exit 0, 3 or 4)."""
    codes = set()
    for seed in range(40):
        case = hostile.KINDS[name](random.Random(seed))
        with tempfile.TemporaryDirectory() as folder:
            outcome = hostile.run_case(case, Path(folder))
        assert not outcome.problems, (case.argv, outcome.problems)
        codes.add(outcome.code)
    assert codes & {0, 3, 4} and 2 in codes
