"""Command line: ``ekexplore serve`` (or ``python -m ekexplore serve``).

Serves the dashboards read-only through Voila (sources stripped, no code
cells shown, no REST API, no code execution through the kernel socket), with
the protections of :mod:`ekexplore._serve`: a token in the printed URL, the
Host header checked against the bound address, a cap on live kernels with a
readable busy page beyond it, and idle pages (open or closed) culled after
``--cull-idle`` seconds. The URL is printed only once the server answers.
Binding any address other than loopback prints a loud warning.
"""
from __future__ import annotations

import argparse
import os
import secrets
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
from pathlib import Path

# absolute: tests load this file on its own to reach free_port
from ekexplore._serve import CULL_DISCONNECTED, ENV_TOKEN, is_loopback, is_wildcard

DASHBOARD_NAMES = ("explorer", "regimes", "device")
#: A static file of Voila's page template: answers without starting a kernel.
PROBE_PATH = "/voila/templates/lab/static/voila.js"
#: Shortest token accepted from the command line [characters].
TOKEN_MIN = 16

#: Resident memory of one dashboard page's kernel once rendered [MiB], the
#: largest of the three pages measured (tests/test_serve.py checks it on a
#: real server), and the bound of its 2D mesh cache [MiB]
#: (ekexplore.sections.meshes.MESH_CACHE_BYTES).
KERNEL_MIB = 250
MESH_CACHE_MIB = 256


def memory_bound_mib(max_kernels):
    """Memory the server's kernels can hold at most [MiB]: each page's kernel
    with a full mesh cache, times the kernel cap (the 2D solve in progress
    and the server process itself, about 100 MiB, come on top)."""
    return max_kernels * (KERNEL_MIB + MESH_CACHE_MIB)


CAUTION = ("Caution: electro-osmosis uses voltages that can kill, and pressurised chips can "
           "burst; all figures are model estimates that a measurement must confirm.")


def free_port(host="127.0.0.1"):
    """A TCP port that is free on ``host`` right now."""
    with socket.socket(socket.AF_INET6 if ":" in host else socket.AF_INET,
                       socket.SOCK_STREAM) as s:
        s.bind((host, 0))
        return s.getsockname()[1]


def dashboards_dir():
    """The folder holding the dashboard notebooks.

    The repository's ``dashboards/`` when running from a checkout; otherwise
    (an installed wheel) the notebooks are written to a temporary folder from
    :data:`ekexplore.dashboards.notebooks.NOTEBOOKS`.
    """
    repo = Path(__file__).resolve().parents[1] / "dashboards"
    if all((repo / f"{n}.ipynb").is_file() for n in DASHBOARD_NAMES):
        return repo
    from .dashboards.notebooks import write_notebooks
    out = Path(tempfile.mkdtemp(prefix="ekexplore-dashboards-"))
    write_notebooks(out)
    return out


def voila_command(root, port, host="127.0.0.1", cull_idle=600, cull_interval=60,
                  max_kernels=8, allow_host=(), cull_disconnected=CULL_DISCONNECTED):
    """The command line of the guarded Voila server (:mod:`ekexplore._serve`);
    the token goes in the environment variable ``EKEXPLORE_TOKEN``."""
    cmd = [sys.executable, "-m", "ekexplore._serve", str(root), f"--port={int(port)}",
           f"--host={host}", f"--cull-idle={int(cull_idle)}",
           f"--cull-interval={int(cull_interval)}", f"--max-kernels={int(max_kernels)}",
           f"--cull-disconnected={int(cull_disconnected)}"]
    cmd += [f"--allow-host={h}" for h in allow_host]
    return cmd


def _url_host(host):
    """The host to put in URLs: loopback for a wildcard bind, brackets for IPv6."""
    if is_wildcard(host):
        host = "127.0.0.1"
    return f"[{host}]" if ":" in host else host


def urls(host, port, token=None):
    """URL of each dashboard on a server at ``host:port`` (with the token)."""
    q = f"?token={token}" if token else ""
    h = _url_host(host)
    return {n: f"http://{h}:{port}/voila/render/{n}.ipynb{q}" for n in DASHBOARD_NAMES}


def remote_warning(host, port):
    """The warning printed when the server listens beyond this machine."""
    bar = "!" * 78
    return "\n".join([
        bar,
        f"!! WARNING: ekexplore serve is listening on {host}:{port}, not only on this machine.",
        "!! Anyone who can reach this address and has the token can open the dashboards",
        "!! and use this computer's processor and memory. The connection is plain HTTP: the",
        "!! token and the pages travel unencrypted. Use it only on a network you trust, or",
        "!! put a TLS reverse proxy in front (then pass --allow-host with its name).",
        bar])


def check_options(host, token, max_kernels, cull_idle, cull_interval,
                  cull_disconnected=CULL_DISCONNECTED):
    """Refuse unsafe or impossible options with a ValueError naming them."""
    if token is not None:
        if len(token) < TOKEN_MIN or not token.isprintable() or any(c in token for c in " &#?/"):
            raise ValueError(f"--token must be at least {TOKEN_MIN} characters without spaces "
                             "or any of & # ? /")
    if not 1 <= max_kernels <= 1000:
        raise ValueError(f"--max-kernels = {max_kernels} is outside the allowed range [1, 1000]")
    if not 1 <= cull_idle <= 7 * 86400:
        raise ValueError(f"--cull-idle = {cull_idle} s is outside the allowed range "
                         "[1, 604800] s")
    if not 1 <= cull_interval <= cull_idle:
        raise ValueError(f"--cull-interval = {cull_interval} s is outside the allowed range "
                         f"[1, {cull_idle}] s (at most --cull-idle)")
    if not 1 <= cull_disconnected <= 7 * 86400:
        raise ValueError(f"--cull-disconnected = {cull_disconnected} s is outside the allowed "
                         "range [1, 604800] s")


def wait_until_answering(proc, host, port, timeout=180.0):
    """Poll a static asset (never a notebook URL, which would start a kernel)
    until it answers 200; False if the process died or the time ran out."""
    url = f"http://{_url_host(host)}:{port}{PROBE_PATH}"
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            return False
        try:
            with urllib.request.urlopen(url, timeout=2) as resp:
                if resp.status == 200:
                    return True
        except (OSError, urllib.error.HTTPError):
            pass
        time.sleep(0.2)
    return False


def serve(port=None, host="127.0.0.1", cull_idle=600, cull_interval=60, open_browser=False,
          max_kernels=8, token=None, allow_host=(), cull_disconnected=CULL_DISCONNECTED):
    """Run the guarded Voila server on the dashboards until interrupted;
    returns its exit code."""
    try:
        import voila  # noqa: F401
    except ImportError:
        if shutil.which("voila") is None:
            print("ekexplore serve needs the dashboard extra: "
                  "pip install 'ekexplore[dashboard]'", file=sys.stderr)
            return 2
    try:
        check_options(host, token, max_kernels, cull_idle, cull_interval, cull_disconnected)
    except ValueError as exc:
        print(f"ekexplore serve: {exc}", file=sys.stderr)
        return 2
    port = free_port("0.0.0.0" if is_wildcard(host) else host) if port in (None, 0) else int(port)
    token = token or secrets.token_urlsafe(24)
    if not is_loopback(host):
        print(remote_warning(host, port), file=sys.stderr, flush=True)
    root = dashboards_dir()
    cmd = voila_command(root, port, host, cull_idle, cull_interval, max_kernels, allow_host,
                        cull_disconnected)
    env = {**os.environ, ENV_TOKEN: token}
    t0 = time.monotonic()
    proc = subprocess.Popen(cmd, cwd=root, env=env)

    def stop(signum, frame):  # pragma: no cover - signal path
        proc.send_signal(signal.SIGINT if signum == signal.SIGINT else signal.SIGTERM)

    signal.signal(signal.SIGTERM, stop)
    try:
        print("ekexplore serve: starting the dashboard server ...", file=sys.stderr, flush=True)
        if not wait_until_answering(proc, host, port):
            print("ekexplore serve: the server did not start (see the messages above)",
                  file=sys.stderr, flush=True)
            if proc.poll() is None:
                proc.terminate()
            return proc.wait() or 1
        h = _url_host(host)
        print(f"ekexplore dashboards (read-only) at http://{h}:{port}/?token={token}",
              flush=True)
        for name, url in urls(host, port, token).items():
            print(f"  {name:9s} {url}", flush=True)
        print(f"Server answering after {time.monotonic() - t0:.1f} s. At most {max_kernels} "
              f"pages at a time; a page idle for {cull_idle} s is closed, a closed tab frees "
              f"its page at once (or {cull_disconnected} s after its last activity). The "
              f"pages' kernels hold at most about {memory_bound_mib(max_kernels) / 1024:.1f} "
              f"GiB ({max_kernels} x ({KERNEL_MIB} MiB + a {MESH_CACHE_MIB} MiB mesh cache)).",
              flush=True)
        print(CAUTION, flush=True)
        print("Press Ctrl+C to stop.", flush=True)
        if open_browser:
            import webbrowser
            webbrowser.open(f"http://{h}:{port}/?token={token}")
        return proc.wait()
    except KeyboardInterrupt:
        proc.send_signal(signal.SIGINT)
        try:
            return proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
            return proc.wait()


def main(argv=None):
    parser = argparse.ArgumentParser(
        prog="ekexplore",
        description="Electrokinetic coupling matrix of micro- and nanofluidic channels.")
    sub = parser.add_subparsers(dest="command")
    p = sub.add_parser("serve", help="serve the dashboards read-only through Voila")
    p.add_argument("--port", type=int, default=0, help="TCP port (default: a free one)")
    p.add_argument("--host", default="127.0.0.1",
                   help="address to listen on (default 127.0.0.1, this machine only; any "
                        "other address prints a warning)")
    p.add_argument("--token", default=None,
                   help=f"access token (at least {TOKEN_MIN} characters; default: a new "
                        "random one each start, printed in the URL)")
    p.add_argument("--max-kernels", type=int, default=8,
                   help=f"dashboard pages open at a time (default 8); beyond it a 'busy' page. "
                        f"Each page has its own kernel of up to about {KERNEL_MIB} MiB plus a "
                        f"2D mesh cache bounded to {MESH_CACHE_MIB} MiB, so the kernels hold at "
                        f"most max-kernels x {KERNEL_MIB + MESH_CACHE_MIB} MiB (8: about "
                        f"{memory_bound_mib(8) / 1024:.1f} GiB)")
    p.add_argument("--cull-idle", type=int, default=600,
                   help="close a page's kernel after this many seconds without activity, "
                        "open tab or not (default 600)")
    p.add_argument("--cull-disconnected", type=int, default=CULL_DISCONNECTED,
                   help="close a kernel whose page is gone (a tab closed without saying so, "
                        "a crashed browser) after this many seconds without activity "
                        f"(default {CULL_DISCONNECTED}); a tab closed normally frees its "
                        "kernel at once")
    p.add_argument("--cull-interval", type=int, default=60,
                   help="how often to look for idle kernels [s] (default 60)")
    p.add_argument("--allow-host", action="append", default=[], metavar="NAME",
                   help="also accept this name in the Host header (e.g. a reverse proxy's); "
                        "repeatable")
    p.add_argument("--open", action="store_true", help="open a web browser")
    args = parser.parse_args(argv)
    if args.command != "serve":
        parser.print_help()
        return 0 if args.command is None and argv == [] else 2
    os.environ.setdefault("PYTHONUNBUFFERED", "1")
    return serve(args.port, args.host, args.cull_idle, args.cull_interval, args.open,
                 args.max_kernels, args.token or os.environ.get(ENV_TOKEN), args.allow_host,
                 args.cull_disconnected)


if __name__ == "__main__":
    sys.exit(main())
