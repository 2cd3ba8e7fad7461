"""The Voila process of `coveryield serve`: the kernel cap and the quiet log, without a server.

Issue 12, item 7: each request to / started a kernel with no limit, and a viewer who disconnected
left a websocket traceback in the log. The cap's rules are our own, no source.
"""

from __future__ import annotations

import asyncio
import concurrent.futures
import logging

import pytest
from tornado import web

from coveryield.voila_process import KernelCap, RoutineLines, _pop_max_kernels, with_cap


class FakeManager:
    """Stands in for Voila's pre-heating kernel manager: kernels are ids, fills are recorded."""

    def __init__(self):
        self.ids: list[str] = []
        self.fills: list[str] = []
        self._pools: dict[str, list] = {"nb": []}
        self.notebook_path = "nb"
        self.log = logging.getLogger("fake-voila")

    def list_kernel_ids(self):
        return list(self.ids)

    async def start_kernel(self, **kwargs):
        self.ids.append(f"k{len(self.ids)}")
        return self.ids[-1]

    def fill_if_needed(self, delay=None, notebook_name=None, **kwargs):
        self.fills.append(notebook_name)

    async def shutdown_kernel(self, kernel_id, *args, **kwargs):
        self.ids.remove(kernel_id)


def run(coroutine):
    """Run a coroutine on a loop of its own (a browser test's loop may be running here)."""
    with concurrent.futures.ThreadPoolExecutor(1) as pool:
        return pool.submit(asyncio.run, coroutine).result()


VIEWER = {"env": {"VOILA_PREHEAT": "False"}}
SPARE = {"env": {"VOILA_PREHEAT": "True"}}


def test_a_viewer_beyond_the_cap_gets_503_with_a_message(caplog):
    manager = with_cap(FakeManager, 2)()
    assert isinstance(manager, KernelCap)
    run(manager.start_kernel(**VIEWER))
    run(manager.start_kernel(**VIEWER))
    with caplog.at_level(logging.WARNING, logger="fake-voila"), \
            pytest.raises(web.HTTPError) as refused:
        run(manager.start_kernel(**VIEWER))
    assert refused.value.status_code == 503
    assert "try again" in refused.value.log_message
    assert manager.ids == ["k0", "k1"]
    assert "refused a viewer: 2 of 2 kernels in use" in caplog.text


def test_the_warm_spare_waits_for_room_and_refills_when_a_kernel_goes():
    manager = with_cap(FakeManager, 2)()
    run(manager.start_kernel(**VIEWER))
    manager.fill_if_needed(notebook_name="nb")
    assert manager.fills == ["nb"]  # room for a spare
    run(manager.start_kernel(**SPARE))
    manager.fill_if_needed(notebook_name="nb")
    assert manager.fills == ["nb"]  # at the cap: held back
    run(manager.shutdown_kernel("k0"))
    assert manager.fills == ["nb", "nb"]  # a place freed: the spare is refilled


def test_a_spare_that_failed_to_start_is_replaced():
    manager = with_cap(FakeManager, 3)()

    async def check():
        loop = asyncio.get_running_loop()
        failed, ready = loop.create_future(), loop.create_future()
        failed.set_exception(RuntimeError("kernel died"))
        ready.set_result({"kernel_id": "k9"})
        manager._pools["nb"] = [failed, ready]
        return manager.get_pool_size("nb")

    assert run(check()) == 1
    assert manager.fills == ["nb"]


def test_routine_lines_are_dropped_and_others_kept():
    keep = RoutineLines().filter
    record = logging.LogRecord("Voila", logging.INFO, __file__, 1, "Starting buffering for %s",
                               ("k:s",), None)
    assert not keep(record)
    other = logging.LogRecord("Voila", logging.INFO, __file__, 1, "viewer disconnected from %s",
                              ("k",), None)
    assert keep(other)


def test_the_cap_flag_is_taken_out_before_voila_reads_its_arguments():
    cap, rest = _pop_max_kernels(["nb.ipynb", "--coveryield-max-kernels=3", "--port=1"])
    assert cap == 3
    assert rest == ["nb.ipynb", "--port=1"]


def test_a_write_that_fails_after_the_viewer_left_is_settled_quietly(caplog):
    # a write under way when the browser dies fails later in its own task; unsettled, asyncio
    # logs "Task exception was never retrieved" with a traceback (seen under load in the browser
    # test of a dropped viewer)
    from tornado.iostream import StreamClosedError
    from tornado.websocket import WebSocketClosedError

    from coveryield.voila_process import QuietDisconnectConnection

    async def three_writes():
        pending = [asyncio.get_running_loop().create_future() for _ in range(3)]

        class Handler:
            def write_message(self, message, binary=False):
                return pending.pop(0)

        class Bare(QuietDisconnectConnection):
            """The connection without a kernel manager: only what writing needs."""

            websocket_handler = Handler()
            kernel_id = "k0"
            log = logging.getLogger("fake-voila")

        connection = Bare.__new__(Bare)  # traits set up, no kernel connection made
        sent = [connection.write_message(f"m{i}") for i in range(3)]
        sent[0].set_result(None)
        sent[1].set_exception(WebSocketClosedError())
        sent[2].set_exception(StreamClosedError())
        await asyncio.sleep(0)  # run the done callbacks
        return sent, connection.write_message("after")

    caplog.set_level(logging.INFO, logger="fake-voila")
    # a loop of its own in a thread of its own: other tests may leave one running in this thread
    with concurrent.futures.ThreadPoolExecutor(1) as pool:
        sent, after = pool.submit(asyncio.run, three_writes()).result()
    assert all(not future._log_traceback for future in sent)  # retrieved: no traceback
    assert caplog.text.count("viewer disconnected from kernel k0") == 1
    assert after is None  # dropped once the viewer has gone
