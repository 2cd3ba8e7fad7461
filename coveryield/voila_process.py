"""What runs inside the Voila process that ``coveryield serve`` starts (``python -m`` this module).

Three things Voila does not do on its own:

* **A cap on kernels.** Every page view holds one kernel (a Python process with the comparison in
  memory). :class:`KernelCap` limits the kernels of the server, the warm spare included, to
  ``--coveryield-max-kernels``; a viewer beyond the cap gets HTTP 503 with a short page saying
  the dashboard is busy, and one line in the log. The warm spare (Voila's pre-heated kernel,
  which has already run the dashboard so a page is ready in about a second) is only refilled
  while the cap allows, and is refilled as soon as a kernel is shut down.
* **One log line per disconnect.** A viewer whose connection drops while the kernel still sends
  messages made jupyter_server log a ``WebSocketClosedError`` traceback per message.
  :class:`QuietDisconnectConnection` logs "viewer disconnected" once and drops the rest.
* **Quiet routine lines.** :class:`RoutineLines` hides jupyter_server's per-connection message
  buffering lines, which say nothing a reader of the log needs.

The cap is put in by wrapping Voila's kernel-manager factory (``voila.app``'s
``voila_kernel_manager_factory``) before Voila starts: the classes it builds get :class:`KernelCap`
first in their method order. Checked with voila 0.5.
"""

from __future__ import annotations

import logging
import sys
import time
from typing import Any

from jupyter_server.services.kernels.connection.channels import ZMQChannelsWebsocketConnection
from tornado import web
from tornado.iostream import StreamClosedError
from tornado.websocket import WebSocketClosedError

from coveryield.serve import MAX_KERNELS_FLAG

BUSY_REASON = "Dashboard busy"
#: Logged when a warm kernel has run the dashboard: the next page is ready in about a second.
WARM_READY = "warm kernel ready:"
BUSY_MESSAGE = (
    "This dashboard is already open in as many browser tabs as its server allows "
    "({n} at once). Please try again in a few minutes; a tab closed elsewhere frees a place."
)


class KernelCap:
    """Mixin for Voila's kernel manager: at most :attr:`max_kernels` kernels at once.

    Kernels starting count as well as running ones, so requests arriving together cannot pass
    the cap. The warm spare counts too; it is only started while there is room.
    """

    #: Most kernels at once, the warm spare included (set by :func:`with_cap`).
    max_kernels = 4
    _starting = 0
    _refill_waiting = False

    def kernels_in_use(self) -> int:
        """Kernels running or starting."""
        return len(self.list_kernel_ids()) + self._starting

    async def start_kernel(self, *args: Any, **kwargs: Any) -> str:
        """Start a viewer's kernel, or refuse the viewer with HTTP 503 when the cap is reached.

        Voila's pool starts the warm kernel past this method (it calls the base class), so the
        warm kernel is limited in :meth:`fill_if_needed` instead; a request only comes here
        when there is no warm kernel, ready or starting, to hand over.
        """
        pooled = (kwargs.get("env") or {}).get("VOILA_PREHEAT") == "True"
        if not pooled and self.kernels_in_use() >= self.max_kernels:
            self.log.warning(
                "refused a viewer: %d of %d kernels in use (raise the cap with "
                "`coveryield serve --max-viewers`)", self.kernels_in_use(), self.max_kernels)
            raise web.HTTPError(503, BUSY_MESSAGE.format(n=self.max_kernels), reason=BUSY_REASON)
        self._starting += 1
        try:
            return await super().start_kernel(*args, **kwargs)
        finally:
            self._starting -= 1

    def fill_if_needed(self, *args: Any, **kwargs: Any) -> None:
        """Refill the warm spare only while the cap allows (pre-heating managers only)."""
        if self.kernels_in_use() >= self.max_kernels:
            self._refill_waiting = True
            return None
        self._refill_waiting = False
        return super().fill_if_needed(*args, **kwargs)

    def get_pool_size(self, notebook_name: str) -> int:
        """Warm kernels ready or starting; one that failed to start is dropped and replaced.

        A request waits for a spare still starting: it started earlier than a new kernel would.
        """
        pool = getattr(self, "_pools", {}).get(notebook_name, [])
        failed = [t for t in pool if t.done() and (t.cancelled() or t.exception() is not None)]
        for task in failed:
            pool.remove(task)
            self.log.warning("a warm kernel failed to start; starting another")
        if failed:
            self.fill_if_needed(delay=0, notebook_name=notebook_name)
        return len(pool)

    async def _initialize(self, notebook_path: str, kernel_id: str | None = None,
                          **kwargs: Any) -> dict:
        """Start a warm kernel (pre-heating managers only); log once it has run the dashboard."""
        started = time.monotonic()
        content = await super()._initialize(notebook_path, kernel_id, **kwargs)
        task, kid = content.get("task"), content.get("kernel_id")

        def rendered(done: Any) -> None:
            if not done.cancelled() and done.exception() is None:
                self.log.info("%s %s ran the dashboard in %.1f s", WARM_READY, kid,
                              time.monotonic() - started)

        if task is not None:
            task.add_done_callback(rendered)
        return content

    async def shutdown_kernel(self, kernel_id: str, *args: Any, **kwargs: Any) -> None:
        """Shut a kernel down; refill the warm spare if the cap had held it back."""
        result = await super().shutdown_kernel(kernel_id, *args, **kwargs)
        if self._refill_waiting and getattr(self, "notebook_path", None) is not None:
            self.fill_if_needed(delay=0, notebook_name=self.notebook_path)
        return result


def with_cap(manager_class: type, max_kernels: int) -> type:
    """Return ``manager_class`` with :class:`KernelCap` first in its method order."""
    return type(f"Capped{manager_class.__name__}", (KernelCap, manager_class),
                {"max_kernels": int(max_kernels)})


class QuietDisconnectConnection(ZMQChannelsWebsocketConnection):
    """A kernel connection that logs a viewer's disconnect as one line, never a traceback."""

    _gone = False

    @property
    def write_message(self):
        """The websocket's ``write_message``; after the viewer has gone, messages are dropped."""
        send = self.websocket_handler.write_message

        def write(message: Any, binary: bool = False) -> Any:
            if self._gone:
                return None
            try:
                sent = send(message, binary=binary)
            except WebSocketClosedError:
                self._note_gone()
                return None
            if hasattr(sent, "add_done_callback"):
                # a write under way when the socket closes fails later, in its own task: settle
                # it here, or asyncio logs "Task exception was never retrieved" with a traceback
                sent.add_done_callback(self._settle)
            return sent

        return write

    def _settle(self, sent: Any) -> None:
        """Retrieve the outcome of a finished write; a closed socket means the viewer has gone."""
        if sent.cancelled():
            return
        error = sent.exception()
        if isinstance(error, (WebSocketClosedError, StreamClosedError)):
            self._note_gone()
        elif error is not None:
            self.log.error("sending to the viewer of kernel %s failed: %r", self.kernel_id, error)

    def _note_gone(self) -> None:
        if not self._gone:
            self._gone = True
            self.log.info("viewer disconnected from kernel %s", self.kernel_id)

    def disconnect(self) -> Any:
        """Close the connection (the viewer left or dropped); log it once."""
        self._note_gone()
        return super().disconnect()


class RoutineLines(logging.Filter):
    """Drop jupyter_server's routine per-connection lines (message buffering, ping settings)."""

    ROUTINE = ("Starting buffering for", "Discarding %s buffered messages for",
               "Discarding %d buffered messages for")

    def filter(self, record: logging.LogRecord) -> bool:  # noqa: D102
        return not str(record.msg).startswith(self.ROUTINE)


def _pop_max_kernels(argv: list[str]) -> tuple[int, list[str]]:
    rest, cap = [], KernelCap.max_kernels
    for arg in argv:
        if arg.startswith(MAX_KERNELS_FLAG + "="):
            cap = int(arg.split("=", 1)[1])
        else:
            rest.append(arg)
    return cap, rest


def install(max_kernels: int) -> None:
    """Make Voila build capped kernel managers, and filter its routine log lines."""
    import voila.app

    factory = voila.app.voila_kernel_manager_factory
    if getattr(factory, "coveryield_cap", None) is None:
        original = factory

        def capped_factory(*args: Any, **kwargs: Any) -> type:
            return with_cap(original(*args, **kwargs), capped_factory.coveryield_cap)

        voila.app.voila_kernel_manager_factory = factory = capped_factory
    factory.coveryield_cap = int(max_kernels)
    for name in ("Voila", "ServerApp", "tornado.application"):
        logging.getLogger(name).addFilter(RoutineLines())


def main(argv: list[str] | None = None) -> int:
    """Run Voila with the cap and the quiet disconnects; arguments as Voila's own."""
    max_kernels, rest = _pop_max_kernels(list(sys.argv[1:] if argv is None else argv))
    if max_kernels < 1:
        print(f"{MAX_KERNELS_FLAG}: expected 1 or more, got {max_kernels}", file=sys.stderr)
        return 2
    install(max_kernels)
    import voila.app

    sys.argv = ["voila", *rest]
    voila.app.main()
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
