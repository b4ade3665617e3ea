"""The hardened Voila server behind ``ekexplore serve`` (runs in its own process).

Standalone Voila already serves no REST API, strips sources and refuses code
execution through the kernel socket. On top of it, every request handler is
wrapped (a subclass whose ``prepare`` runs first) to add:

- a **Host check**: the Host header must name the bound address (or, for a
  loopback address, ``localhost``/``127.0.0.1``/``::1``; for other addresses
  the machine's own names and any ``--allow-host``), else 403. This blocks
  DNS rebinding, where a foreign web page resolves its own name to this
  machine and reads the pages through the user's browser;
- a **kernel cap**: a dashboard page starts one kernel; beyond
  ``max_kernels`` live kernels (renders in progress count as kernels) the
  page is a readable 503 "busy" page that retries by itself;
- the **token** is Voila's own (jupyter_server's identity provider): a
  request without it is sent to a login form; with ``?token=`` in the URL a
  cookie is set, which the page's kernel connection then uses.

Idle kernels, connected or not, are culled by the kernel manager
(``cull_connected=True``): an open tab that nobody uses for ``cull_idle``
seconds loses its kernel. Closing a tab shuts its kernel at once (Voila's
page sends a shutdown request as it closes; the XSRF cookie it needs is set
with the page); a kernel left with no page connected (a browser that crashed)
is culled after ``cull_disconnected`` seconds without activity.

Run by :func:`ekexplore.__main__.serve`; the token comes in the environment
variable :data:`ENV_TOKEN` (never on the command line, which other users of
the machine can read).

:func:`running_server` starts and stops ``ekexplore serve`` from Python for
the tests, the benchmarks and scripts (it runs in the caller's process).
"""
from __future__ import annotations

import argparse
import contextlib
import html
import inspect
import ipaddress
import os
import re
import signal
import socket
import subprocess
import sys
import threading
import time

ENV_TOKEN = "EKEXPLORE_TOKEN"
LOOPBACK_NAMES = ("localhost", "127.0.0.1", "::1")

BUSY_PAGE = """<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta http-equiv="refresh" content="{retry}">
<title>ekexplore: all dashboard sessions are in use</title></head>
<body style="font-family: sans-serif; max-width: 42em; margin: 3em auto; line-height: 1.5">
<h1>All dashboard sessions are in use</h1>
<p>This server runs at most {cap} dashboard pages at a time, and all of them are
open. Each open page keeps its own session; a page left unused for
{idle} is closed by the server and frees its session.</p>
<p>This page tries again by itself every {retry} seconds. Closing dashboard tabs
you no longer use frees a session sooner.</p>
</body></html>
"""

HOST_PAGE = """<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>ekexplore: host refused</title></head>
<body style="font-family: sans-serif; max-width: 42em; margin: 3em auto">
<h1>403: this server does not answer to {host}</h1>
<p>The request named the host <code>{host}</code>, which is not an address of this
server. If you reach it through another name (a reverse proxy), start it with
<code>ekexplore serve --allow-host NAME</code>.</p></body></html>
"""


def is_loopback(host):
    """True for ``localhost`` and loopback IP addresses (127.0.0.0/8, ::1)."""
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def is_wildcard(host):
    """True for the all-interfaces addresses (``0.0.0.0``, ``::``, empty)."""
    return host in ("", "0.0.0.0", "::")


def allowed_hosts(bind, extra=()):
    """Host names (lower case, no port) accepted in the Host header.

    A loopback bind accepts only the loopback names. Any other bind accepts
    also the bound address, the machine's host name, its fully qualified
    name and their addresses, and ``extra``.

    Examples
    --------
    >>> sorted(allowed_hosts("127.0.0.1"))
    ['127.0.0.1', '::1', 'localhost']
    """
    names = set(LOOPBACK_NAMES) | {str(bind).lower()}
    if not is_loopback(bind):
        for n in (socket.gethostname(), socket.getfqdn()):
            names.add(n.lower())
            try:
                names.update(ai[4][0].lower() for ai in socket.getaddrinfo(n, None))
            except OSError:
                pass
    names.update(str(e).lower() for e in extra)
    names.discard("")
    if is_wildcard(bind):
        names.discard(str(bind))
    return names


def host_only(host_header):
    """The host part of a Host header: no port, no IPv6 brackets, lower case."""
    h = (host_header or "").strip().lower()
    if h.startswith("["):
        return h[1:].split("]", 1)[0]
    if h.count(":") == 1:
        h = h.split(":", 1)[0]
    return h


def _minutes(seconds):
    return f"{seconds / 60:g} minutes" if seconds >= 120 else f"{seconds:g} seconds"


#: A kernel still starting is never culled before this many seconds [s]: on a
#: busy machine a start can outlast a short ``cull_idle``, and culling it then
#: leaves its page loading for ever.
STARTUP_GRACE = 300


#: A kernel without any page connected is shut after this many seconds
#: without activity [s] (``--cull-disconnected``): a closed tab normally shuts
#: its kernel at once (the page's closing request), this catches a tab that
#: could not send it (a crashed or killed browser, a lost network).
CULL_DISCONNECTED = 60


def guarded_kernel_manager_class(cull_disconnected=CULL_DISCONNECTED):
    """jupyter_server's kernel manager, except that a kernel still starting is
    not culled before :data:`STARTUP_GRACE` (or ``cull_idle``, if longer), and
    a kernel with no page connected is culled after ``cull_disconnected``
    seconds without activity (a render in progress is activity)."""
    from datetime import timedelta

    from jupyter_core.utils import ensure_async
    from jupyter_server._tz import utcnow
    from jupyter_server.services.kernels.kernelmanager import AsyncMappingKernelManager

    class GuardedKernelManager(AsyncMappingKernelManager):
        async def cull_kernel_if_idle(self, kernel_id):
            kernel = self._kernels.get(kernel_id)
            if kernel is not None and hasattr(kernel, "last_activity"):
                state = getattr(kernel, "execution_state", None)
                idle = utcnow() - kernel.last_activity
                if state == "starting":
                    grace = timedelta(seconds=max(STARTUP_GRACE, self.cull_idle_timeout))
                    if idle < grace:
                        return None
                elif (state == "idle" and not self._kernel_connections.get(kernel_id, 0)
                      and idle > timedelta(seconds=cull_disconnected)):
                    self.log.warning("Culling kernel %s: no page connected for %d s",
                                     kernel_id, int(idle.total_seconds()))
                    await ensure_async(self.shutdown_kernel(kernel_id))
                    return None
            return await super().cull_kernel_if_idle(kernel_id)

    return GuardedKernelManager


def guarded_voila_class():
    """A Voila application class whose handlers check the Host header and
    cap the number of live kernels (imports Voila only when called)."""
    from traitlets import Int, List, Unicode
    from voila.app import Voila
    from voila.tornado.handler import TornadoVoilaHandler

    class GuardedVoila(Voila):
        max_kernels = Int(8, help="live kernels at most; beyond it a busy page").tag(
            config=True)
        allow_host = List(Unicode(), help="extra names accepted in the Host header").tag(
            config=True)

        def init_handlers(self):
            hosts = allowed_hosts(self.ip, self.allow_host)
            app = self
            app._ekx_starting = 0
            idle = float(self.config.MappingKernelManager.get("cull_idle_timeout", 0) or 0)
            busy = BUSY_PAGE.format(cap=self.max_kernels, retry=30,
                                    idle=_minutes(idle) if idle else "a while")

            def guard(cls):
                renders = issubclass(cls, TornadoVoilaHandler)

                async def prepare(self, *args, **kwargs):
                    host = host_only(self.request.host)
                    if host not in hosts:
                        app.log.warning("refused a request for Host %r (allowed: %s)",
                                         self.request.host, ", ".join(sorted(hosts)))
                        self.set_status(403)
                        self.set_header("Content-Type", "text/html; charset=utf-8")
                        self.finish(HOST_PAGE.format(host=html.escape(host)))
                        return
                    out = super(guarded, self).prepare(*args, **kwargs)
                    if inspect.isawaitable(out):
                        await out
                    if self._finished or not renders or self.request.method != "GET":
                        return
                    if not self.current_user:
                        return  # the handler sends it to the login form
                    live = len(self.kernel_manager.list_kernel_ids())
                    if live + app._ekx_starting >= app.max_kernels:
                        app.log.warning("busy: %d kernels live, %d starting, cap %d",
                                         live, app._ekx_starting, app.max_kernels)
                        self.set_status(503)
                        self.set_header("Retry-After", "30")
                        self.set_header("Content-Type", "text/html; charset=utf-8")
                        self.set_header("Cache-Control", "no-store")
                        self.finish(busy)
                        return
                    app._ekx_starting += 1
                    self._ekx_counted = True
                    # the page's closing request (shutdown of its kernel) must
                    # carry the XSRF cookie: without it the server refused it
                    # (403) and a closed tab kept its kernel until culled
                    self.xsrf_token

                def on_finish(self):
                    if getattr(self, "_ekx_counted", False):
                        self._ekx_counted = False
                        app._ekx_starting -= 1
                    super(guarded, self).on_finish()

                guarded = type(f"Guarded{cls.__name__}", (cls,),
                               {"prepare": prepare, "on_finish": on_finish})
                return guarded

            return [(h[0], guard(h[1]), *h[2:]) for h in super().init_handlers()]

    return GuardedVoila


def voila_argv(root, port, host, max_kernels, cull_idle, cull_interval):
    """Voila's own options: read-only (sources stripped, no tracebacks), the
    given port only, idle kernels culled whether a page is connected or not."""
    return [str(root), f"--port={int(port)}", f"--Voila.ip={host}", "--Voila.port_retries=0",
            "--strip_sources=True", "--show_tracebacks=False", "--theme=light", "--no-browser",
            f"--MappingKernelManager.cull_idle_timeout={int(cull_idle)}",
            f"--MappingKernelManager.cull_interval={int(cull_interval)}",
            "--MappingKernelManager.cull_connected=True",
            f"--GuardedVoila.max_kernels={int(max_kernels)}"]


# --- starting and stopping a server from Python (tests, benchmarks, scripts) ---------

#: The line ``ekexplore serve`` prints once the server answers: origin and token.
URL_LINE = re.compile(r"read-only\) at (http://[^/\s]+)/\?token=(\S+)")


def stop_process_group(proc, timeout=15.0, interrupts=1):
    """Stop a process started with ``start_new_session=True`` and its children.

    Sends SIGINT to its process group ``interrupts`` times (half a second
    apart; a Jupyter server asks to confirm the first one), waits up to
    ``timeout`` [s], then kills the group. Returns the exit code.
    """
    for k in range(interrupts):
        if proc.poll() is not None:
            break
        if k:
            time.sleep(0.5)
        os.killpg(proc.pid, signal.SIGINT)
    try:
        proc.wait(timeout=timeout)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait(timeout=5)
    return proc.returncode


def _read_lines(stream, lines, ready):
    """Collect the server's standard output (a thread: reads never block the
    caller, and the pipe never fills); ``ready`` is set at the URL block's end."""
    for line in stream:
        lines.append(line)
        if "Ctrl+C" in line:
            ready.set()
    ready.set()


@contextlib.contextmanager
def running_server(*options, log=None, env=None, timeout=180.0, on_url=None):
    """Run ``ekexplore serve`` on a free localhost port for the ``with`` block.

    Parameters
    ----------
    *options : str
        Command-line options of ``ekexplore serve`` (``"--max-kernels", "1"``).
    log : file, optional
        Where the server's standard error goes (discarded by default).
    env : dict, optional
        Extra environment variables. The directory of this ``ekexplore`` comes
        first on ``PYTHONPATH``, so the server and its kernels run the same
        code as the caller; an inherited token variable is dropped.
    timeout : float
        Bound [s] on the wait for the printed URL (the server prints it only
        once it answers).
    on_url : callable, optional
        Called with the port as soon as the URL line is read, before anything
        else is sent to the server (a test of "printed only once answering").

    Yields
    ------
    dict
        ``base`` (``http://127.0.0.1:PORT``), ``port``, ``token``, ``q``
        (``?token=...``: ``base + path + q`` authenticates a page),
        ``printed`` (standard output up to "Ctrl+C"), ``start_s`` [s] from
        start to the URL block, ``on_url`` (what ``on_url`` returned),
        ``proc`` (the :class:`subprocess.Popen`).

    The server's process group is always stopped on leaving the block
    (:func:`stop_process_group`), also when it failed to start, which raises
    RuntimeError with what it printed.
    """
    package_root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    run_env = {k: v for k, v in os.environ.items() if k != ENV_TOKEN}
    run_env.update(env or {})
    run_env["PYTHONPATH"] = os.pathsep.join(
        p for p in (package_root, run_env.get("PYTHONPATH")) if p)
    t0 = time.monotonic()
    proc = subprocess.Popen([sys.executable, "-m", "ekexplore", "serve", *options],
                            stdout=subprocess.PIPE, stderr=log or subprocess.DEVNULL,
                            text=True, start_new_session=True, env=run_env)
    lines, ready = [], threading.Event()
    reader = threading.Thread(target=_read_lines, args=(proc.stdout, lines, ready), daemon=True)
    reader.start()
    try:
        yield _started(proc, lines, ready, t0, timeout, on_url)
    finally:
        stop_process_group(proc)
        reader.join(timeout=5)
        proc.stdout.close()


def _started(proc, lines, ready, t0, timeout, on_url):
    """Wait for the URL line (calling ``on_url``) and the end of the URL block."""
    deadline, found, hook = t0 + timeout, None, None
    while found is None and time.monotonic() < deadline and not ready.is_set():
        found = next((m for m in map(URL_LINE.search, list(lines)) if m), None)
        if found is None:
            time.sleep(0.02)
    found = found or next((m for m in map(URL_LINE.search, list(lines)) if m), None)
    if found is None:
        raise RuntimeError(f"ekexplore serve printed no URL within {timeout:.0f} s "
                           f"(exit code {proc.poll()}):\n" + "".join(lines))
    base, token = found.groups()
    if on_url is not None:
        hook = on_url(int(base.rsplit(":", 1)[1]))
    ready.wait(max(0.0, deadline - time.monotonic()))
    return {"base": base, "port": int(base.rsplit(":", 1)[1]), "token": token,
            "q": f"?token={token}", "printed": "".join(lines),
            "start_s": time.monotonic() - t0, "on_url": hook, "proc": proc}


def main(argv=None):
    """Start the guarded Voila server (``python -m ekexplore._serve ...``)."""
    p = argparse.ArgumentParser(prog="python -m ekexplore._serve")
    p.add_argument("root")
    p.add_argument("--port", type=int, required=True)
    p.add_argument("--host", default="127.0.0.1")
    p.add_argument("--max-kernels", type=int, default=8)
    p.add_argument("--cull-idle", type=int, default=600)
    p.add_argument("--cull-interval", type=int, default=60)
    p.add_argument("--cull-disconnected", type=int, default=CULL_DISCONNECTED)
    p.add_argument("--allow-host", action="append", default=[])
    a = p.parse_args(argv)
    token = os.environ.pop(ENV_TOKEN, "")
    if not token:
        print(f"{ENV_TOKEN} is not set: refusing to serve without a token", file=sys.stderr)
        return 2
    cls = guarded_voila_class()
    app = cls.instance()
    app.initialize(voila_argv(a.root, a.port, a.host, a.max_kernels, a.cull_idle,
                              a.cull_interval))
    app.voila_configuration.multi_kernel_manager_class = guarded_kernel_manager_class(
        a.cull_disconnected)
    app.allow_host = list(a.allow_host)
    app.token = token
    app.start()
    return 0


if __name__ == "__main__":
    sys.exit(main())
