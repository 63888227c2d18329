"""Writer processes beside the main one: the PNG plots, the map and the GeoPackage while the rest is written.

Most of a full run's writing time goes to importing matplotlib, folium and pyogrio, drawing the
plots and rendering the map. A :class:`BackgroundWriter` starts its worker processes as soon as it
is made: one for the plots, one for the map and the GeoPackage. They import those libraries while
the main process computes the study, then draw the plots, render the map and write the GeoPackage
while the main process writes the summary, layers, KML, tables and report. The files are the same
bytes as when one process writes them all: the same functions run on the same results, only in
other processes.

The workers import folium and pyogrio without geopandas and pandas
(:mod:`geo.outputs.imports`): the map and the low-level GeoPackage writer do not use them.

Stopping: when the main process is interrupted or fails, :meth:`BackgroundWriter.stop` ends the
workers before the temporary folder is removed, so that nothing is written into it afterwards.

When the main process is gone without a word (SIGKILL), each worker ends at once and quietly: a
thread of the worker waits on a pipe of its own whose other end only the main process holds and never
writes to; the system closes that end when the main process dies, the thread sees the end of the
pipe and ends the worker (``os._exit``), whatever it was writing. Chosen over the alternatives
because it is an event, not a poll (``os.getppid()`` read every so often lags and can be fooled by a
reaper process), works on every system and start method multiprocessing has (Linux's
``prctl(PR_SET_PDEATHSIG)`` is Linux only and fires when the *thread* that forked ends, not the
process), and needs no signal handler. What a worker leaves half-written lies in the run's temporary
folder, named for the main process, which the next run removes (:mod:`geo.outputs.write`).
"""

from __future__ import annotations

import importlib
import multiprocessing
import os
import pickle
import queue
import signal
import threading
from collections.abc import Callable, Sequence
from multiprocessing.reduction import ForkingPickler

from geo.outputs.imports import import_without_dataframes

__all__ = ["BackgroundWriter"]

#: What a worker imports ahead, by output name.
_WARM_MODULES = {
    # The site plan of the report too: the hillshade's DEM (rasterio) and the frame's projection (pyproj).
    "plots": (
        "matplotlib.figure",
        "matplotlib.backends.backend_agg",
        "geo.outputs.plots",
        "geo.outputs.site_plan",
        "geo.ground.dem",
        "geo.ground.hillshade",
        "pyproj",
        "rasterio",
        "rasterio.warp",
        "numpy.ma",
    ),
    "gpkg": ("geo.outputs.gpkg",),
    # rasterio (and numpy.ma, for its masked reads) for the DEM the hillshade is drawn from: geo.ground.dem
    # opens it lazily, and the main process imports it only when the study starts, after the fork.
    "map": (
        "branca.element",
        "geo.outputs.webmap",
        "geo.ground.dem",
        "geo.ground.hillshade",
        "pyproj",
        "rasterio",
        "rasterio.warp",
        "numpy.ma",
    ),
}
#: What a worker imports ahead with the data-frame libraries hidden, by output name.
_WARM_WITHOUT_DATAFRAMES = {"gpkg": "pyogrio.raw", "map": "folium"}
#: How much lower the writers' priority is than the main process's (Unix ``nice``): while both
#: have work, the main process keeps a core of its own (its optics kernel then runs on one thread,
#: :func:`cli.run._cores_shared`) and the writers share the other.
_NICENESS = 5
#: The outputs that share a worker process; each group that has an output chosen gets its own.
_GROUPS = (("plots",), ("map", "gpkg"))


def _end_with_main(watch) -> None:
    """End this worker at once, quietly, when the main process is gone (``watch`` reaches its end).

    Runs in a thread of the worker: the main process never writes to ``watch``, so the only thing
    ``recv_bytes`` ever returns with is the end of the pipe (or an error reading it).
    """
    try:
        watch.recv_bytes()
    except (EOFError, OSError):
        pass
    os._exit(0)


def _watch_main(watch) -> None:
    """Start the thread that ends this worker with the main process (:func:`_end_with_main`)."""
    threading.Thread(target=_end_with_main, args=(watch,), name="mastplan-writer-watch", daemon=True).start()


def _reply(conn, message) -> None:
    """Send ``message`` to the main process; end this worker quietly if the main process is gone."""
    try:
        conn.send(message)
    except (BrokenPipeError, ConnectionResetError, EOFError):
        os._exit(0)


def _serve(conn, outputs: Sequence[str], main_ends, watch=None) -> None:
    """The worker's loop: import ahead, then run each ``(function, args)`` sent until ``None``.

    The worker closes its copies of the main process's ends of the pipes (its own and those of the
    workers started before it, task and watch pipes alike), so that it sees the end of its pipes and
    stops when the main process dies without a word (SIGKILL): at once, from ``watch``'s thread, even
    in the middle of a task.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the main process decides what an interrupt stops
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    try:  # the study in the main process first: it is what the run waits for
        os.nice(_NICENESS)
    except (AttributeError, OSError):  # no nice on this system, or not allowed: as it is
        pass
    for main_end in main_ends:
        main_end.close()
    if watch is not None:
        _watch_main(watch)
    try:
        for name in outputs:
            if name in _WARM_WITHOUT_DATAFRAMES:
                import_without_dataframes(_WARM_WITHOUT_DATAFRAMES[name])
        for name in outputs:
            for module in _WARM_MODULES.get(name, ()):
                importlib.import_module(module)
    except Exception:  # a failed import shows again, with its message, when the task runs
        pass
    while True:
        try:
            task = conn.recv()
        except EOFError:  # the main process is gone
            break
        if task is None:
            break
        func, args = task
        try:
            func(*args)
        except BaseException as exc:  # noqa: BLE001 - handed to the main process, which raises it
            try:
                ForkingPickler.dumps(exc)
            except Exception:  # an exception that does not pickle
                exc = RuntimeError(f"{type(exc).__name__}: {exc}")
            _reply(conn, ("error", exc))
        else:
            _reply(conn, ("done", None))
    conn.close()


class _Worker:
    """One worker process, the main process's end of its task pipe and of its watch pipe.

    The watch pipe carries nothing: the worker sees its end when the main process is gone.
    """

    def __init__(self, ctx, outputs: tuple[str, ...], before: Sequence[_Worker]) -> None:
        self.outputs = outputs
        self.conn, child = ctx.Pipe()
        watch, self.watched = ctx.Pipe(duplex=False)
        main_ends = [self.conn, self.watched, *(end for worker in before for end in (worker.conn, worker.watched))]
        self.proc = ctx.Process(
            target=_serve, args=(child, outputs, main_ends, watch), daemon=True, name="mastplan-writer"
        )
        self.proc.start()
        child.close()
        watch.close()
        self.pending = 0
        self._outbox: queue.SimpleQueue = queue.SimpleQueue()
        self._sender: threading.Thread | None = None

    def post(self, data: bytes) -> None:
        """Send ``data`` (a pickled task, or None pickled) to the worker without waiting for it to read.

        A thread of the main process writes it into the pipe: a worker still importing its libraries
        reads nothing, and a task larger than the pipe's buffer would otherwise hold the study up
        until the worker is ready (seen: 4.7 s of a run). Tasks reach the worker in the order posted.
        """
        if self._sender is None:
            self._sender = threading.Thread(target=self._send_all, name="mastplan-writer-send", daemon=True)
            self._sender.start()
        self._outbox.put(data)

    def _send_all(self) -> None:
        """The sending thread: every posted task into the pipe, in order, until the end mark (``b""``)."""
        while True:
            data = self._outbox.get()
            if not data:
                return
            try:
                self.conn.send_bytes(data)
            except (OSError, ValueError):  # the worker is gone, or the pipe closed by stop()
                return

    def end_sending(self) -> None:
        """Let the sending thread send what is posted and end; wait for it."""
        if self._sender is not None:
            self._outbox.put(b"")
            self._sender.join()
            self._sender = None


class BackgroundWriter:
    """Worker processes that import the slow writers' libraries ahead and run writers on request.

    Parameters
    ----------
    outputs : sequence of str
        The outputs the workers will write (``"plots"``, ``"map"``, ``"gpkg"``); they import their
        libraries at once. The plots get a worker; the map and the GeoPackage share another.

    Notes
    -----
    Use as a context manager around the study and the writing. Tasks for one output run in the
    order given; :meth:`wait` returns when all have run and raises the first error one of them
    raised. On Linux a worker is a fork of the main process (it starts without importing anything
    again); elsewhere it is a fresh interpreter.
    """

    def __init__(self, outputs: Sequence[str]) -> None:
        methods = multiprocessing.get_all_start_methods()
        ctx = multiprocessing.get_context("fork" if "fork" in methods else None)
        self.outputs = tuple(outputs)
        groups = [tuple(o for o in group if o in self.outputs) for group in _GROUPS]
        known = {o for group in _GROUPS for o in group}
        groups.append(tuple(o for o in self.outputs if o not in known))
        self._workers: list[_Worker] = []
        self._error: BaseException | None = None
        for group in groups:
            if group:
                self._workers.append(_Worker(ctx, group, self._workers))

    @property
    def _proc(self):
        """The first worker process (every worker ends with it)."""
        return self._workers[0].proc

    def _worker_for(self, output: str | None) -> _Worker:
        for worker in self._workers:
            if output in worker.outputs:
                return worker
        return self._workers[0]

    def submit(self, func: Callable, *args, output: str | None = None) -> None:
        """Run ``func(*args)`` in the worker of ``output`` (``func`` must be a module-level function).

        What cannot be sent to a worker (an argument that does not pickle) runs here at once.
        """
        try:
            data = ForkingPickler.dumps((func, args))
        except (pickle.PicklingError, TypeError, AttributeError):
            func(*args)
            return
        worker = self._worker_for(output)
        worker.post(data)
        worker.pending += 1

    def _collect(self, worker: _Worker) -> None:
        """Take one finished task's report from ``worker`` (blocks until there is one)."""
        try:
            status, exc = worker.conn.recv()
        except EOFError:
            for other in self._workers:
                other.pending = 0
            raise RuntimeError("a background writer process ended unexpectedly") from None
        worker.pending -= 1
        if status == "error" and self._error is None:
            self._error = exc

    def busy(self) -> bool:
        """Whether some task submitted is still running (without waiting; errors kept for :meth:`wait`)."""
        for worker in self._workers:
            while worker.pending and worker.conn.poll():
                self._collect(worker)
        return any(worker.pending for worker in self._workers)

    def wait(self) -> None:
        """Wait for every submitted task; raise the first error any of them raised."""
        for worker in self._workers:
            while worker.pending:
                self._collect(worker)
        error, self._error = self._error, None
        if error is not None:
            raise error

    def stop(self) -> None:
        """End the workers now, whatever they are doing (after an error or an interrupt).

        SIGKILL, not SIGTERM: a SIGTERM that reaches a just-forked worker before its Python signal
        handling is set up is lost, and a worker has nothing to clean up (the main process removes
        the temporary folder after this returns).
        """
        for worker in self._workers:
            if worker.proc.is_alive():
                worker.proc.kill()
        for worker in self._workers:
            worker.proc.join()
            worker.end_sending()  # a send under way fails on the closed pipe and ends the thread
            worker.pending = 0
            worker.conn.close()
            worker.watched.close()

    def close(self) -> None:
        """Let the workers finish and end."""
        for worker in self._workers:
            if worker.proc.is_alive():
                worker.post(ForkingPickler.dumps(None))
            worker.end_sending()
        for worker in self._workers:
            worker.proc.join(timeout=10)
        self.stop()

    def __enter__(self) -> BackgroundWriter:
        return self

    def __exit__(self, kind, value, traceback) -> None:
        if kind is None:
            self.close()
        else:
            self.stop()
