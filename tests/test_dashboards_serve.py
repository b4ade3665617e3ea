"""``ekexplore serve``: the Voila command line, ports, notebook folder."""
from __future__ import annotations

import json
import socket

from ekexplore import __main__ as cli
from ekexplore.dashboards.notebooks import NOTEBOOKS, write_notebooks


def test_voila_command_is_read_only_and_culls():
    cmd = cli.voila_command("/tmp/x", 8123, cull_idle=300, cull_interval=30, max_kernels=5)
    assert cmd[1:3] == ["-m", "ekexplore._serve"]
    assert "--port=8123" in cmd and "--host=127.0.0.1" in cmd and "--max-kernels=5" in cmd
    assert not any("token" in a.lower() for a in cmd)       # the token goes in the environment
    from ekexplore._serve import voila_argv
    argv = voila_argv("/tmp/x", 8123, "127.0.0.1", 5, 300, 30)
    assert "--strip_sources=True" in argv and "--show_tracebacks=False" in argv
    assert "--MappingKernelManager.cull_idle_timeout=300" in argv
    assert "--MappingKernelManager.cull_interval=30" in argv
    assert "--MappingKernelManager.cull_connected=True" in argv
    assert "--port=8123" in argv and "--Voila.ip=127.0.0.1" in argv and "--no-browser" in argv


def test_free_port_is_bindable():
    port = cli.free_port()
    with socket.socket() as s:
        s.bind(("127.0.0.1", port))


def test_urls_name_every_dashboard():
    u = cli.urls("127.0.0.1", 9000)
    assert set(u) == set(NOTEBOOKS)
    assert u["explorer"] == "http://127.0.0.1:9000/voila/render/explorer.ipynb"
    assert cli.urls("0.0.0.0", 9000, "t" * 16)["device"] == \
        "http://127.0.0.1:9000/voila/render/device.ipynb?token=" + "t" * 16


def test_dashboards_dir_is_the_repository_folder():
    d = cli.dashboards_dir()
    assert {p.stem for p in d.glob("*.ipynb")} >= set(NOTEBOOKS)


def test_written_notebooks_import_and_display(tmp_path):
    paths = write_notebooks(tmp_path)
    for p in paths:
        nb = json.loads(p.read_text())
        src = "".join(nb["cells"][0]["source"])
        assert src.startswith("from ekexplore.dashboards import")
        assert len(src.splitlines()) <= 4        # a few lines that import and display


def test_main_without_command_prints_help(capsys):
    assert cli.main([]) == 0
    assert "serve" in capsys.readouterr().out
