"""``ekexplore serve`` protections, each checked against a real running server
on 127.0.0.1: the URL is printed only once the server answers; the token is
required; the Host header is checked; live kernels are capped with a readable
busy page; an idle page is culled even while it stays connected.

Every wait is a bounded loop. One server (cap 1 kernel, idle pages culled
after 4 s) serves the whole module; the tests that must not start a kernel
run first, and prove it: the cap is 1, so a kernel started by mistake would
make the later render busy.
"""
from __future__ import annotations

import asyncio
import http.client
import json
import re
import time
import uuid
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from ekexplore import __main__ as cli
from ekexplore import _serve

ROOT = Path(__file__).resolve().parents[1]
START_TIMEOUT = 180       # s: cold start of Voila on 2 busy cores
RENDER_TIMEOUT = 240      # s: kernel start + notebook run
CULL_IDLE = 4             # s
CULL_INTERVAL = 1         # s


def _request(port, path, host=None, headers=None, method="GET", body=None, timeout=30):
    """One request; ``timeout`` [s] bounds the whole exchange (a rendering page
    sends heartbeats, so a per-read timeout alone would never fire)."""
    deadline = time.monotonic() + timeout
    conn = http.client.HTTPConnection("127.0.0.1", port, timeout=timeout)
    try:
        conn.request(method, path, body=body,
                     headers={"Host": host or f"127.0.0.1:{port}", **(headers or {})})
        resp = conn.getresponse()
        chunks = []
        while True:
            chunk = resp.read1(65536)
            if not chunk:
                break
            chunks.append(chunk)
            if time.monotonic() > deadline:
                raise TimeoutError(f"{method} {path} took longer than {timeout} s")
        headers = {k.lower(): v for k, v in resp.getheaders()}
        cookies = resp.headers.get_all("Set-Cookie")
        if cookies:   # every cookie set, one per line (a page sets login and XSRF cookies)
            headers["set-cookie"] = "\n".join(cookies)
        return resp.status, headers, b"".join(chunks)
    finally:
        conn.close()


@pytest.fixture(scope="module")
def server():
    """One server for the module (the shared helper of ``ekexplore._serve``);
    ``first_probe`` is the status of the very first request sent after the
    URL appeared, with no retry."""
    artifacts = ROOT / "test-artifacts"
    log = open(artifacts / "serve-protections.log", "w") if artifacts.is_dir() else None
    try:
        with _serve.running_server(
                "--max-kernels", "1", "--cull-idle", str(CULL_IDLE),
                "--cull-interval", str(CULL_INTERVAL), log=log, timeout=START_TIMEOUT,
                on_url=lambda port: _request(port, cli.PROBE_PATH)[0]) as srv:
            yield {**srv, "first_probe": srv["on_url"]}
    finally:
        if log is not None:
            log.close()


def test_url_printed_only_once_the_server_answers(server):
    assert server["first_probe"] == 200
    tok = server["token"]
    assert len(tok) >= cli.TOKEN_MIN
    for name in ("explorer", "regimes", "device"):
        assert f"/voila/render/{name}.ipynb?token={tok}" in server["printed"]
    assert "voltages that can kill" in server["printed"]      # the caution is kept
    print(f"\nserver start to URL printed: {server['start_s']:.1f} s")


def test_token_is_required(server):
    port, tok = server["port"], server["token"]
    for path in ("/voila/render/explorer.ipynb", "/voila/render/explorer.ipynb?token=wrong" + tok,
                 "/", "/voila/tree"):
        status, headers, _ = _request(port, path)
        assert status == 302, path
        assert headers["location"].startswith("/login"), path
    # the kernel API without the token or the cookie
    status, _, _ = _request(port, "/api/kernels/" + str(uuid.uuid4()))
    assert status == 403
    # a wrong token typed into the login form gives no cookie
    status, headers, _ = _request(port, "/login", method="POST", body="password=nottheone",
                                  headers={"Content-Type": "application/x-www-form-urlencoded"})
    assert "set-cookie" not in headers or "username" not in headers["set-cookie"]


def test_host_header_is_checked(server):
    port, tok = server["port"], server["token"]
    for host in (f"attacker.example:{port}", "attacker.example", f"192.0.2.7:{port}",
                 f"127.0.0.1.attacker.example:{port}"):
        for path in (cli.PROBE_PATH, f"/voila/render/explorer.ipynb?token={tok}", "/login"):
            status, _, body = _request(port, path, host=host)
            assert status == 403, (host, path)
        assert b"does not answer to" in body
    for host in (f"127.0.0.1:{port}", f"localhost:{port}", f"[::1]:{port}", "localhost"):
        assert _request(port, cli.PROBE_PATH, host=host)[0] == 200, host


def _kernel_rss_mib(server_proc):
    """Resident memory [MiB] of each kernel process under the server (Linux /proc)."""
    import importlib.util
    spec = importlib.util.spec_from_file_location(
        "browser_conftest", Path(__file__).with_name("browser") / "conftest.py")
    conf = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(conf)
    out = []
    for pid in conf.kernel_processes(server_proc):
        with open(f"/proc/{pid}/status") as f:
            out += [int(line.split()[1]) / 1024 for line in f if line.startswith("VmRSS")]
    return out


def _render(port, tok, cookie=None):
    headers = {"Cookie": cookie} if cookie else {}
    return _request(port, f"/voila/render/device.ipynb?token={tok}", headers=headers,
                    timeout=RENDER_TIMEOUT)


async def _hold_connection_until_culled(port, kernel_id, cookie, timeout):
    """Open the page's kernel socket (a connected page), keep it open and poll
    the kernel until the server culls it; returns (seconds, socket still open)."""
    from tornado.httpclient import HTTPRequest
    from tornado.websocket import websocket_connect
    req = HTTPRequest(f"ws://127.0.0.1:{port}/api/kernels/{kernel_id}/channels",
                      headers={"Cookie": cookie, "Host": f"127.0.0.1:{port}"})
    ws = await websocket_connect(req)
    # one harmless message through the socket, as a page does on connecting
    msg = {"header": {"msg_id": uuid.uuid4().hex, "msg_type": "kernel_info_request",
                      "username": "test", "session": uuid.uuid4().hex, "version": "5.3",
                      "date": ""},
           "parent_header": {}, "metadata": {}, "content": {}, "channel": "shell"}
    await ws.write_message(json.dumps(msg))
    t0 = time.monotonic()
    gone = False
    while time.monotonic() - t0 < timeout:
        status, _, _ = await asyncio.to_thread(_request, port, f"/api/kernels/{kernel_id}",
                                               None, {"Cookie": cookie})
        if status == 404:
            gone = True
            break
        await asyncio.sleep(0.5)
    elapsed = time.monotonic() - t0
    open_at_cull = ws.protocol is not None and ws.close_code is None
    ws.close()
    return gone, elapsed, open_at_cull


def test_kernel_cap_busy_page_and_culling_of_a_connected_idle_page(server):
    port, tok = server["port"], server["token"]
    status, headers, body = _render(port, tok)
    assert status == 200, body[:300]
    assert b"from ekexplore" not in body                       # sources stripped
    kernel_id = re.search(rb'"kernelId": "([0-9a-f-]{36})"', body).group(1).decode()
    cookie = re.search(r"username-[^=;\s]+=[^;\s]+", headers["set-cookie"]).group(0)
    # the XSRF cookie that the page's closing request (kernel shutdown) needs
    assert re.search(r"(^|\n)_xsrf=", headers["set-cookie"])
    assert _request(port, f"/api/kernels/{kernel_id}", headers={"Cookie": cookie})[0] == 200
    # the stated memory bound holds for this page's kernel
    rss = _kernel_rss_mib(server["proc"])
    assert len(rss) == 1 and rss[0] <= cli.KERNEL_MIB, rss
    print(f"\nrendered page's kernel: {rss[0]:.0f} MiB resident (bound {cli.KERNEL_MIB} MiB)")
    # cap of 1 reached: a second page gets the busy page, not a second kernel
    status, headers, body = _render(port, tok, cookie)
    assert status == 503
    assert headers["retry-after"] == "30"
    text = body.decode()
    assert "All dashboard sessions are in use" in text and "at most 1 dashboard" in text
    assert "4 seconds" in text                                  # the stated idle time
    # the first page stays connected but idle: culled after CULL_IDLE s (+ interval)
    # in a thread of its own: a browser test may have left an event loop in this one
    with ThreadPoolExecutor(max_workers=1) as pool:
        gone, elapsed, still_open = pool.submit(
            asyncio.run, _hold_connection_until_culled(port, kernel_id, cookie, timeout=60)
        ).result()
    assert gone, "the idle connected kernel was not culled within 60 s"
    assert still_open
    print(f"\nidle connected kernel culled {elapsed:.1f} s after its last message "
          f"(cull-idle {CULL_IDLE} s, interval {CULL_INTERVAL} s)")
    # its session is free again: a new page renders
    status, _, _ = _render(port, tok, cookie)
    assert status == 200


# --- options and warnings (no server needed) ----------------------------------------

def test_allowed_hosts_and_host_parsing():
    assert _serve.allowed_hosts("127.0.0.1") == {"127.0.0.1", "localhost", "::1"}
    assert "attacker.example" not in _serve.allowed_hosts("0.0.0.0")
    assert "proxy.lab" in _serve.allowed_hosts("127.0.0.1", ["proxy.lab"])
    assert _serve.host_only("LOCALHOST:8866") == "localhost"
    assert _serve.host_only("[::1]:8866") == "::1"
    assert _serve.host_only("127.0.0.1") == "127.0.0.1"


@pytest.mark.parametrize("kwargs,match", [
    (dict(token="short"), "--token"),
    (dict(token="a" * 20 + "&x"), "--token"),
    (dict(max_kernels=0), "--max-kernels"),
    (dict(cull_idle=0), "--cull-idle"),
    (dict(cull_interval=700), "--cull-interval"),
    (dict(cull_disconnected=0), "--cull-disconnected"),
])
def test_unsafe_options_refused(kwargs, match):
    opts = dict(host="127.0.0.1", token=None, max_kernels=8, cull_idle=600, cull_interval=60)
    opts.update(kwargs)
    with pytest.raises(ValueError, match=match):
        cli.check_options(**opts)


def test_help_states_the_total_memory_bound_of_the_kernels(capsys):
    # each page's kernel (measured against a real server above) plus its 2D
    # mesh cache, bounded in ekexplore.sections.meshes, times the kernel cap
    from ekexplore.sections.meshes import MESH_CACHE_BYTES
    assert cli.MESH_CACHE_MIB * 2**20 == MESH_CACHE_BYTES
    assert cli.memory_bound_mib(8) == 8 * (cli.KERNEL_MIB + cli.MESH_CACHE_MIB)
    with pytest.raises(SystemExit):
        cli.main(["serve", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert f"max-kernels x {cli.KERNEL_MIB + cli.MESH_CACHE_MIB} MiB" in text
    assert f"about {8 * (cli.KERNEL_MIB + cli.MESH_CACHE_MIB) / 1024:.1f} GiB" in text
    assert "--cull-disconnected" in text


@pytest.fixture
def no_server(monkeypatch):
    """``ekexplore serve`` with a stand-in for the server process that exits at
    once (nothing listens); returns what it was started with."""
    seen = {}

    class NoServer:
        def __init__(self, cmd, cwd=None, env=None):
            seen["cmd"], seen["env"] = cmd, env
            self.pid = -1

        def poll(self):
            return 1

        def wait(self, timeout=None):
            return 1

    monkeypatch.setattr(cli.subprocess, "Popen", NoServer)
    monkeypatch.setattr(cli.signal, "signal", lambda *a: None)
    return seen


def test_non_loopback_address_warns_loudly_and_keeps_the_token(no_server, capsys):
    assert cli.main(["serve", "--host", "0.0.0.0", "--port", "8899"]) == 1
    err = capsys.readouterr().err
    assert "WARNING: ekexplore serve is listening on 0.0.0.0:8899" in err
    assert "unencrypted" in err
    seen = no_server
    assert len(seen["env"][_serve.ENV_TOKEN]) >= cli.TOKEN_MIN   # a token, always
    assert not any(_serve.ENV_TOKEN in a or seen["env"][_serve.ENV_TOKEN] in a
                   for a in seen["cmd"])                          # never on the command line
    assert "--host=0.0.0.0" in seen["cmd"]


def test_loopback_prints_no_remote_warning(no_server, capsys):
    cli.main(["serve"])
    out = capsys.readouterr()
    assert "WARNING" not in out.err and "token=" not in out.out   # no URL: it never answered
    assert "--host=127.0.0.1" in no_server["cmd"]


def test_server_refuses_to_start_without_a_token(monkeypatch):
    monkeypatch.delenv(_serve.ENV_TOKEN, raising=False)
    assert _serve.main([str(ROOT / "dashboards"), "--port", "1"]) == 2


def test_a_starting_kernel_is_not_culled_before_the_grace_time():
    """On a busy machine a kernel can take longer to start than a short cull
    time; culling it then left its page loading for ever (seen in this suite)."""
    from datetime import timedelta
    from types import SimpleNamespace

    from jupyter_server._tz import utcnow

    km = _serve.guarded_kernel_manager_class()(cull_idle_timeout=4, cull_connected=True)
    shut = []

    async def shutdown_kernel(kernel_id, *a, **k):
        shut.append(kernel_id)
    km.shutdown_kernel = shutdown_kernel

    def kernel(state, idle_s):
        return SimpleNamespace(execution_state=state, kernel_name="python3",
                               kernel_spec=SimpleNamespace(metadata={}),
                               last_activity=utcnow() - timedelta(seconds=idle_s))
    km._kernels = {"slow-start": kernel("starting", 60),
                   "stuck-start": kernel("starting", _serve.STARTUP_GRACE + 10),
                   "idle": kernel("idle", 5)}
    async def cull_all():
        for kid in list(km._kernels):
            await km.cull_kernel_if_idle(kid)
    with ThreadPoolExecutor(max_workers=1) as pool:  # a browser test may hold this thread's loop
        pool.submit(asyncio.run, cull_all()).result()
    assert shut == ["stuck-start", "idle"]
