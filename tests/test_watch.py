"""The folder watcher: files are checked once, after they stop changing; bad files are skipped."""

from __future__ import annotations

import io
import os
import shutil
from collections.abc import Callable
from pathlib import Path

import pytest

from oneport.commands.watch import watch_folder
from oneport.products.watch import (
    MINIMUM_INTERVAL_S,
    FileVersion,
    FolderWatcher,
    check_file,
    run_watch,
)
from oneport.reading.touchstone import read_one_port

from helpers import deadline as _deadline
from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = EXAMPLES / "stable/device.s1p"
LOAD = EXAMPLES / "stable/load.s1p"


class FakeTime:
    """A clock that only moves when slept on; ``after_sleep[k]`` runs after the k-th sleep."""

    def __init__(self, after_sleep: list[Callable[[], None] | None] | None = None) -> None:
        self.now = 0.0
        self.sleeps = 0
        self.after_sleep = after_sleep or []

    def clock(self) -> float:
        return self.now

    def sleep(self, seconds: float) -> None:
        self.now += seconds
        if self.sleeps < len(self.after_sleep) and self.after_sleep[self.sleeps] is not None:
            self.after_sleep[self.sleeps]()  # type: ignore[misc]
        self.sleeps += 1


def _append(path: Path, text: str) -> Callable[[], None]:
    def write() -> None:
        with path.open("a") as stream:
            stream.write(text)

    return write


def test_file_written_in_pieces_is_checked_once_after_it_stops_changing(tmp_path):
    text = DEVICE.read_text()
    thirds = [text[: len(text) // 3], text[len(text) // 3 : 2 * len(text) // 3]]
    thirds.append(text[2 * len(text) // 3 :])
    target = tmp_path / "diode.s1p"
    target.write_text(thirds[0])
    clock = FakeTime([_append(target, thirds[1]), _append(target, thirds[2])])
    handled: list[tuple[float, str, str]] = []

    def handle(path: Path) -> None:
        outcome = check_file(path, LOAD)
        handled.append((clock.now, path.name, outcome.result.verdict if outcome.result else "?"))
        assert path.read_text() == text, "never handed out while still being written"

    watcher = FolderWatcher(tmp_path, interval_s=1.0)
    polls = run_watch(watcher, handle, clock=clock.clock, sleep=clock.sleep, max_polls=8)
    assert polls == 8
    # Seen at t = 0, 1, 2 with a new size each time; unchanged over two intervals at t = 4.
    assert handled == [(4.0, "diode.s1p", "stable")]


def test_poll_hands_out_each_version_once_and_rechecks_a_modified_file(tmp_path):
    target = tmp_path / "diode.s1p"
    shutil.copy(DEVICE, target)
    watcher = FolderWatcher(tmp_path, interval_s=0.5)
    assert watcher.poll(0.0) == []
    assert watcher.poll(0.5) == [], "still for one interval only"
    assert watcher.poll(0.9) == [], "not yet still for two whole intervals"
    assert watcher.poll(1.0) == [target]
    assert watcher.poll(1.4) == [] and watcher.poll(5.0) == []
    # Same size, new modification time: a new version.
    status = target.stat()
    os.utime(target, ns=(status.st_atime_ns, status.st_mtime_ns + 1_000_000_000))
    assert watcher.poll(6.0) == [] and watcher.poll(6.5) == []
    assert watcher.poll(7.0) == [target]
    _append(target, "! a remark added later\n")()
    assert watcher.poll(7.5) == [] and watcher.poll(8.0) == []
    assert watcher.poll(8.5) == [target]


def test_vanished_file_is_forgotten_and_new_again(tmp_path):
    target = tmp_path / "diode.s1p"
    shutil.copy(DEVICE, target)
    watcher = FolderWatcher(tmp_path, interval_s=1.0)
    assert watcher.poll(0.0) == [] and watcher.poll(1.0) == [] and watcher.poll(2.0) == [target]
    target.unlink()
    assert watcher.poll(3.0) == []
    shutil.copy2(DEVICE, target)
    assert watcher.poll(4.0) == [] and watcher.poll(5.0) == [] and watcher.poll(6.0) == [target]


def test_only_touchstone_names_are_watched(tmp_path):
    for name in ("a.s1p", "b.TS", "c.S1P", ".hidden.s1p", "notes.txt", "d.s2p", "e.s1p.tmp"):
        (tmp_path / name).write_text("x\n")
    (tmp_path / "folder.s1p").mkdir()
    watcher = FolderWatcher(tmp_path, interval_s=1.0, ignore=(tmp_path / "c.S1P",))
    watcher.poll(0.0)
    watcher.poll(1.0)
    assert [path.name for path in watcher.poll(2.0)] == ["a.s1p", "b.TS"]


def test_bad_folder_and_interval_are_input_errors(tmp_path):
    with pytest.raises(ValueError, match="no such folder"):
        FolderWatcher(tmp_path / "missing")
    for interval_s in (0.0, 1e-9, 0.049, 3601.0, 1e10, float("nan"), -1.0):
        with pytest.raises(ValueError, match=r"outside the accepted range|not a finite number"):
            FolderWatcher(tmp_path, interval_s=interval_s)
    assert FolderWatcher(tmp_path, interval_s=0.05).interval_s == 0.05
    assert FolderWatcher(tmp_path, interval_s=3600.0).interval_s == 3600.0


def test_garbage_file_is_reported_and_the_watch_goes_on(tmp_path):
    (tmp_path / "garbage.s1p").write_text("this is not a touchstone file\n")
    arriving = tmp_path / "late.s1p"
    clock = FakeTime([None, None, lambda: shutil.copy(DEVICE, arriving)])
    out = io.StringIO()
    code = watch_folder(
        tmp_path, LOAD, None, 1.0, out, clock=clock.clock, sleep=clock.sleep, max_polls=6
    )
    assert code == 0
    lines = out.getvalue().splitlines()
    assert lines[0].startswith(f"watching {tmp_path}")
    assert len(lines) == 3
    assert lines[1].startswith(f"oneport: {tmp_path / 'garbage.s1p'}:1: ")
    assert lines[2].startswith("late.s1p: STABLE (small-signal): N = 0;")


def test_reports_are_written_per_file(tmp_path):
    watched, reports = tmp_path / "in", tmp_path / "reports" / "made"
    watched.mkdir()
    shutil.copy(DEVICE, watched / "diode.s1p")
    shutil.copy(LOAD, watched / "load.s1p")  # the load sits in the folder: never checked
    clock = FakeTime()
    out = io.StringIO()
    watch_folder(
        watched,
        watched / "load.s1p",
        reports,
        1.0,
        out,
        clock=clock.clock,
        sleep=clock.sleep,
        max_polls=3,
    )
    assert [line.split(":")[0] for line in out.getvalue().splitlines()[1:]] == ["diode.s1p"]
    assert [path.name for path in reports.iterdir()] == ["diode.s1p.html"]
    assert "STABLE (small-signal)" in (reports / "diode.s1p.html").read_text(encoding="utf-8")


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        (["missing-folder", "--load", str(LOAD)], "no such folder"),
        ([".", "--load", "missing-load.s1p"], "missing-load.s1p: no such file"),
        ([".", "--load", str(LOAD), "--interval", "0s"], "--interval: 0 s is outside"),
        ([".", "--load", str(LOAD), "--interval", "1e10"], "--interval: 1e+10 s is outside"),
        ([".", "--load", str(LOAD), "--interval", "1e-9"], "--interval: 1e-09 s is outside"),
        ([".", "--load", str(LOAD), "--interval", "soon"], "--interval: cannot read 'soon'"),
    ],
)
def test_command_line_errors_are_one_line(tmp_path, monkeypatch, arguments, message):
    monkeypatch.chdir(tmp_path)
    code, _, err = run_cli("watch", *arguments)
    assert code == 2
    assert message in err
    assert err.count("\n") == 1


def test_ctrl_c_stops_with_exit_code_130(tmp_path, monkeypatch):
    def interrupted(self, now):
        raise KeyboardInterrupt

    monkeypatch.setattr(FolderWatcher, "poll", interrupted)
    code, _, err = run_cli("watch", tmp_path, "--load", LOAD)
    assert code == 130  # shared/CONVENTIONS.md: 130 interrupted
    assert err == "oneport: interrupted\n"


# --- never judging a file still being written (issue: sound verdicts, watch) ----------------------


def _watch(folder: Path, clock: FakeTime, polls: int, interval_s: float = 1.0) -> list[str]:
    """Run the watch command's loop for ``polls`` polls; the lines it printed after the first."""
    out = io.StringIO()
    watch_folder(
        folder, LOAD, None, interval_s, out, clock=clock.clock, sleep=clock.sleep, max_polls=polls
    )
    return out.getvalue().splitlines()[1:]


def _rows(frequency_hz: list[float], gamma: list[complex]) -> list[str]:
    """Data lines of a one-port in Hz and RI."""
    return [f"{f!r} {g.real!r} {g.imag!r}" for f, g in zip(frequency_hz, gamma, strict=True)]


def test_a_writer_pausing_mid_line_is_waited_for_never_judged(tmp_path):
    # The writer stops in the middle of a data line for five intervals (longer than the two
    # that make a file still), then finishes. The half-written file is reported as waiting,
    # once, and only the whole file gets a verdict.
    text = DEVICE.read_text()
    cut = text.index("\n", len(text) // 2) + 6  # a few characters into a data line
    assert text[cut - 1] != "\n"
    target = tmp_path / "diode.s1p"
    target.write_text(text[:cut])
    clock = FakeTime([None, None, None, None, None, _append(target, text[cut:])])
    lines = _watch(tmp_path, clock, polls=10)
    assert len(lines) == 2, lines
    assert lines[0].startswith("diode.s1p: waiting: its last line has not ended")
    assert lines[1].startswith("diode.s1p: STABLE (small-signal)")


def test_a_2x_file_short_of_its_declared_frequencies_is_waited_for(tmp_path):
    # Touchstone 2.0: [Number of Frequencies] states how many points follow. A writer pausing
    # after a complete line leaves a file that parses but is short of them: waiting, no verdict.
    port = read_one_port(DEVICE)
    rows = _rows(port.frequency_hz.tolist(), port.gamma.tolist())
    head = [
        "[Version] 2.0",
        "# Hz S RI R 50",
        "[Number of Ports] 1",
        f"[Number of Frequencies] {len(rows)}",
        "[Network Data]",
    ]
    target = tmp_path / "diode.ts"
    half = len(rows) // 2
    target.write_text("\n".join(head + rows[:half]) + "\n")
    rest = "\n".join([*rows[half:], "[End]"]) + "\n"
    clock = FakeTime([None, None, None, None, _append(target, rest)])
    lines = _watch(tmp_path, clock, polls=9)
    assert len(lines) == 2, lines
    assert lines[0].startswith(f"diode.ts: waiting: [Number of Frequencies] says {len(rows)}")
    assert f"holds {half} frequency points so far" in lines[0]
    assert lines[1].startswith("diode.ts: STABLE (small-signal)")


def test_a_2x_file_meeting_its_count_is_checked_without_a_final_line_break(tmp_path):
    # The declared count is met, so the file is complete although its last line has no break.
    port = read_one_port(DEVICE)
    rows = _rows(port.frequency_hz.tolist(), port.gamma.tolist())
    head = ["[Version] 2.0", "# Hz S RI R 50", "[Number of Ports] 1"]
    head += [f"[Number of Frequencies] {len(rows)}", "[Network Data]"]
    (tmp_path / "diode.ts").write_text("\n".join(head + rows))
    lines = _watch(tmp_path, FakeTime(), polls=3)
    assert len(lines) == 1 and lines[0].startswith("diode.ts: STABLE (small-signal)"), lines


def test_an_empty_file_is_waited_for(tmp_path):
    (tmp_path / "new.s1p").write_bytes(b"")
    assert _watch(tmp_path, FakeTime(), polls=3) == ["new.s1p: waiting: it is empty so far"]


def test_a_file_that_changed_since_it_was_still_is_left_for_the_next_poll(tmp_path):
    target = tmp_path / "diode.s1p"
    shutil.copy(DEVICE, target)
    version = FileVersion(size=target.stat().st_size - 1, modified_ns=0)
    outcome = check_file(target, LOAD, version)
    assert outcome.result is None and outcome.error is None and outcome.waiting is None


def test_the_loop_never_spins_even_when_checking_takes_longer_than_the_interval(tmp_path):
    slept: list[float] = []
    clock = FakeTime()

    def slow_sleep(seconds: float) -> None:
        slept.append(seconds)
        clock.sleep(seconds)

    def slow_handle(path: Path) -> None:
        clock.now += 10.0  # handling takes far longer than the interval

    (tmp_path / "a.s1p").write_text("# GHz S RI R 50\n1 0.5 0\n")
    watcher = FolderWatcher(tmp_path, interval_s=0.05)
    run_watch(watcher, slow_handle, clock=clock.clock, sleep=slow_sleep, max_polls=6)
    assert slept and min(slept) >= MINIMUM_INTERVAL_S


def test_special_files_in_the_folder_are_skipped_and_never_block(tmp_path):
    # A FIFO or a link to a device node with a Touchstone name is not a regular file: never
    # opened (opening a FIFO for reading would wait for a writer forever).
    os.mkfifo(tmp_path / "pipe.s1p")
    (tmp_path / "zero.s1p").symlink_to("/dev/zero")
    shutil.copy(DEVICE, tmp_path / "diode.s1p")
    with _deadline(20):
        lines = _watch(tmp_path, FakeTime(), polls=3)
    assert len(lines) == 1 and lines[0].startswith("diode.s1p: STABLE"), lines


def test_a_fifo_as_the_load_is_refused_at_once(tmp_path):
    os.mkfifo(tmp_path / "load.s1p")
    with _deadline(20):
        code, _, err = run_cli("watch", tmp_path, "--load", tmp_path / "load.s1p")
    assert code == 2 and err.count("\n") == 1
    assert "is a named pipe (FIFO), not a regular file" in err


def test_a_netlist_load_is_accepted(tmp_path):
    shutil.copy(DEVICE, tmp_path / "diode.s1p")
    out = io.StringIO()
    netlist = EXAMPLES / "circuits" / "bias_tee.cir"
    clock = FakeTime()
    watch_folder(
        tmp_path, netlist, None, 1.0, out, clock=clock.clock, sleep=clock.sleep, max_polls=3
    )
    lines = out.getvalue().splitlines()
    assert len(lines) == 2 and lines[1].startswith("diode.s1p: "), lines
    assert "oneport:" not in lines[1]


def test_control_characters_in_file_names_are_shown_escaped(tmp_path):
    shutil.copy(DEVICE, tmp_path / "diode\x1b[2J\u202e.s1p")
    lines = _watch(tmp_path, FakeTime(), polls=3)
    assert len(lines) == 1 and lines[0].startswith("diode\\x1b[2J\\u202e.s1p: STABLE"), lines
