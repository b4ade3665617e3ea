"""Command line: ``ekexplore serve`` (or ``python -m ekexplore serve``).

Serves the dashboards read-only through Voila: sources stripped, no code
cells shown, on a free localhost port, with idle kernels culled so that
closed pages do not leave kernels running.
"""
from __future__ import annotations

import argparse
import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
from pathlib import Path

DASHBOARD_NAMES = ("explorer", "regimes", "device")


def free_port(host="127.0.0.1"):
    """A TCP port that is free on ``host`` right now."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
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
                  open_browser=False):
    """The Voila command line that serves ``root`` read-only."""
    cmd = [sys.executable, "-m", "voila", str(root),
           f"--port={port}", f"--Voila.ip={host}",
           "--strip_sources=True", "--show_tracebacks=False",
           "--theme=light",
           f"--MappingKernelManager.cull_idle_timeout={int(cull_idle)}",
           f"--MappingKernelManager.cull_interval={int(cull_interval)}",
           "--MappingKernelManager.cull_connected=False"]
    if not open_browser:
        cmd.append("--no-browser")
    return cmd


def urls(host, port):
    """URL of each dashboard on a server at ``host:port``."""
    return {n: f"http://{host}:{port}/voila/render/{n}.ipynb" for n in DASHBOARD_NAMES}


def serve(port=None, host="127.0.0.1", cull_idle=600, cull_interval=60, open_browser=False):
    """Run Voila on the dashboards until interrupted; returns its exit code."""
    if shutil.which("voila") is None:
        try:
            import voila  # noqa: F401
        except ImportError:
            print("ekexplore serve needs the dashboard extra: "
                  "pip install 'ekexplore[dashboard]'", file=sys.stderr)
            return 2
    port = free_port(host) if port in (None, 0) else int(port)
    root = dashboards_dir()
    cmd = voila_command(root, port, host, cull_idle, cull_interval, open_browser)
    print(f"ekexplore dashboards (read-only) at http://{host}:{port}/", flush=True)
    for name, url in urls(host, port).items():
        print(f"  {name:9s} {url}", flush=True)
    print("Press Ctrl+C to stop.", flush=True)
    proc = subprocess.Popen(cmd, cwd=root)

    def stop(signum, frame):  # pragma: no cover - signal path
        proc.send_signal(signal.SIGINT if signum == signal.SIGINT else signal.SIGTERM)

    signal.signal(signal.SIGTERM, stop)
    try:
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
                   help="address to listen on (default 127.0.0.1, this machine only)")
    p.add_argument("--cull-idle", type=int, default=600,
                   help="shut down kernels idle for this many seconds (default 600)")
    p.add_argument("--cull-interval", type=int, default=60,
                   help="how often to look for idle kernels [s] (default 60)")
    p.add_argument("--open", action="store_true", help="open a web browser")
    args = parser.parse_args(argv)
    if args.command != "serve":
        parser.print_help()
        return 0 if args.command is None and argv == [] else 2
    os.environ.setdefault("PYTHONUNBUFFERED", "1")
    return serve(args.port, args.host, args.cull_idle, args.cull_interval, args.open)


if __name__ == "__main__":
    sys.exit(main())
