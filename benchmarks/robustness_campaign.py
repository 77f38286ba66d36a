"""A long mutation campaign against every command: hostile files and option values (issue 13).

Not run in CI (``tests/test_fuzz_cli.py`` is its short, seeded counterpart there). Each case is
a command line and the files it reads (``tests/hostile.py``): damaged Touchstone files (1.x and
2.0; S, Z and Y; RI, MA and DB), two-ports, netlists, oscillator manifests, I-V tables and
drive-level files, and every command's options given hostile values and paths. Each runs
in-process through ``oneport.cli.main`` in a fresh folder, in a pool of worker processes, and
is judged by ``tests/hostile.py``: exits 0/2/3/4 only, no traceback, one stderr line on exit 2,
nothing on stderr otherwise (Python warnings included), strict JSON with ``--json``, no file
written but the named outputs and no input changed, an answer within the time limit (a
worker that does not answer at all is a hang too). The tally is printed at the end; failing
cases are saved (files and command line) for replay.

Run (about 5 minutes for 8,400 cases on the 2-core benchmark machine):

    .venv/bin/python benchmarks/robustness_campaign.py --cases 8400 --seed 13 --save /tmp/fails
    .venv/bin/python benchmarks/robustness_campaign.py --replay /tmp/fails/touchstone-0042
"""

from __future__ import annotations

import argparse
import collections
import json
import multiprocessing
import random
import shutil
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

import hostile

#: How the cases divide among the kinds of input (the options get the largest share).
SHARES = {
    "touchstone": 0.16,
    "two-port": 0.06,
    "netlist": 0.14,
    "manifest": 0.12,
    "edge-data": 0.10,
    "edge-netlist": 0.08,
    "linked": 0.04,
    "options": 0.30,
}
_OPTIONS: dict[str, list[tuple[str, bool]]] = {}


def make_case(seed: int, index: int) -> hostile.Case:
    """Case ``index`` of the campaign of ``seed``: the same on every run."""
    rng = random.Random(f"{seed}:{index}")
    kind = rng.choices(list(SHARES), weights=list(SHARES.values()))[0]
    if kind == "options":
        if not _OPTIONS:
            _OPTIONS.update(hostile.command_options())
        return hostile.option_case(rng, _OPTIONS)
    return hostile.KINDS[kind](rng)


def run_one(job: tuple[int, int, int]) -> tuple[int, str, int | None, list[str], float]:
    """Run case ``index`` in a fresh folder: (index, label, exit code, problems, seconds)."""
    seed, index, limit = job
    case = make_case(seed, index)
    with tempfile.TemporaryDirectory(prefix="oneport-campaign-") as folder:
        outcome = hostile.run_case(case, Path(folder), limit)
    return index, case.label, outcome.code, outcome.problems, outcome.seconds


def save(case: hostile.Case, problems: list[str], where: Path) -> None:
    """A failing case's files, command line and problems, for --replay."""
    where.mkdir(parents=True, exist_ok=True)
    for name, data in case.files.items():
        (where / "files" / name).parent.mkdir(parents=True, exist_ok=True)
        (where / "files" / name).write_bytes(data)
    record = {
        "label": case.label,
        "argv": case.argv,
        "outputs": list(case.outputs),
        "fifos": list(case.fifos),
        "folders": list(case.folders),
        "links": [list(link) for link in case.links],
        "problems": problems,
    }
    (where / "case.json").write_text(json.dumps(record, indent=2))


def replay(where: Path) -> int:
    """Run a saved case again and print what it does."""
    record = json.loads((where / "case.json").read_text())
    files = {
        str(path.relative_to(where / "files")): path.read_bytes()
        for path in (where / "files").rglob("*")
        if path.is_file()
    }
    case = hostile.Case(
        record["label"],
        record["argv"],
        files,
        tuple(record["outputs"]),
        tuple(record["fifos"]),
        tuple(record["folders"]),
        tuple(tuple(link) for link in record.get("links", [])),
    )
    with tempfile.TemporaryDirectory() as folder:
        outcome = hostile.run_case(case, Path(folder))
    print(" ".join(case.argv))
    print(f"exit {outcome.code} in {outcome.seconds:.2f} s")
    print("stdout:", outcome.out[:2000])
    print("stderr:", outcome.err[:2000])
    print("problems:", outcome.problems or "none")
    return 1 if outcome.problems else 0


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=8400)
    parser.add_argument("--seed", type=int, default=13)
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--time-limit", type=int, default=60, help="seconds per case")
    parser.add_argument("--save", type=Path, help="save failing cases here")
    parser.add_argument("--replay", type=Path, help="run one saved case again")
    arguments = parser.parse_args()
    if arguments.replay:
        return replay(arguments.replay)
    tally: collections.Counter[tuple[str, str]] = collections.Counter()
    problems_seen: collections.Counter[str] = collections.Counter()
    failures = 0
    slowest: list[tuple[float, int, str]] = []
    started = time.perf_counter()
    jobs = [(arguments.seed, index, arguments.time_limit) for index in range(arguments.cases)]
    context = multiprocessing.get_context("fork")
    pool = context.Pool(arguments.workers, maxtasksperchild=200)
    pending = {index: pool.apply_async(run_one, (job,)) for index, job in enumerate(jobs)}
    for index, result in pending.items():
        try:
            _, label, code, problems, seconds = result.get(timeout=arguments.time_limit + 60)
        except multiprocessing.TimeoutError:
            label, code, seconds = make_case(arguments.seed, index).label, None, float("nan")
            problems = ["hang: the worker did not answer"]
            pool.terminate()
            pool = context.Pool(arguments.workers, maxtasksperchild=200)
            pending.update(
                {
                    later: pool.apply_async(run_one, (jobs[later],))
                    for later in pending
                    if later > index
                }
            )
        kind = label.split("/")[0]
        tally[(kind, "problem" if problems else f"exit {code}")] += 1
        slowest = sorted([*slowest, (seconds, index, label)], reverse=True)[:5]
        if problems:
            failures += 1
            for problem in problems:
                problems_seen[problem.split(":")[0]] += 1
            print(f"case {index} ({label}): {problems[0]}", flush=True)
            if arguments.save:
                save(make_case(arguments.seed, index), problems, arguments.save / f"{index:05d}")
        if (index + 1) % 500 == 0:
            print(f"{index + 1} cases, {failures} failing, {time.perf_counter() - started:.0f} s",
                  flush=True)  # fmt: skip
    pool.close()
    elapsed = time.perf_counter() - started
    print(f"\n{arguments.cases} cases (seed {arguments.seed}) in {elapsed:.0f} s")
    for kind in SHARES:
        row = {key[1]: count for key, count in tally.items() if key[0] == kind}
        print(f"  {kind:11s} " + ", ".join(f"{k}: {v}" for k, v in sorted(row.items())))
    print(f"failing cases: {failures}")
    for problem, count in problems_seen.most_common():
        print(f"  {problem}: {count}")
    print("slowest:", ", ".join(f"case {i} {label} {s:.1f} s" for s, i, label in slowest))
    if arguments.save is not None and failures == 0:
        shutil.rmtree(arguments.save, ignore_errors=True)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
