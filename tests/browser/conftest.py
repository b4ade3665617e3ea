"""Real-browser fixtures: an ``ekexplore serve`` server and Debian's chromium.

The browser is Debian's chromium launched by Playwright through
``executable_path`` (Playwright never downloads one here). When chromium or
the playwright package is missing the tests are skipped with the reason
printed; ``tools/test.sh`` installs both where it can, and sets
EKEXPLORE_REQUIRE_BROWSER=1 on CI so a missing browser fails instead.
"""
from __future__ import annotations

import contextlib
import os
import shutil
import sys
from pathlib import Path

import pytest

from ekexplore._serve import running_server

ROOT = Path(__file__).resolve().parents[2]
ARTIFACTS = ROOT / "test-artifacts"

CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update",
                 "--disable-sync"]


def _skip_or_fail(reason):
    if os.environ.get("EKEXPLORE_REQUIRE_BROWSER") == "1":
        pytest.fail(f"browser tests required but cannot run: {reason}")
    print(f"\nSKIPPING browser tests: {reason}", file=sys.stderr)
    pytest.skip(reason)


@pytest.fixture(scope="session")
def chromium_path():
    path = shutil.which("chromium") or shutil.which("chromium-browser")
    if path is None:
        _skip_or_fail("no 'chromium' on PATH (install Debian's: apt-get install -y chromium)")
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        _skip_or_fail("the playwright python package is not installed (pip install playwright)")
    return path


@contextlib.contextmanager
def start_server(*extra, log_name="serve.log"):
    """Run ``ekexplore serve`` on a free localhost port (the shared helper
    :func:`ekexplore._serve.running_server`); always stopped after. Its
    standard error goes to ``test-artifacts/<log_name>``."""
    ARTIFACTS.mkdir(exist_ok=True)
    with open(ARTIFACTS / log_name, "w") as log, running_server(*extra, log=log) as srv:
        yield srv


def kernel_processes(server_proc):
    """PIDs of the kernels under a server's process tree (Linux /proc)."""
    parents = {}
    for d in Path("/proc").iterdir():
        if not d.name.isdigit():
            continue
        try:
            stat = (d / "stat").read_text()
            cmd = (d / "cmdline").read_bytes().replace(b"\0", b" ").decode("utf-8", "replace")
        except OSError:
            continue
        ppid = int(stat.rsplit(")", 1)[1].split()[1])
        parents[int(d.name)] = (ppid, cmd)
    tree = {server_proc.pid}
    changed = True
    while changed:
        changed = False
        for pid, (ppid, _) in parents.items():
            if ppid in tree and pid not in tree:
                tree.add(pid)
                changed = True
    return [pid for pid in tree if "ipykernel" in parents.get(pid, (0, ""))[1]]


@pytest.fixture(scope="session")
def server():
    """``ekexplore serve`` on a free localhost port for the whole session."""
    # the session opens about 8 pages, closed pages live until culled: room for them
    with start_server("--cull-idle", "120", "--cull-interval", "30", "--max-kernels", "24") as srv:
        yield srv


@pytest.fixture(scope="session")
def browser(chromium_path):
    from playwright.sync_api import sync_playwright
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=chromium_path, headless=True, args=CHROMIUM_ARGS)
        try:
            yield b
        finally:
            b.close()


@pytest.fixture
def artifacts():
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS
