"""A writer process beside the main one: the PNG plots and the GeoPackage while the rest is written.

Most of a full run's time goes to importing matplotlib and pyogrio and drawing the plots. A
:class:`BackgroundWriter` starts one worker process as soon as it is made; the worker imports
those libraries while the main process computes the study, then draws the plots and writes the
GeoPackage while the main process writes the summary, layers, KML, map, tables and report. The
files are the same bytes as when one process writes them all: the same functions run on the same
results, only in another process.

The worker imports pyogrio without geopandas and pandas (:mod:`geo.outputs.imports`): its
low-level writer does not use them.

Stopping: when the main process is interrupted or fails, :meth:`BackgroundWriter.stop` ends the
worker before the temporary folder is removed, so that nothing is written into it afterwards.
"""

from __future__ import annotations

import importlib
import multiprocessing
import pickle
import signal
from collections.abc import Callable, Sequence
from multiprocessing.reduction import ForkingPickler

from geo.outputs.imports import import_without_dataframes

__all__ = ["BackgroundWriter"]

#: What the worker imports ahead, by output name.
_WARM_MODULES = {
    "plots": ("matplotlib.figure", "matplotlib.backends.backend_agg", "geo.outputs.plots"),
    "gpkg": ("geo.outputs.gpkg",),
}


def _serve(conn, outputs: Sequence[str], main_end) -> None:
    """The worker's loop: import ahead, then run each ``(function, args)`` sent until ``None``.

    The worker closes its copy of the main process's end of the pipe, so that it sees the end of
    the pipe and stops when the main process dies without a word (SIGKILL).
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the main process decides what an interrupt stops
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    main_end.close()
    try:
        if "gpkg" in outputs:
            import_without_dataframes("pyogrio.raw")
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
                conn.send(("error", exc))
            except Exception:  # an exception that does not pickle
                conn.send(("error", RuntimeError(f"{type(exc).__name__}: {exc}")))
        else:
            conn.send(("done", None))
    conn.close()


class BackgroundWriter:
    """One worker process that imports the slow writers' libraries ahead and runs writers on request.

    Parameters
    ----------
    outputs : sequence of str
        The outputs the worker will write (``"plots"``, ``"gpkg"``); it imports their libraries
        at once.

    Notes
    -----
    Use as a context manager around the study and the writing. Tasks run in the order given;
    :meth:`wait` returns when all have run and raises the first error one of them raised. On
    Linux the worker is a fork of the main process (it starts without importing anything again);
    elsewhere it is a fresh interpreter.
    """

    def __init__(self, outputs: Sequence[str]) -> None:
        methods = multiprocessing.get_all_start_methods()
        ctx = multiprocessing.get_context("fork" if "fork" in methods else None)
        self.outputs = tuple(outputs)
        self._conn, child = ctx.Pipe()
        self._proc = ctx.Process(
            target=_serve, args=(child, self.outputs, self._conn), daemon=True, name="mastplan-writer"
        )
        self._proc.start()
        child.close()
        self._pending = 0

    def submit(self, func: Callable, *args) -> None:
        """Run ``func(*args)`` in the worker (``func`` must be a module-level function).

        What cannot be sent to the worker (an argument that does not pickle) runs here at once.
        """
        try:
            data = ForkingPickler.dumps((func, args))
        except (pickle.PicklingError, TypeError, AttributeError):
            func(*args)
            return
        self._conn.send_bytes(data)
        self._pending += 1

    def wait(self) -> None:
        """Wait for every submitted task; raise the first error any of them raised."""
        error = None
        while self._pending:
            try:
                status, exc = self._conn.recv()
            except EOFError:
                self._pending = 0
                raise RuntimeError("the background writer process ended unexpectedly") from None
            self._pending -= 1
            if status == "error" and error is None:
                error = exc
        if error is not None:
            raise error

    def stop(self) -> None:
        """End the worker now, whatever it is doing (after an error or an interrupt).

        SIGKILL, not SIGTERM: a SIGTERM that reaches a just-forked worker before its Python signal
        handling is set up is lost, and the worker has nothing to clean up (the main process
        removes the temporary folder after this returns).
        """
        if self._proc.is_alive():
            self._proc.kill()
        self._proc.join()
        self._pending = 0
        self._conn.close()

    def close(self) -> None:
        """Let the worker finish and end."""
        if self._proc.is_alive():
            try:
                self._conn.send(None)
            except OSError:
                pass
            self._proc.join(timeout=10)
        self.stop()

    def __enter__(self) -> BackgroundWriter:
        return self

    def __exit__(self, kind, value, traceback) -> None:
        if kind is None:
            self.close()
        else:
            self.stop()
