"""The dashboard notebooks run in JupyterLab too: start a JupyterLab server on
a free localhost port, open each notebook in headless Debian chromium, run
its cell and check the dashboard renders with no console errors."""
from __future__ import annotations

import importlib.util
import os
import re
import secrets
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

from ekexplore._serve import stop_process_group

ROOT = Path(__file__).resolve().parents[2]
ARTIFACTS = ROOT / "test-artifacts"
TIMEOUT = 180_000   # ms, bounded: kernel start + notebook run on 2 busy cores

NOISE = re.compile(r"^Failed to load resource: net::ERR_(NAME_NOT_RESOLVED|INTERNET_DISCONNECTED"
                   r"|CONNECTION_REFUSED|ADDRESS_UNREACHABLE)$")


def _free_port():
    spec = importlib.util.spec_from_file_location("ekx_cli", ROOT / "ekexplore" / "__main__.py")
    cli = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(cli)
    return cli.free_port()


@pytest.fixture(scope="module")
def lab(chromium_path, tmp_path_factory):
    pytest.importorskip("jupyterlab")
    # JupyterLab autosaves what it runs: serve copies, never the repository's notebooks
    from ekexplore.dashboards.notebooks import write_notebooks
    root = tmp_path_factory.mktemp("lab")
    write_notebooks(root / "dashboards")
    port = _free_port()
    token = secrets.token_hex(8)
    ARTIFACTS.mkdir(exist_ok=True)
    log = open(ARTIFACTS / "jupyterlab.log", "w")
    cmd = [sys.executable, "-m", "jupyter", "lab", "--no-browser", f"--port={port}",
           "--ServerApp.ip=127.0.0.1", f"--ServerApp.token={token}",
           f"--ServerApp.root_dir={root}", "--LabApp.news_url=", "--ServerApp.open_browser=False"]
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        cmd.append("--allow-root")
    proc = subprocess.Popen(cmd, stdout=log, stderr=log, start_new_session=True, cwd=root)
    base = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 90
        while time.monotonic() < deadline:
            try:
                with urllib.request.urlopen(f"{base}/api/status?token={token}", timeout=2):
                    break
            except OSError:
                if proc.poll() is not None:
                    pytest.fail("jupyter lab exited; see test-artifacts/jupyterlab.log")
                time.sleep(0.5)
        else:
            pytest.fail("jupyter lab did not start in 90 s")
        yield base, token
    finally:
        stop_process_group(proc, interrupts=2)   # JupyterLab asks to confirm once
        log.close()


@pytest.mark.parametrize("name", ["explorer", "regimes", "device"])
def test_notebook_runs_in_jupyterlab(lab, browser, name):
    base, token = lab
    context = browser.new_context(viewport={"width": 1400, "height": 900})
    page = context.new_page()
    errors = []

    def console(msg):
        url = (msg.location or {}).get("url", "")
        local = url.startswith(("http://127.0.0.1", "http://localhost"))
        if msg.type == "error" and (local or not NOISE.match(msg.text)):
            errors.append(f"{msg.text} @ {url}")

    page.on("console", console)
    page.on("pageerror", lambda exc: errors.append(f"pageerror: {exc}"))
    try:
        page.goto(f"{base}/lab/workspaces/ekx-{name}/tree/dashboards/{name}.ipynb"
                  f"?reset&token={token}", timeout=TIMEOUT)
        page.wait_for_selector(".jp-Notebook .jp-Cell", timeout=TIMEOUT)
        page.wait_for_selector(".jp-Notebook-ExecutionIndicator, .jp-KernelStatus, "
                               ".jp-Toolbar", timeout=TIMEOUT)
        page.wait_for_timeout(3000)       # let the kernel come up before running
        page.locator(".jp-Cell .jp-InputArea-editor:visible").first.click()
        page.keyboard.press("Shift+Enter")
        page.wait_for_function(
            "() => [...document.querySelectorAll('.ekx-status')]"
            ".some(e => e.textContent.includes('up to date'))", timeout=TIMEOUT)
        page.wait_for_selector(".jp-OutputArea canvas", timeout=TIMEOUT)
        page.wait_for_timeout(1000)
        page.screenshot(path=str(ARTIFACTS / f"jupyterlab-{name}.png"))
        assert page.locator(".jp-OutputArea-output[data-mime-type="
                            "'application/vnd.jupyter.stderr']").count() == 0
        assert errors == [], "\n".join(errors)
    finally:
        context.close()
