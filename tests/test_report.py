"""The HTML report: self-contained, verdict first, cautions last, user strings escaped."""

from __future__ import annotations

import base64
import html
import re
import shutil
import subprocess
from pathlib import Path
from xml.etree import ElementTree

import pytest

import oneport
from oneport.rendering.check_text import verdict_line
from oneport.rendering.report import write_report

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
HOSTILE = "<script>alert(1)</script>.s1p"


def _constant_one_port(path: Path, gamma: float, start_ghz: float, stop_ghz: float) -> Path:
    """A small valid Touchstone 1.x file (format from the Touchstone specification)."""
    lines = ["! <script>alert(2)</script> comment from a hostile file", "# GHz S RI R 50"]
    for index in range(21):
        frequency = start_ghz + (stop_ghz - start_ghz) * index / 20
        lines.append(f"{frequency:.6f} {gamma:.9f} 0")
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.fixture(scope="module")
def oscillating() -> oneport.CheckResult:
    return oneport.check(EXAMPLES / "oscillates/device.s1p", EXAMPLES / "oscillates/load.s1p")


@pytest.fixture(scope="module")
def oscillating_report(oscillating, tmp_path_factory) -> Path:
    return write_report(oscillating, tmp_path_factory.mktemp("report") / "oscillates.html")


@pytest.fixture(scope="module")
def hostile_result(tmp_path_factory) -> oneport.CheckResult:
    """A device whose path ends in <script>alert(1)</script>.s1p (a '/' cannot be in a name,
    so the folder supplies "<script>alert(1)<" and the file "script>.s1p")."""
    folder = tmp_path_factory.mktemp("hostile")
    # 25 ohm device (gamma -1/3) into 100 ohm (gamma +1/3); device band wider than the load's,
    # so a warning is in the result too.
    device = _constant_one_port(folder / HOSTILE, -1.0 / 3.0, 0.1, 3.0)
    assert str(device).endswith(HOSTILE)
    load = _constant_one_port(folder / "load.s1p", 1.0 / 3.0, 0.2, 2.0)
    return oneport.check(device, load)


def test_report_opens_with_the_verdict(oscillating, oscillating_report):
    text = oscillating_report.read_text(encoding="utf-8")
    assert text.startswith("<!DOCTYPE html>")
    verdict = text.index(html.escape(verdict_line(oscillating)))
    assert verdict < text.index("<h2>Inputs</h2>")
    assert "Unstable: the device will oscillate or latch up into this load." in text
    for reason in oscillating.reasons:
        assert html.escape(reason) in text


def test_report_order_and_contents(oscillating, oscillating_report):
    text = oscillating_report.read_text(encoding="utf-8")
    device, load = (html.escape(record.source) for record in oscillating.inputs)
    assert f"<h1>oneport check: {device} into {load}</h1>" in text, "default title: the paths"
    headings = re.findall(r"<h2>(.*?)</h2>", text)
    assert headings[0] == "Inputs"
    assert headings[-2:] == ["Premise", "Cautions"], "premise, then the cautions last"
    wanted_headings = ("Bands", "Crossings", "Distance of L from +1", "Closing", "Modes")
    for wanted in (*wanted_headings, "Warnings", "What to do", "Plots"):
        assert any(heading.startswith(wanted) for heading in headings), wanted
    for record in oscillating.inputs:
        assert record.sha256 in text
        assert html.escape(record.source) in text
    assert "75 ohm in the file, renormalised to 50 ohm" in text, "impedance measured/analysed"
    assert "1.648 GHz" in text and "2.818 GHz" in text, "crossing and band edge in the tables"
    assert text.index(html.escape(oscillating.cautions[-1])) > text.index("<h2>Premise</h2>")


def test_report_is_self_contained(oscillating_report):
    text = oscillating_report.read_text(encoding="utf-8")
    for forbidden in ("http://", "https://", 'src="//', "<script", "<link", "@import", "url("):
        assert forbidden not in text.lower(), forbidden
    sources = re.findall(r'<img [^>]*src="([^"]+)"', text)
    assert len(sources) == 3, "Nyquist, loop gain and Smith chart"
    for source in sources:
        prefix = "data:image/svg+xml;base64,"
        assert source.startswith(prefix)
        picture = base64.b64decode(source[len(prefix) :]).decode("utf-8")
        root = ElementTree.fromstring(picture)  # well-formed XML (Python's own parser)
        assert root.tag == "{http://www.w3.org/2000/svg}svg"
        for forbidden in ("<script", "href", "<image", "<foreignObject", "url(http"):
            assert forbidden not in picture, forbidden
    assert "Content-Security-Policy" in text


def test_hostile_names_and_comments_are_escaped(hostile_result, tmp_path):
    path = write_report(hostile_result, tmp_path / "hostile.html", title="<b>bench</b> & co")
    text = path.read_text(encoding="utf-8")
    assert "<script" not in text.lower()
    assert "alert(2)" not in text, "file comments are not shown raw (nor at all, today)"
    assert html.escape(HOSTILE) in text
    assert "<title>&lt;b&gt;bench&lt;/b&gt; &amp; co</title>" in text
    assert "<b>" not in text
    warning = next(
        w for w in hostile_result.warnings if w.code == "device-points-outside-load-band"
    )
    assert html.escape(warning.message) in text, "the warnings list"


def test_unwritable_report_is_one_line(oscillating, tmp_path):
    with pytest.raises(oneport.InputError, match="cannot be written") as caught:
        write_report(oscillating, tmp_path / "no-such-folder" / "report.html")
    assert "\n" not in str(caught.value)


def _chromium_dump(chromium: str, page: Path, profile: Path) -> subprocess.CompletedProcess:
    return subprocess.run(
        [
            chromium,
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
            f"--user-data-dir={profile}",
            "--enable-logging=stderr",
            "--v=0",
            "--dump-dom",
            page.as_uri(),
        ],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )


@pytest.mark.skipif(shutil.which("chromium") is None, reason="Debian chromium is not installed")
def test_chromium_renders_the_report_without_console_messages(
    oscillating, oscillating_report, tmp_path
):
    """What this proves: a real browser parses the file and its DOM carries the verdict and the
    three embedded images; and the browser logged no console message at all, which is where a
    blocked load (the page's Content-Security-Policy allows only data: images and inline
    style), a blocked script or a page error would show. The control page shows that such
    messages do reach the log scanned. That no request leaves the machine rests on the file
    holding no address (test_report_is_self_contained) and on that policy."""
    chromium = shutil.which("chromium")
    assert chromium is not None
    control = tmp_path / "control.html"
    control.write_text(
        '<!DOCTYPE html><html><head><meta http-equiv="Content-Security-Policy"'
        " content=\"default-src 'none'; img-src data:\"></head><body>"
        '<img src="https://example.invalid/blocked.png"></body></html>'
    )
    controlled = _chromium_dump(chromium, control, tmp_path / "profile-control")
    assert "CONSOLE" in controlled.stderr, "the log scanned does show a blocked load"

    rendered = _chromium_dump(chromium, oscillating_report, tmp_path / "profile-report")
    assert rendered.returncode == 0, rendered.stderr[-2000:]
    assert html.escape(verdict_line(oscillating)) in rendered.stdout
    assert rendered.stdout.count("data:image/svg+xml;base64,") == 3
    console = [line for line in rendered.stderr.splitlines() if "CONSOLE" in line]
    assert console == []


# --- the report's pictures (SVG written directly; elements inspected by class) ---------------


def _pictures(page: str) -> list[ElementTree.Element]:
    sources = re.findall(r'src="data:image/svg\+xml;base64,([^"]+)"', page)
    return [ElementTree.fromstring(base64.b64decode(source)) for source in sources]


def _with_class(root: ElementTree.Element, name: str) -> list[ElementTree.Element]:
    return [element for element in root.iter() if element.get("class") == name]


def test_report_pictures_carry_frequency_labels_and_the_true_nyquist_scale(oscillating_report):
    nyquist, loop_gain, smith = _pictures(oscillating_report.read_text(encoding="utf-8"))
    ticks = [element.text for element in _with_class(nyquist, "compressed-tick")]
    assert {"\N{MINUS SIGN}2", "1", "2", "0.5"} <= set(ticks), "ticks at true values of L"
    assert _with_class(nyquist, "compressed-ring") and _with_class(nyquist, "critical-point")
    assert [e.text for e in _with_class(nyquist, "crossing-label")] == ["1.648 GHz (cw)"]
    labels = [element.text or "" for element in _with_class(smith, "smith-frequency-label")]
    marks = _with_class(smith, "smith-frequency-mark")
    assert len(labels) == len(marks) >= 6 and all(text.endswith("GHz") for text in labels)
    assert {mark.get("fill") for mark in marks} == {
        _with_class(smith, "load-trace")[0].get("stroke"),
        _with_class(smith, "device-trace")[0].get("stroke"),
    }, "marks along both traces"
    smith_text = " ".join(element.text or "" for element in smith.iter())
    assert smith_text.count("Z0") == 1
    assert _with_class(loop_gain, "loop-gain-band") and _with_class(
        loop_gain, "oscillation-frequency"
    )
    for picture in (nyquist, loop_gain, smith):
        assert _with_class(picture, "legend")


def test_the_report_needs_no_matplotlib(tmp_path):
    # The HTML report is written without importing matplotlib (the reason it is quick).
    import subprocess
    import sys

    script = (
        "import sys, oneport\n"
        "from oneport.rendering.report import write_report\n"
        f"r = oneport.check({str(EXAMPLES / 'stable/device.s1p')!r},"
        f" {str(EXAMPLES / 'stable/load.s1p')!r})\n"
        f"write_report(r, {str(tmp_path / 'r.html')!r})\n"
        "print('matplotlib' in sys.modules)\n"
    )
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "False"


def test_report_carries_the_second_opinion_the_text_has(tmp_path):
    """``check --poles --report``: the fit's section is in the HTML as in the text report."""
    from oneport.rendering.poles_text import second_opinion_lines

    result = oneport.check(
        EXAMPLES / "oscillates/device.s1p", EXAMPLES / "oscillates/load.s1p", poles=True
    )
    assert result.second_opinion is not None
    text = write_report(result, tmp_path / "poles.html").read_text(encoding="utf-8")
    headings = re.findall(r"<h2>(.*?)</h2>", text)
    assert "Second opinion: pole-zero fit of 1 - L" in headings
    assert headings.index("Second opinion: pole-zero fit of 1 - L") < headings.index("Premise")
    for line in second_opinion_lines(result.second_opinion)[1:]:
        assert html.escape(line.strip()) in text
