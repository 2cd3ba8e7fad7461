"""The engine on several threads: the same numbers, bit for bit, however the tiles are split."""

from __future__ import annotations

import numpy as np
import pytest

from coveryield.engine import kernels, threads
from coveryield.errors import SettingError
from coveryield.engine.water_balance import simulate_tiles

from .cases import make_case

# 3 blocks and a short one: 2 threads split them 2 + 1.5, 3 threads 1 + 1 + 1.5
N_TILES = 3 * kernels.BLOCK + 100


def _run_all(case, n_threads, **options):
    run = simulate_tiles(*case.args, lai=case.lai, threads=n_threads, **options)
    arrays = [getattr(run.annual, name) for name in kernels.ANNUAL_NAMES]
    if run.daily_yield_mm is not None:
        arrays.append(run.daily_yield_mm)
    if run.daily_drainage_mm is not None:
        arrays.append(run.daily_drainage_mm)
    if run.daily is not None:
        arrays.extend(run.daily.values())
    return arrays


@pytest.mark.parametrize("seed", [3, 4, 6, 7])  # closed canopy, leaf area per tile and per day
@pytest.mark.parametrize(
    "options",
    [{}, {"keep_daily": True}, {"keep_daily_drainage": True}, {"keep_daily_yield": False}],
    ids=["yield", "daily", "drainage", "annual"],
)
def test_results_do_not_depend_on_the_number_of_threads(seed, options):
    # every tile's arithmetic is the same on any thread: equal bit for bit (our design, C)
    case = make_case(seed=seed, n_days=800, n_tiles=N_TILES, n_years=3)
    one = _run_all(case, 1, **options)
    for n_threads in (2, 3, 8):
        for a, b in zip(one, _run_all(case, n_threads, **options), strict=True):
            np.testing.assert_array_equal(a, b)


def test_a_bad_value_is_named_from_any_thread():
    case = make_case(seed=3, n_days=50, n_tiles=N_TILES, n_years=1)
    case.rain[7, N_TILES - 2] = -1.5  # in the last block, run by the last thread
    with pytest.raises(ValueError, match=rf"rain_mm\[day 7, tile {N_TILES - 2}\] = -1.5"):
        simulate_tiles(*case.args, threads=2)


@pytest.mark.parametrize("n_blocks", [1, 2, 5, 16, 17])
@pytest.mark.parametrize("n_threads", [1, 2, 3, 4, 40])
def test_block_spans_cover_every_block_once(n_blocks, n_threads):
    spans = threads.block_spans(n_blocks, n_threads)
    assert spans[0][0] == 0 and spans[-1][1] == n_blocks
    assert all(hi > lo for lo, hi in spans)
    assert all(a[1] == b[0] for a, b in zip(spans, spans[1:], strict=False))
    sizes = [hi - lo for lo, hi in spans]
    assert max(sizes) - min(sizes) <= 1
    assert len(spans) == min(n_threads, n_blocks)


def test_thread_count_precedence(monkeypatch):
    monkeypatch.setenv(threads.THREADS_VARIABLE, "3")
    assert threads.threads_for(16) == 3  # the environment
    with threads.engine_threads(2):
        assert threads.threads_for(16) == 2  # the context beats the environment
        assert threads.threads_for(16, 5) == 5  # the argument beats both
        assert threads.threads_for(1, 5) == 1  # never more threads than blocks
    monkeypatch.delenv(threads.THREADS_VARIABLE)
    assert threads.threads_for(1_000) == threads.available_cores()


@pytest.mark.parametrize("text", ["0", "two", "-1", "1.5"])
def test_a_bad_environment_value_is_one_clear_message(monkeypatch, text):
    monkeypatch.setenv(threads.THREADS_VARIABLE, text)
    with pytest.raises(SettingError, match=rf"COVERYIELD_ENGINE_THREADS='{text}': expected a whole"):
        threads.threads_for(4)


def test_the_command_line_reports_a_bad_setting_in_one_line(monkeypatch, capsys):
    from coveryield import cli

    monkeypatch.setenv(threads.THREADS_VARIABLE, "two")
    assert cli.main(["covers", "demo_data/plans.toml"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "COVERYIELD_ENGINE_THREADS='two'" in err
    assert "Traceback" not in err


@pytest.mark.parametrize("bad", [0, -2, 1.5, True, "2"])
def test_a_bad_thread_argument_is_refused(bad):
    case = make_case(seed=3, n_days=10, n_tiles=4, n_years=1)
    with pytest.raises(ValueError, match="threads: .*expected a whole number"):
        simulate_tiles(*case.args, threads=bad)


def test_a_small_catchment_starts_no_thread(monkeypatch):
    def no_pool(*args, **kwargs):
        raise AssertionError("a thread pool was started for one block of tiles")

    monkeypatch.setattr("concurrent.futures.ThreadPoolExecutor", no_pool)
    case = make_case(seed=3, n_days=30, n_tiles=kernels.BLOCK, n_years=1)
    simulate_tiles(*case.args, threads=4)
