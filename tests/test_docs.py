"""Docs that cannot rot: every shell command and every Python block of README.md and docs/*.md
runs, in a fresh folder holding a copy of touchstone_examples/, with the exit code it documents.

How the documents are read (DEVELOPERS.md, "Examples in the documents"):

- shell examples are indented code blocks (and ```sh, ```shell or ```console fences) whose
  lines start with a command (``oneport``, ``python``, ``pip``, ``for`` …); other indented
  blocks (formulas) are prose;
- ```python fences run as Python, in the same folder, one namespace per document;
- ```text fences are templates (placeholders such as DEVICE.s1p) and never run;
- an HTML comment right before a block says what the reader should expect:
  ``<!-- docs-test: exit 3 -->`` (one code for every command of the block, or one per command
  in order: ``exit 0 3``); without one, every command must exit 0; ``<!-- docs-test: skip:
  REASON -->`` leaves the block out, and the reason is required (an install, a cluster);
- ``oneport …`` lines run in-process through :func:`oneport.cli.main`; any other line (a
  loop, a pipeline, a Python script) runs in ``bash`` with this environment's scripts first on
  ``PATH``, and ``.venv/bin`` in the folder is that same scripts folder (the reader's venv,
  made by the README's first command).

Blocks of one document run in order in one folder, so a file a command writes can be read by
the next (``export`` then ``check``).
"""

from __future__ import annotations

import io
import os
import re
import shlex
import shutil
import subprocess
import sysconfig
from dataclasses import dataclass
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DOCUMENTS = [ROOT / "README.md", *sorted((ROOT / "docs").glob("*.md"))]
#: First words that make an indented line a shell command.
COMMANDS = ("oneport", "python", "python3", "pip", "for", ".venv/bin/", "dask", "cd", "ls")
_MARKER = re.compile(r"^<!--\s*docs-test:\s*(.*?)\s*-->\s*$")
_FENCE = re.compile(r"^(\s*)```\s*([\w-]*)\s*$")
_SHELL_FENCES = ("sh", "shell", "console", "bash")
#: The set-up a line marked ``installed`` begins with (see the module docstring).
_INSTALL = re.compile(r"^python3 -m venv \.venv && \.venv/bin/pip install [^&]+&& ")
#: Where this environment's console scripts (``oneport``, ``python``) are.
SCRIPTS = Path(sysconfig.get_path("scripts"))


@dataclass(frozen=True)
class Block:
    """One example: where it is, shell or python, its text, and what the document expects."""

    document: Path
    line: int
    kind: str
    text: str
    marker: str | None

    def where(self) -> str:
        return f"{self.document.relative_to(ROOT)}:{self.line}"


def blocks(document: Path) -> list[Block]:
    """The examples of a Markdown document, in order (see the module docstring)."""
    lines = document.read_text(encoding="utf-8").splitlines()
    found: list[Block] = []
    marker: str | None = None
    index = 0
    while index < len(lines):
        line = lines[index]
        matched = _MARKER.match(line.strip())
        if matched:
            marker = matched.group(1)
            index += 1
            continue
        fence = _FENCE.match(line)
        if fence:
            language = fence.group(2).lower()
            end = index + 1
            while end < len(lines) and not lines[end].strip().startswith("```"):
                end += 1
            body = "\n".join(lines[index + 1 : end])
            if language == "python":
                found.append(Block(document, index + 1, "python", body, marker))
            elif language in _SHELL_FENCES:
                found.append(Block(document, index + 1, "shell", body, marker))
            marker = None
            index = end + 1
            continue
        if _starts_code(lines, index):
            indent = len(line) - len(line.lstrip())
            end = index
            while end < len(lines) and (
                not lines[end].strip() or len(lines[end]) - len(lines[end].lstrip()) >= indent
            ):
                end += 1
            body = [text[indent:] for text in lines[index:end] if text.strip()]
            if body and body[0].startswith(COMMANDS):
                found.append(Block(document, index + 1, "shell", "\n".join(body), marker))
            marker = None
            index = end
            continue
        if line.strip():
            marker = None
        index += 1
    return found


def _starts_code(lines: list[str], index: int) -> bool:
    """An indented code block: four or more spaces after a blank line (or a list item's text
    indented by four more than its bullet)."""
    line = lines[index]
    if not line.startswith("    ") or not line.strip():
        return False
    return index > 0 and not lines[index - 1].strip()


def expected_codes(block: Block, commands: int) -> list[int] | None:
    """The exit code each command must give; None when the block is skipped."""
    if block.marker is None:
        return [0] * commands
    if block.marker.startswith("skip:") and block.marker[5:].strip():
        return None
    words = block.marker.split(";")[0].split()
    if words and words[0] == "exit" and len(words) > 1:
        codes = [int(word) for word in words[1:]]
        if len(codes) == 1:
            return codes * commands
        if len(codes) == commands:
            return codes
    raise AssertionError(f"{block.where()}: cannot read the marker {block.marker!r}")


def run_shell(line: str, folder: Path) -> tuple[int, str]:
    """One shell line: ``oneport …`` in-process, anything else in bash; (exit code, errors)."""
    words = shlex.split(line, comments=True)
    plain = words and words[0] == "oneport" and not set("|;&$*<>`") & set(line.split("#")[0])
    if plain:
        from oneport.cli import main

        out, err = io.StringIO(), io.StringIO()
        return main(words[1:], stdout=out, stderr=err), err.getvalue()
    environment = dict(os.environ)
    environment["PATH"] = f"{SCRIPTS}{os.pathsep}{environment['PATH']}"
    done = subprocess.run(
        ["bash", "-c", line],
        cwd=folder,
        env=environment,
        capture_output=True,
        text=True,
        timeout=300,
        check=False,
    )
    return done.returncode, done.stderr


def _examples_ran(document: Path, folder: Path, monkeypatch: pytest.MonkeyPatch) -> int:
    """Run every example of ``document`` in ``folder``; the number of examples run."""
    shutil.copytree(ROOT / "touchstone_examples", folder / "touchstone_examples")
    (folder / ".venv").mkdir()
    (folder / ".venv" / "bin").symlink_to(SCRIPTS, target_is_directory=True)
    monkeypatch.chdir(folder)
    namespace: dict[str, object] = {"__name__": "__docs__"}
    ran = 0
    for block in blocks(document):
        if block.kind == "python":
            if expected_codes(block, 1) is None:
                continue
            code = compile(block.text, block.where(), "exec")
            exec(code, namespace)  # our own documentation, never user input
            ran += 1
            continue
        commands = [line for line in block.text.splitlines() if line.strip()]
        codes = expected_codes(block, len(commands))
        if codes is None:
            continue
        installed = block.marker is not None and block.marker.endswith("; installed")
        for line, wanted in zip(commands, codes, strict=True):
            if installed:
                assert _INSTALL.match(line), f"{block.where()}: no set-up to leave out: {line}"
                line = _INSTALL.sub("", line)
            got, errors = run_shell(line, folder)
            assert got == wanted, (
                f"{block.where()}: `{line}` exited {got}, the document says {wanted}: {errors}"
            )
            ran += 1
    return ran


@pytest.mark.parametrize("document", DOCUMENTS, ids=lambda path: path.name)
def test_every_example_of_the_document_runs(
    document: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    _examples_ran(document, tmp_path, monkeypatch)


def test_the_reader_finds_the_examples_it_should() -> None:
    # A guard on the reader itself: the README's examples are found, templates are not.
    found = blocks(ROOT / "README.md")
    shell = [line for b in found if b.kind == "shell" for line in b.text.splitlines()]
    assert any(line.startswith("oneport sweep ") for line in shell)
    assert any(b.kind == "python" for b in found)
    assert not any("DEVICE.s1p" in line for line in shell), "templates go in ```text fences"
