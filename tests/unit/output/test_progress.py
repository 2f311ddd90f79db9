"""The progress bar: drawn on a real pseudo-terminal, silent when stderr is not a terminal
or the run is short, never on stdout."""

from __future__ import annotations

import os
import pty
import re
import select
import subprocess
import sys

from meshprops.output.progress import BatchProgress

_RUN = """
import sys, time
from meshprops.output.progress import BatchProgress
with BatchProgress({total}, description="check", show_after={show_after}) as bar:
    for _ in range({total}):
        time.sleep({pause})
        bar.advance()
        if bar.completed == 3:
            print("a result line", flush=True)
    shown = bar.shown
print("done", shown)
"""


def _run(total, show_after, pause, *, stderr_on_terminal):
    """Run a bar in a child process; return (stdout, what reached stderr)."""
    code = _RUN.format(total=total, show_after=show_after, pause=pause)
    env = dict(os.environ, TERM="xterm-256color", COLUMNS="100", LINES="24")
    env.pop("NO_COLOR", None)
    if not stderr_on_terminal:
        done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, timeout=60)
        assert done.returncode == 0, done.stderr
        return done.stdout, done.stderr
    master, slave = pty.openpty()
    try:
        child = subprocess.Popen(
            [sys.executable, "-c", code], stdout=subprocess.PIPE, stderr=slave, stdin=subprocess.DEVNULL, env=env
        )
        os.close(slave)
        slave = None
        screen = bytearray()
        while True:
            ready, _, _ = select.select([master], [], [], 30)
            if not ready:
                break
            try:
                chunk = os.read(master, 65536)
            except OSError:  # the child closed its end (EIO on Linux)
                break
            if not chunk:
                break
            screen += chunk
        stdout = child.stdout.read().decode()
        assert child.wait(timeout=30) == 0
    finally:
        if slave is not None:
            os.close(slave)
        os.close(master)
    return stdout, screen.decode("utf-8", "replace")


def _visible(text):
    return re.sub(r"\x1b\[[0-9;?]*[A-Za-z]", "", text)


def test_bar_on_a_terminal_shows_count_rate_and_time_left():
    stdout, screen = _run(total=24, show_after=0.0, pause=0.06, stderr_on_terminal=True)
    assert stdout == "a result line\ndone True\n"  # stdout carries nothing of the bar
    text = _visible(screen)
    assert "result line" not in text  # and the bar does not swallow what goes to stdout
    counts = [int(done) for done in re.findall(r"(\d+)/24 files", text)]
    assert counts and counts == sorted(counts) and 0 < counts[-1] <= 24
    rates = [float(rate) for rate in re.findall(r"([\d.]+) files/s", text)]
    # one file per 0.06 s at most: the clock starts with the run, not when the bar appears
    assert rates and max(rates) < 1 / 0.06 * 1.5
    assert re.search(r"left \d+:\d\d:\d\d|left -:--:--", text)
    assert text.lstrip().startswith("check")


def test_nothing_when_stderr_is_not_a_terminal():
    stdout, stderr = _run(total=10, show_after=0.0, pause=0.01, stderr_on_terminal=False)
    assert (stdout, stderr) == ("a result line\ndone False\n", "")


def test_nothing_for_a_short_run_on_a_terminal():
    stdout, screen = _run(total=5, show_after=30.0, pause=0.0, stderr_on_terminal=True)
    assert stdout == "a result line\ndone False\n"
    assert _visible(screen).strip() == ""


def test_disabled_bar_and_counting_without_a_terminal(tmp_path):
    with open(tmp_path / "log.txt", "w") as stream:
        with BatchProgress(3, stream=stream, show_after=0.0) as bar:
            bar.advance(2)
            bar.advance()
            assert (bar.completed, bar.shown) == (3, False)
    assert (tmp_path / "log.txt").read_text() == ""


def test_enabled_false_never_draws():
    bar = BatchProgress(2, enabled=False, show_after=0.0)
    bar.advance()
    assert not bar.shown
    bar.close()
