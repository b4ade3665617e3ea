"""Which server protections come with which way of serving the dashboards?

Starts, one after the other on 127.0.0.1 with a token:
  A. ``ekexplore serve`` (standalone Voila + ekexplore._serve's guards);
  B. ``jupyter server`` with Voila as a server extension
     (``ServerApp.default_url`` on a /voila/render page),
and for each measures: time until a static asset answers, whether a render
without the token is refused, a foreign Host header refused, the REST API
(/api/contents, /api/kernels, /api/terminals) reachable with the token, code
executed through the kernel websocket with the token, and whether a second
page is refused at a cap of one kernel. Run: python benchmarks/probe_serve_modes.py
(about 1-2 minutes; it starts two servers and three kernels).
"""
from __future__ import annotations

import asyncio
import http.client
import json
import os
import re
import secrets
import socket
import subprocess
import sys
import time
import uuid
from pathlib import Path

from ekexplore._serve import stop_process_group

ROOT = Path(__file__).resolve().parents[1]
PROBE = "/voila/templates/lab/static/voila.js"


def free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def request(port, path, host=None, cookie=None, timeout=300):
    c = http.client.HTTPConnection("127.0.0.1", port, timeout=timeout)
    headers = {"Host": host or f"127.0.0.1:{port}"}
    if cookie:
        headers["Cookie"] = cookie
    try:
        c.request("GET", path, headers=headers)
        r = c.getresponse()
        return r.status, {k.lower(): v for k, v in r.getheaders()}, r.read()
    finally:
        c.close()


async def execute_through_socket(port, kernel_id, token, cookie):
    """Send an execute_request on the kernel websocket; True if the code ran."""
    from tornado.httpclient import HTTPRequest
    from tornado.websocket import websocket_connect
    headers = {"Host": f"127.0.0.1:{port}"}
    if cookie:
        headers["Cookie"] = cookie
    ws = await websocket_connect(HTTPRequest(
        f"ws://127.0.0.1:{port}/api/kernels/{kernel_id}/channels?token={token}",
        headers=headers))
    marker = uuid.uuid4().hex
    msg = {"header": {"msg_id": uuid.uuid4().hex, "msg_type": "execute_request",
                      "username": "probe", "session": uuid.uuid4().hex, "version": "5.3",
                      "date": ""},
           "parent_header": {}, "metadata": {}, "channel": "shell",
           "content": {"code": f"print('{marker}')", "silent": False, "store_history": False,
                       "user_expressions": {}, "allow_stdin": False}}
    await ws.write_message(json.dumps(msg))
    deadline = time.monotonic() + 10
    try:
        while time.monotonic() < deadline:
            try:
                m = await asyncio.wait_for(ws.read_message(), deadline - time.monotonic())
            except asyncio.TimeoutError:
                return False
            if m is None:
                return False
            if isinstance(m, str) and marker in m and '"stream"' in m:
                return True
        return False
    finally:
        ws.close()


def probe(name, cmd, env, port, token, render_path, cap_checked):
    t0 = time.monotonic()
    proc = subprocess.Popen(cmd, env=env, cwd=ROOT / "dashboards", stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL, start_new_session=True)
    row = {"mode": name}
    try:
        while time.monotonic() - t0 < 180:
            try:
                if request(port, PROBE, timeout=2)[0] == 200:
                    break
            except OSError:
                time.sleep(0.2)
        row["static asset answers after [s]"] = round(time.monotonic() - t0, 1)
        st, h, _ = request(port, render_path)
        row["render without token"] = f"{st} {h.get('location', '')[:6]}".strip()
        st, _, _ = request(port, f"{render_path}?token={token}", host="attacker.example")
        row["foreign Host (with token)"] = st
        st, h, body = request(port, f"{render_path}?token={token}")
        row["render with token"] = st
        cookie = (h.get("set-cookie") or "").split(";", 1)[0] or None
        kid = re.search(rb'"kernelId": "([0-9a-f-]{36})"', body)
        api = {p: request(port, f"/api/{p}?token={token}")[0]
               for p in ("contents", "kernels", "terminals")}
        row["REST API with token"] = ", ".join(f"{k} {v}" for k, v in api.items())
        if kid is None and api["kernels"] == 200:
            kernels = json.loads(request(port, f"/api/kernels?token={token}")[2])
            kid = kernels[0]["id"] if kernels else None
        else:
            kid = kid.group(1).decode() if kid else None
        row["code run via kernel socket"] = (
            asyncio.run(execute_through_socket(port, kid, token, cookie)) if kid else "no kernel")
        if cap_checked:
            st, _, _ = request(port, f"{render_path}?token={token}", cookie=cookie)
            row["2nd page at cap 1"] = st
        else:
            row["2nd page at cap 1"] = "no cap setting (MappingKernelManager has none)"
    finally:
        stop_process_group(proc, timeout=20)
    return row


def main():
    env = {**os.environ, "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    token = secrets.token_urlsafe(24)
    rows = []
    port = free_port()
    rows.append(probe(
        "ekexplore serve (standalone Voila + guards)",
        [sys.executable, "-m", "ekexplore._serve", str(ROOT / "dashboards"), f"--port={port}",
         "--max-kernels=1"], {**env, "EKEXPLORE_TOKEN": token}, port, token,
        "/voila/render/explorer.ipynb", True))
    port = free_port()
    rows.append(probe(
        "jupyter server + voila extension",
        [sys.executable, "-m", "jupyter", "server", f"--port={port}", "--ServerApp.ip=127.0.0.1",
         f"--IdentityProvider.token={token}", "--no-browser", "--allow-root",
         f"--ServerApp.root_dir={ROOT / 'dashboards'}",
         "--ServerApp.jpserver_extensions={'voila': True}",
         "--ServerApp.default_url=/voila/render/explorer.ipynb"], env, port, token,
        "/voila/render/explorer.ipynb", False))
    for row in rows:
        print(f"\n{row.pop('mode')}")
        for k, v in row.items():
            print(f"  {k:32s} {v}")


if __name__ == "__main__":
    main()
