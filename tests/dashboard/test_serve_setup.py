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


def test_one_warm_kernel_a_cap_and_quiet_disconnects(demo_plan):
    setup = serve.prepare(demo_plan, port=8899, read_only=True, max_viewers=5,
                          start_plan="plant-upper", base_env={"PATH": "/usr/bin"})
    try:
        config = json.loads((setup.root / "config" / "voila.json").read_text())
        vc = config["VoilaConfiguration"]
        assert vc["preheat_kernel"] is True
        assert vc["default_pool_size"] == 1
        assert config["Voila"]["kernel_websocket_connection_class"] == (
            "coveryield.voila_process.QuietDisconnectConnection")
        assert setup.command[1:4] == ["-m", "coveryield.voila_process",
                                      "--coveryield-max-kernels=5"]
        assert "--VoilaConfiguration.preheat_kernel=True" in setup.command
        assert setup.env["COVERYIELD_START_PLAN"] == "plant-upper"
    finally:
        setup.cleanup()


def test_the_page_template_asks_no_other_host(demo_plan):
    # issue 12, item 6: Voila's lab page asked a public CDN for two icon style sheets
    setup = serve.prepare(demo_plan, port=8899, base_env={"PATH": "/usr/bin"})
    try:
        config = json.loads((setup.root / "config" / "voila.json").read_text())
        assert config["VoilaConfiguration"]["template"] == serve.TEMPLATE_NAME
        folder = setup.root / "data" / "voila" / "templates" / serve.TEMPLATE_NAME
        names = sorted(p.name for p in folder.iterdir())
        assert names == ["conf.json", "error.html", "index.html.j2"]
        for path in folder.iterdir():
            text = path.read_text()
            for other_host in ("http://", "https://", "//cdn"):
                assert other_host not in text
        assert json.loads((folder / "conf.json").read_text()) == {"base_template": "lab"}
    finally:
        setup.cleanup()


def test_an_unknown_start_plan_is_a_user_error(demo_plan):
    with pytest.raises(CoveryieldError, match="plant-upper"):
        serve._check_start_plan(demo_plan, "no-such-plan")


@pytest.mark.parametrize("command", [["serve"], ["demo"]])
def test_serve_without_the_dashboard_extras_says_what_to_install(command):
    # issue 11: `coveryield serve` without the extras printed "No module named voila" from
    # inside Voila; now one line naming the package and the install command, exit status 2
    import subprocess
    import sys

    hide = ("import sys; sys.modules['voila'] = None; from coveryield.cli import main; "
            f"sys.exit(main({command!r} + ['--port', '1']))")
    proc = subprocess.run([sys.executable, "-c", hide], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 2, proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    assert "'voila'" in lines[0]
    assert 'pip install "coveryield[dashboard]"' in lines[0]
    assert proc.stdout == ""  # refused before any work (the demo's comparison included)


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
    args = parser.parse_args(["serve", "--start-plan", "plant-upper", "--max-viewers", "3"])
    assert (args.start_plan, args.max_viewers) == ("plant-upper", 3)
