"""An engine call -> the same call, watched: a callback ticks while the query runs (the CLI
draws its live line from it) and Ctrl-C cancels the query on the engine.

Where the engine can be cancelled from another thread (DuckDB's interrupt, PostgreSQL's
cancel request), the query runs in a worker thread and the main thread waits for it, so
Ctrl-C reaches Python at once and is passed on to the engine. Elsewhere the query runs in
the main thread as before and a helper thread ticks; Ctrl-C then takes effect when the
driver next returns to Python.
"""

from __future__ import annotations

import threading
import time
from typing import TYPE_CHECKING, Any, Callable

from .errors import Interrupted

if TYPE_CHECKING:  # pragma: no cover
    from .engines import Engine, Row
    from .model import Experiment

# (the engine, as "DuckDB (in memory)"; elapsed seconds; the engine's own progress 0-100 or None)
Tick = Callable[[str, float, "float | None"], None]
TICK_SECONDS = 0.1
CANCEL_WAIT_SECONDS = 5.0  # how long a cancelled query may take to give back control


def label(engine: "Engine") -> str:
    """The engine as the progress line names it."""
    from .dialects import get_dialect

    return f"{get_dialect(engine.dialect).title} ({engine.description})"


def _progress(engine: "Engine") -> float | None:
    if engine.progress is None:
        return None
    try:
        return engine.progress()
    except Exception:  # a progress read must never break the run
        return None


def run_watched(engine: "Engine", sql: str, experiment: "Experiment | None" = None,
                on_tick: Tick | None = None) -> list["Row"]:
    """``engine.run(sql, experiment)``, calling ``on_tick`` every TICK_SECONDS meanwhile.

    Raises Interrupted (exit code 130) on Ctrl-C, after cancelling the query on the engine
    where it can be.
    """
    if engine.cancel is None and on_tick is None:
        try:
            return engine.run(sql, experiment)
        except KeyboardInterrupt:
            raise Interrupted(f"interrupted: the query on {engine.description} was stopped") from None
    start = time.monotonic()
    if engine.cancel is not None:
        return _in_worker(engine, sql, experiment, on_tick, start)
    return _with_ticker(engine, sql, experiment, on_tick, start)


def _in_worker(engine: "Engine", sql: str, experiment: Any, on_tick: Tick | None, start: float) -> list["Row"]:
    done = threading.Event()
    outcome: dict[str, Any] = {}

    def work() -> None:
        try:
            outcome["rows"] = engine.run(sql, experiment)
        except BaseException as err:  # handed to the main thread
            outcome["error"] = err
        finally:
            done.set()

    worker = threading.Thread(target=work, name="sqlstat-query", daemon=True)
    worker.start()
    try:
        while not done.wait(TICK_SECONDS):
            if on_tick is not None:
                on_tick(label(engine), time.monotonic() - start, _progress(engine))
    except KeyboardInterrupt:
        try:
            engine.cancel()
        finally:
            done.wait(CANCEL_WAIT_SECONDS)
        raise Interrupted(f"interrupted: the query on {engine.description} was cancelled on the engine "
                          f"after {time.monotonic() - start:.1f} s") from None
    if "error" in outcome:
        raise outcome["error"]
    return outcome["rows"]


def _with_ticker(engine: "Engine", sql: str, experiment: Any, on_tick: Tick, start: float) -> list["Row"]:
    stop = threading.Event()

    def tick() -> None:
        while not stop.wait(TICK_SECONDS):
            on_tick(label(engine), time.monotonic() - start, _progress(engine))

    ticker = threading.Thread(target=tick, name="sqlstat-ticker", daemon=True)
    ticker.start()
    try:
        return engine.run(sql, experiment)
    except KeyboardInterrupt:
        raise Interrupted(f"interrupted: the query on {engine.description} was stopped after "
                          f"{time.monotonic() - start:.1f} s (this driver cannot cancel it on the server; "
                          "closing the connection ends it there)") from None
    finally:
        stop.set()
        ticker.join()


class ProgressLine:
    """The live line on a terminal: engine, elapsed time and the engine's own progress.

    Drawn only after ``delay`` seconds, so quick runs print nothing, and erased when done.
    """

    def __init__(self, stream: Any, delay: float = 0.5) -> None:
        self.stream = stream
        self.delay = delay
        self.drawn = False
        self._lock = threading.Lock()

    def __call__(self, engine: str, elapsed: float, progress: float | None) -> None:
        if elapsed < self.delay:
            return
        text = f"sqlstat: running on {engine} · {elapsed:.1f} s"
        if progress is not None:
            text += f" · {progress:.0f}% (engine's estimate)"
        with self._lock:
            self.stream.write("\r\x1b[K" + text)
            self.stream.flush()
            self.drawn = True

    def clear(self) -> None:
        with self._lock:
            if self.drawn:
                self.stream.write("\r\x1b[K")
                self.stream.flush()
                self.drawn = False
