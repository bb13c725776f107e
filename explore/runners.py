"""Where tasks run: local processes, or the workers of a Dask distributed cluster.

Both runners take tasks as TOML text and give back result text (:mod:`explore.tasks`),
so a result is the same whichever way it ran. Both keep the same promises:

- a worker that dies loses only the task it was running: that task starts again, up to
  :data:`RETRIES` more times, and is then reported as failed with the reason; the other
  tasks go on;
- an exception raised by a task is its result (reported as failed, not tried again: the
  same text would raise again);
- Ctrl-C (``KeyboardInterrupt``) stops the workers, keeps every result already back and
  re-raises, so the caller can write what is finished.

:class:`LocalRunner` runs one ``concurrent.futures.ProcessPoolExecutor`` with a single
process per job: when a process dies, only its executor breaks, so the task it ran is
known exactly and only that task is lost. :class:`DaskRunner` sends the same tasks to a
scheduler (``pip install 'elbowroom[cluster]'``); the scheduler moves a dead worker's
task elsewhere by itself, and each task tells the runner when it starts (a worker event),
so the runner counts the starts and gives up on a task after its third.
"""
from __future__ import annotations

import os
import signal
import threading
import time
import uuid
from collections import deque
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, field
from typing import Callable, Optional

from router.errors import BoardError

__all__ = ["RETRIES", "RunOutcome", "Interrupted", "LocalRunner", "DaskRunner", "make_runner", "default_jobs"]

#: How many more times a task whose worker died is started before it is reported failed.
RETRIES = 2


def default_jobs() -> int:
    """The cores this process may use (the default of ``--jobs``)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:                       # not on Linux
        return max(1, os.cpu_count() or 1)


@dataclass
class RunOutcome:
    """What one :meth:`run` gave back.

    Attributes
    ----------
    results : task id -> result text, for every task that finished
    failed : task id -> one-line reason, for tasks given up (worker died 1 + RETRIES times,
        or the task raised)
    attempts : task id -> how many times it was started
    interrupted : Ctrl-C stopped the run; tasks in neither dict did not finish
    """
    results: dict = field(default_factory=dict)
    failed: dict = field(default_factory=dict)
    attempts: dict = field(default_factory=dict)
    interrupted: bool = False

    @property
    def retried(self) -> list[str]:
        """Ids of the tasks started more than once."""
        return sorted(k for k, n in self.attempts.items() if n > 1)


def _task_fn():
    from .tasks import run_task_text
    return run_task_text


def _quiet_worker():
    """Worker processes leave Ctrl-C to the main process, which stops them."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _pid() -> int:
    return os.getpid()


class _Slot:
    """One worker process: a ProcessPoolExecutor of one process, so a death breaks only it."""

    def __init__(self, ctx):
        self.ctx = ctx
        self.pid: Optional[int] = None
        self._start()

    def _start(self):
        self.pool = ProcessPoolExecutor(max_workers=1, mp_context=self.ctx, initializer=_quiet_worker)
        self.pid_future = self.pool.submit(_pid)

    def wait_pid(self) -> int:
        self.pid = self.pid_future.result()
        return self.pid

    def restart(self):
        self.pool.shutdown(wait=False, cancel_futures=True)
        self.pid = None
        self._start()

    def stop(self):
        pid = self.pid
        self.pool.shutdown(wait=False, cancel_futures=True)
        if pid is not None:
            try:
                os.kill(pid, signal.SIGTERM)     # our own worker, stopped by its id
            except (ProcessLookupError, PermissionError):
                pass
        self.pool.shutdown(wait=True)


class LocalRunner:
    """Tasks on `jobs` local processes (``concurrent.futures``), each process one task at a time.

    Use as a context manager; the processes live until it closes, so several runs (the
    rounds of ``shrink``) pay for starting them once.

    Parameters
    ----------
    jobs : int
        Worker processes (default: :func:`default_jobs`).
    """

    def __init__(self, jobs: Optional[int] = None):
        import multiprocessing as mp
        self.jobs = default_jobs() if jobs is None else int(jobs)
        if self.jobs < 1:
            raise BoardError(None, "--jobs", f"needs 1 or more processes, not {self.jobs}")
        # forkserver: workers fork from a clean server that has imported the router once, so a
        # replaced worker starts fast and no thread of this process is copied into it
        try:
            ctx = mp.get_context("forkserver")
            ctx.set_forkserver_preload(["explore.warm"])
        except ValueError:
            ctx = mp.get_context("spawn")
        self._ctx = ctx
        self.slots: list[_Slot] = []
        self.where = f"{self.jobs} local process" + ("es" if self.jobs != 1 else "")

    def __enter__(self):
        self.slots = [_Slot(self._ctx) for _ in range(self.jobs)]
        for s in self.slots:
            s.wait_pid()
        return self

    def __exit__(self, *exc):
        self.close()
        return False

    def close(self):
        for s in self.slots:
            s.stop()
        self.slots = []

    def worker_pids(self) -> list[int]:
        return [s.pid for s in self.slots]

    def run(self, tasks: list[tuple[str, str]], fn: Optional[Callable] = None,
            on_start: Optional[Callable] = None, on_result: Optional[Callable] = None,
            on_failed: Optional[Callable] = None) -> RunOutcome:
        """Run `tasks` ((id, text) pairs) and return their outcome.

        Parameters
        ----------
        fn : callable, optional
            A module-level function text -> text (default :func:`explore.tasks.run_task_text`).
        on_start(id, pid) : called when a task starts on a worker process
        on_result(id, text) : called as each result arrives
        on_failed(id, reason) : called when a task is given up
        """
        fn = fn or _task_fn()
        if not self.slots:
            self.__enter__()
        out = RunOutcome()
        queue = deque(tasks)
        running: dict = {}                       # future -> (slot, id, text)
        idle = list(self.slots)
        try:
            while queue or running:
                while queue and idle:
                    slot = idle.pop(0)
                    tid, text = queue.popleft()
                    if slot.pid is None:
                        try:
                            slot.wait_pid()
                        except BrokenProcessPool:
                            slot.restart()
                            slot.wait_pid()
                    out.attempts[tid] = out.attempts.get(tid, 0) + 1
                    running[slot.pool.submit(fn, text)] = (slot, tid, text)
                    if on_start:
                        on_start(tid, slot.pid)
                done, _ = wait(list(running), timeout=0.5, return_when=FIRST_COMPLETED)
                for fut in done:
                    slot, tid, text = running.pop(fut)
                    try:
                        res = fut.result()
                    except BrokenProcessPool:
                        slot.restart()
                        if out.attempts[tid] <= RETRIES:
                            queue.appendleft((tid, text))
                        else:
                            out.failed[tid] = (f"its worker process died {out.attempts[tid]} times "
                                               f"(tried {out.attempts[tid]} times)")
                            if on_failed:
                                on_failed(tid, out.failed[tid])
                    except Exception as exc:   # the task raised: its own result, not a worker's death
                        out.failed[tid] = f"{type(exc).__name__}: {exc}"
                        if on_failed:
                            on_failed(tid, out.failed[tid])
                    else:
                        out.results[tid] = res
                        if on_result:
                            on_result(tid, res)
                    idle.append(slot)
        except KeyboardInterrupt:
            out.interrupted = True
            self.close()
            raise Interrupted(out) from None
        return out


class Interrupted(KeyboardInterrupt):
    """Ctrl-C during a run; carries what had finished."""

    def __init__(self, outcome: RunOutcome):
        super().__init__()
        self.outcome = outcome


def _dask_call(fn, text: str, topic: str, tid: str) -> str:
    """On a Dask worker: say that task `tid` starts (an event to the client), then run it."""
    from distributed import get_worker
    w = get_worker()
    w.log_event(topic, {"task": tid, "worker": w.address, "pid": os.getpid()})
    return fn(text)


class DaskRunner:
    """Tasks on the workers of a Dask distributed scheduler at `address`.

    Every worker needs elbowroom installed (the same version: results of another version
    are refused by the caller). No shared disk is needed: tasks and results travel as text.

    Parameters
    ----------
    address : str
        The scheduler, e.g. ``tcp://10.0.0.5:8786``.
    timeout : float
        Seconds to wait for the scheduler to answer.
    """

    def __init__(self, address: str, timeout: float = 20.0):
        try:
            import distributed  # noqa: F401
        except ImportError:
            raise BoardError(None, "--cluster", "needs the cluster extra: pip install 'elbowroom[cluster]'") \
                from None
        self.address = address
        self.timeout = timeout
        self.client = None
        self.where = f"the Dask scheduler at {address}"

    def __enter__(self):
        from distributed import Client
        try:
            self.client = Client(self.address, timeout=self.timeout, set_as_default=False)
        except (OSError, TimeoutError) as exc:
            raise BoardError(None, "--cluster", f"no Dask scheduler answers at {self.address} ({exc}); "
                             "start one (dask scheduler) or check the address") from None
        n = len(self.client.scheduler_info().get("workers", {}))
        self.where = f"the Dask scheduler at {self.address} ({n} worker{'s' if n != 1 else ''})"
        return self

    def __exit__(self, *exc):
        self.close()
        return False

    def close(self):
        if self.client is not None:
            self.client.close()
            self.client = None

    def worker_pids(self) -> dict:
        """Worker address -> process id."""
        return self.client.run(os.getpid)

    def run(self, tasks: list[tuple[str, str]], fn: Optional[Callable] = None,
            on_start: Optional[Callable] = None, on_result: Optional[Callable] = None,
            on_failed: Optional[Callable] = None) -> RunOutcome:
        """As :meth:`LocalRunner.run`; ``on_start(id, worker_address)``."""
        fn = fn or _task_fn()
        if self.client is None:
            self.__enter__()
        client = self.client
        run_id = uuid.uuid4().hex[:12]
        topic = f"elbowroom-starts-{run_id}"
        starts: deque = deque()
        lock = threading.Lock()

        def heard(event):
            _, msg = event
            with lock:
                starts.append(msg)

        client.subscribe_topic(topic, heard)
        out = RunOutcome()
        texts = dict(tasks)
        futures: dict = {}                       # future -> task id
        resubmits: dict = {}

        def submit(tid):
            n = resubmits.get(tid, 0)
            key = f"elbowroom-{run_id}-{tid}-{n}"
            futures[client.submit(_dask_call, fn, texts[tid], topic, tid, key=key, pure=False)] = tid

        for tid, _ in tasks:
            submit(tid)
        try:
            while futures:
                with lock:
                    heard_now = list(starts)
                    starts.clear()
                for msg in heard_now:
                    tid = msg["task"]
                    if tid in out.results or tid in out.failed or tid not in texts:
                        continue
                    out.attempts[tid] = out.attempts.get(tid, 0) + 1
                    if on_start:
                        on_start(tid, msg.get("worker"))
                    if out.attempts[tid] > 1 + RETRIES:   # its workers died 1 + RETRIES times
                        for f, t in list(futures.items()):
                            if t == tid:
                                f.cancel()
                                del futures[f]
                        out.failed[tid] = (f"its worker died {out.attempts[tid] - 1} times "
                                           f"(tried {out.attempts[tid] - 1} times)")
                        if on_failed:
                            on_failed(tid, out.failed[tid])
                finished = [f for f in futures if f.status in ("finished", "error", "cancelled", "lost")]
                for f in finished:
                    tid = futures.pop(f)
                    if f.status == "finished":
                        res = f.result()
                        out.results[tid] = res
                        out.attempts[tid] = max(1, out.attempts.get(tid, 0))
                        if on_result:
                            on_result(tid, res)
                        continue
                    exc = f.exception() if f.status == "error" else None
                    if exc is not None and type(exc).__name__ == "KilledWorker" and \
                            out.attempts.get(tid, 1) <= RETRIES:
                        # the scheduler gave up on it sooner than we do: start it again ourselves
                        resubmits[tid] = resubmits.get(tid, 0) + 1
                        submit(tid)
                        continue
                    if exc is not None and type(exc).__name__ == "KilledWorker":
                        reason = f"its worker died {max(1, out.attempts.get(tid, 1))} times"
                    elif exc is not None:
                        reason = f"{type(exc).__name__}: {exc}"
                    else:
                        reason = f"the scheduler dropped it ({f.status})"
                    out.failed[tid] = reason
                    if on_failed:
                        on_failed(tid, reason)
                if futures and not finished:
                    time.sleep(0.05)
        except KeyboardInterrupt:
            out.interrupted = True
            client.cancel(list(futures))
            raise Interrupted(out) from None
        finally:
            try:
                client.unsubscribe_topic(topic)
            except Exception:                    # the client may be closing already
                pass
        return out


def make_runner(jobs: Optional[int] = None, cluster: Optional[str] = None):
    """The runner the command line asked for: a Dask cluster when `cluster` is given, else
    `jobs` local processes."""
    if cluster:
        return DaskRunner(cluster)
    return LocalRunner(jobs)
