"""The folder watcher: files are checked once, after they stop changing; bad files are skipped."""

from __future__ import annotations

import io
import os
import shutil
from collections.abc import Callable
from pathlib import Path

import pytest

from oneport.commands.watch import watch_folder
from oneport.products.watch import FolderWatcher, check_file, run_watch

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
    # Seen at t = 0, 1, 2 with a new size each time; unchanged from t = 2 to t = 3.
    assert handled == [(3.0, "diode.s1p", "stable")]


def test_poll_hands_out_each_version_once_and_rechecks_a_modified_file(tmp_path):
    target = tmp_path / "diode.s1p"
    shutil.copy(DEVICE, target)
    watcher = FolderWatcher(tmp_path, interval_s=0.5)
    assert watcher.poll(0.0) == []
    assert watcher.poll(0.4) == [], "not yet still for a whole interval"
    assert watcher.poll(0.5) == [target]
    assert watcher.poll(0.9) == [] and watcher.poll(5.0) == []
    # Same size, new modification time: a new version.
    status = target.stat()
    os.utime(target, ns=(status.st_atime_ns, status.st_mtime_ns + 1_000_000_000))
    assert watcher.poll(6.0) == []
    assert watcher.poll(6.5) == [target]
    _append(target, "! a remark added later\n")()
    assert watcher.poll(7.0) == []
    assert watcher.poll(7.5) == [target]


def test_vanished_file_is_forgotten_and_new_again(tmp_path):
    target = tmp_path / "diode.s1p"
    shutil.copy(DEVICE, target)
    watcher = FolderWatcher(tmp_path, interval_s=1.0)
    assert watcher.poll(0.0) == [] and watcher.poll(1.0) == [target]
    target.unlink()
    assert watcher.poll(2.0) == []
    shutil.copy2(DEVICE, target)
    assert watcher.poll(3.0) == [] and watcher.poll(4.0) == [target]


def test_only_touchstone_names_are_watched(tmp_path):
    for name in ("a.s1p", "b.TS", "c.S1P", ".hidden.s1p", "notes.txt", "d.s2p", "e.s1p.tmp"):
        (tmp_path / name).write_text("x\n")
    (tmp_path / "folder.s1p").mkdir()
    watcher = FolderWatcher(tmp_path, interval_s=1.0, ignore=(tmp_path / "c.S1P",))
    watcher.poll(0.0)
    assert [path.name for path in watcher.poll(1.0)] == ["a.s1p", "b.TS"]


def test_bad_folder_and_interval_are_input_errors(tmp_path):
    with pytest.raises(ValueError, match="no such folder"):
        FolderWatcher(tmp_path / "missing")
    with pytest.raises(ValueError, match="positive"):
        FolderWatcher(tmp_path, interval_s=0.0)


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
        ([".", "--load", str(LOAD), "--interval", "0s"], "--interval: must be a positive"),
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
