"""Usage errors of `coveryield batch` exit 2 with one message and write nothing; Dask stays out
of `compare` and the dashboard."""

from __future__ import annotations

import socket
import subprocess
import sys

import pytest

from coveryield.cli import main


def free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def run_cli(args, capsys):
    """Run a command that argparse ends itself (help, usage errors): exit code and output."""
    with pytest.raises(SystemExit) as exited:
        main(args)
    printed = capsys.readouterr()
    return exited.value.code, printed.out + printed.err


@pytest.mark.parametrize(
    ("extra", "expected"),
    [
        (["--workers", "0"], "--workers 0: expected 1 or more"),
        (["--workers", "2", "--scheduler", "tcp://127.0.0.1:8786"], "one of the two options"),
        (["--connect-timeout", "0"], "expected seconds > 0"),
    ],
)
def test_bad_options_exit_2(good_dir, tmp_path, capsys, extra, expected):
    out = tmp_path / "out"
    assert main(["batch", str(good_dir), "--out", str(out), *extra]) == 2
    assert expected in capsys.readouterr().err
    assert not out.exists()


def test_missing_out_is_an_argparse_usage_error(good_dir, capsys):
    code, printed = run_cli(["batch", str(good_dir)], capsys)
    assert code == 2
    assert "--out" in printed


def test_a_missing_folder_or_one_without_plan_files_exits_2(tmp_path, capsys):
    assert main(["batch", str(tmp_path / "nowhere"), "--out", str(tmp_path / "out")]) == 2
    assert "does not exist" in capsys.readouterr().err
    (tmp_path / "empty").mkdir()
    assert main(["batch", str(tmp_path / "empty"), "--out", str(tmp_path / "out")]) == 2
    assert "no plan files" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


def test_a_non_empty_out_is_refused_without_resume_and_left_alone(good_dir, tmp_path, capsys):
    out = tmp_path / "out"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    assert main(["batch", str(good_dir), "--out", str(out)]) == 2
    assert "--resume" in capsys.readouterr().err
    assert main(["batch", str(good_dir), "--out", str(out), "--resume"]) == 2
    assert "holds no earlier batch" in capsys.readouterr().err
    assert [p.name for p in out.iterdir()] == ["notes.txt"]


def test_an_unreachable_scheduler_exits_2_and_writes_nothing(good_dir, tmp_path, capsys):
    out = tmp_path / "out"
    address = f"tcp://127.0.0.1:{free_port()}"  # nothing listens there
    status = main(
        [
            "batch",
            str(good_dir),
            "--out",
            str(out),
            "--scheduler",
            address,
            "--connect-timeout",
            "1",
        ]
    )
    assert status == 2
    err = capsys.readouterr().err
    assert f"cannot reach the Dask scheduler at '{address}'" in err
    assert "Traceback" not in err
    assert not out.exists()


NO_DASK = """
import sys
from coveryield.cli import build_parser, main
build_parser()  # every command registered, the batch command included
assert main(["compare", sys.argv[1]]) == 0
import coveryield.dashboard.app, coveryield.dashboard.state, coveryield.dashboard.views
import coveryield.serve
loaded = sorted(m for m in sys.modules if m.split(".")[0] in ("dask", "distributed"))
print("loaded:", loaded)
sys.exit(1 if loaded else 0)
"""


def test_compare_and_the_dashboard_do_not_import_dask(good_dir):
    proc = subprocess.run(
        [sys.executable, "-c", NO_DASK, str(good_dir / "alpha.toml")],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stdout[-2000:] + proc.stderr[-2000:]
    assert "loaded: []" in proc.stdout


def test_the_batch_command_is_listed_in_help(capsys):
    code, printed = run_cli(["--help"], capsys)
    assert code == 0
    assert "batch" in printed
    code, printed = run_cli(["batch", "--help"], capsys)
    assert code == 0
    assert "--resume" in printed
