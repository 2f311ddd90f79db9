"""Real headless Chromium for the report tests: a screenshot of a page opened from disk,
the requests the page itself made, and how much of the screenshot is not background.

Chromium is Debian's ``chromium`` package (``.ci/run`` installs it with
``apt-get install -y chromium`` when it is missing). A test that needs it calls
:func:`require_chromium`, which skips with a message saying so where no binary
can be found. Every run gets a new, empty profile directory, and host-name
resolution is switched off (``--host-resolver-rules``), so nothing leaves the
machine even for the browser's own background services.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import tempfile
from dataclasses import dataclass
from pathlib import Path

import pytest

CHROMIUM_NAMES = ("chromium", "chromium-browser")
TIMEOUT_SECONDS = 120


def chromium_binary() -> str | None:
    for name in CHROMIUM_NAMES:
        found = shutil.which(name)
        if found:
            return found
    return None


def require_chromium() -> str:
    binary = chromium_binary()
    if binary is None:
        pytest.skip("headless Chromium not found: .ci/run installs Debian's chromium package (apt-get install -y chromium)")
    return binary


@dataclass(frozen=True)
class PageRun:
    """What one headless Chromium run of a page produced."""

    screenshot: Path
    page_requests: tuple[str, ...]  # URLs the page itself asked for (its own file excluded)


def open_page(page: Path, screenshot: Path, *, width: int = 1400, height: int = 2200) -> PageRun:
    """Open ``page`` from disk in headless Chromium, save a screenshot, and list the page's requests."""
    binary = require_chromium()
    page = Path(page).resolve()
    with tempfile.TemporaryDirectory(prefix="meshprops-chromium-") as profile:
        net_log = Path(profile) / "net-log.json"
        command = [
            binary,
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            "--host-resolver-rules=MAP * ~NOTFOUND",
            f"--user-data-dir={profile}/user-data",
            f"--log-net-log={net_log}",
            f"--screenshot={screenshot}",
            f"--window-size={width},{height}",
            page.as_uri(),
        ]
        environment = dict(os.environ, HOME=profile)
        completed = subprocess.run(command, capture_output=True, text=True, timeout=TIMEOUT_SECONDS, env=environment)
        if completed.returncode != 0 or not Path(screenshot).exists():
            raise AssertionError(f"chromium failed ({completed.returncode}): {completed.stderr[-2000:]}")
        requests = _page_requests(net_log, page.as_uri())
    return PageRun(Path(screenshot), requests)


def _page_requests(net_log: Path, own_url: str) -> tuple[str, ...]:
    """URLs requested on behalf of a page (the browser's own services have no origin)."""
    try:
        events = json.loads(net_log.read_text(encoding="utf-8")).get("events", [])
    except (OSError, ValueError):
        # Chromium may leave the log without its closing bracket when it exits quickly.
        text = net_log.read_text(encoding="utf-8").rstrip().rstrip(",")
        events = json.loads(text + "]}").get("events", [])
    urls = []
    for event in events:
        params = event.get("params") or {}
        url, initiator = params.get("url"), params.get("initiator")
        if url and initiator is not None and initiator != "not an origin" and url != own_url:
            urls.append(url)
    return tuple(sorted(set(urls)))


@dataclass(frozen=True)
class PixelStatistics:
    background_share: float  # share of pixels that have the most common colour
    colour_count: int  # distinct colours, each quantized to 4 bits per channel
    width: int
    height: int


def pixel_statistics(png: Path) -> PixelStatistics:
    from PIL import Image

    with Image.open(png) as image:
        rgb = image.convert("RGB")
        width, height = rgb.size
        data = rgb.tobytes()
    import numpy as np

    pixels = np.frombuffer(data, dtype=np.uint8).reshape(-1, 3)
    keys = (pixels[:, 0].astype(np.int64) << 16) | (pixels[:, 1].astype(np.int64) << 8) | pixels[:, 2]
    _, counts = np.unique(keys, return_counts=True)
    quantized = ((pixels >> 4).astype(np.int64) * [256, 16, 1]).sum(axis=1)
    return PixelStatistics(float(counts.max()) / len(keys), int(len(np.unique(quantized))), width, height)


_REFERENCE_PATTERNS = (
    r"""\b(?:src|href|srcset|action|poster|data|xlink:href)\s*=""",
    r"""url\s*\(""",
    r"""@import""",
    r"""<\s*(?:script|link|iframe|object|embed|img|base|meta\s+http-equiv)\b""",
    r"""(?:https?|ftp|wss?):""",
    r"""//[a-z0-9.-]+\.[a-z]{2,}""",
)


def external_references(page_text: str) -> list[str]:
    """Everything in a page that could make the browser fetch something (should be empty)."""
    import re

    found = []
    for pattern in _REFERENCE_PATTERNS:
        found += [match.group(0) for match in re.finditer(pattern, page_text, flags=re.IGNORECASE)]
    return found
