"""What `coveryield serve` prepares, checked without starting a server."""

from __future__ import annotations

import json

import pytest

from coveryield import serve
from coveryield.errors import CoveryieldError


def test_served_notebook_is_two_cells_without_paths():
    nb = serve.notebook_json()
    sources = [cell["source"] for cell in nb["cells"]]
    assert sources == ["from coveryield.dashboard import show_dashboard", "show_dashboard()"]
    assert all(cell["outputs"] == [] for cell in nb["cells"])


def test_prepare_uses_private_folders_and_env(demo_plan):
    setup = serve.prepare(demo_plan, port=8899, read_only=True, base_env={"PATH": "/usr/bin"})
    try:
        assert sorted(p.name for p in setup.notebook.parent.iterdir()) == ["dashboard.ipynb"]
        env = setup.env
        assert env["COVERYIELD_PLAN"] == str(demo_plan.resolve())
        assert env["COVERYIELD_READ_ONLY"] == "1"
        for key in ("JUPYTER_CONFIG_DIR", "JUPYTER_DATA_DIR", "JUPYTER_RUNTIME_DIR", "IPYTHONDIR"):
            assert env[key].startswith(str(setup.root))
        config = json.loads((setup.root / "config" / "voila.json").read_text())
        vc = config["VoilaConfiguration"]
        assert vc["file_allowlist"] == []
        assert vc["strip_sources"] is True
        assert vc["show_tracebacks"] is False
        assert vc["allow_theme_override"] == vc["allow_template_override"] == "NO"
        assert config["MappingKernelManager"]["cull_idle_timeout"] > 0
        command = " ".join(setup.command)
        for option in ("--no-browser", "--port=8899", "--Voila.ip=127.0.0.1",
                       "--Voila.port_retries=0", "--VoilaConfiguration.strip_sources=True",
                       "--VoilaConfiguration.show_tracebacks=False",
                       "--VoilaConfiguration.allow_theme_override=NO",
                       "--MappingKernelManager.cull_interval=60",
                       "--KernelManager.transport=ipc",
                       f"--Voila.config_file_paths={setup.root / 'config'}"):
            assert option in command
        assert str(setup.notebook) in setup.command  # one notebook, never a folder
    finally:
        setup.cleanup()
    assert not setup.root.exists()


def test_port_in_use_is_a_user_error():
    import socket

    with socket.socket() as taken:
        taken.bind(("127.0.0.1", 0))
        taken.listen()
        with pytest.raises(CoveryieldError, match="in use"):
            serve.check_port_free(taken.getsockname()[1])


def test_missing_plan_file_is_a_user_error(tmp_path):
    with pytest.raises(CoveryieldError, match="not found"):
        serve.prepare(tmp_path / "nope.toml")


def test_cli_registers_serve_and_demo():
    from coveryield.cli import build_parser

    parser = build_parser()
    args = parser.parse_args(["serve", "x.toml", "--port", "9000", "--read-only"])
    assert (args.plan, args.port, args.read_only) == ("x.toml", 9000, True)
    args = parser.parse_args(["demo", "--no-serve"])
    assert args.no_serve
    assert callable(args.run)
