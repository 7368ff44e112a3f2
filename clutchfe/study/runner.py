"""Run a study on a Dask cluster: a LocalCluster sized to the machine, or an existing scheduler.

The process that runs the study owns the store; workers only return results.
Each finished chunk of samples is stored at once, so an interrupted study keeps
everything finished and a restart plans only the rest.
"""
from __future__ import annotations

import contextlib
import hashlib
import json
import logging
import math
import os
import time
from collections import defaultdict
from pathlib import Path

from rich.console import Console
from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

from ..case import CaseError
from ..output.folders import check_output_folder, folder_lock, write_marker
from .evaluate import failure_reason, group_key, sample_case, solve_chunk
from .limits import find_limit
from .sampling import plan
from .spec import Study, load_study
from .store import SampleStore

STORE_NAME = "samples.sqlite"
# what a study folder may hold besides the files it lists: the database and its journal,
# and the scratch copy of a file being replaced when a run was killed
STUDY_ENTRIES = (STORE_NAME + "*", ".*.writing-*")
# Per sample chunk: small enough that a lost worker costs little and the bar moves,
# large enough that scheduling overhead stays below the ~5 ms contact solve.
MAX_CHUNK = 40
# Memory a worker needs for the default demo meshes plus headroom (measured peak ~0.4 GB).
WORKER_MEMORY = 1.0e9


def run_study(path, workers: int | None = None, scheduler: str | None = None, console: Console | None = None,
              out=None) -> dict:
    """Run (or continue) the study of a study file; returns the summary written to study.json."""
    from .report import write_results

    study = load_study(path)
    console = console or Console()
    folder = Path(out) if out is not None else Path("results") / study.name
    samples = plan(study)
    inputs = dict(samples)
    # a study folder grows sample by sample (that is what makes a restart cheap), so it is
    # not replaced whole: it must be new, empty or a clutchfe study folder, and is marked at once
    check_output_folder(folder)
    with folder_lock(folder):
        folder.mkdir(parents=True, exist_ok=True)
        write_marker(folder, "study", extra=STUDY_ENTRIES)
        store = SampleStore(folder / STORE_NAME, fingerprint(study, samples), len(samples))
        t0 = time.perf_counter()
        try:
            finished = store.finished_ids()
            jobs, invalid = _classify(study, [(i, ov) for i, ov in samples if i not in finished])
            store.add(invalid, inputs)
            run = {"resumed_with": len(finished), "invalid_inputs": len(invalid)}
            if jobs or (study.limit and store.meta("limit") is None):
                run.update(_dispatch(study, jobs, inputs, store, workers, scheduler, console))
            run["seconds"] = time.perf_counter() - t0
            summary = write_results(folder, study, store, run, console)
        finally:
            store.close()
        write_marker(folder, "study", extra=STUDY_ENTRIES)
        return summary


def fingerprint(study: Study, samples: list) -> str:
    """Identity of the plan: the base case as read and every sample's inputs."""
    text = json.dumps({"base": study.base_data, "plan": samples}, sort_keys=True, default=str)
    return hashlib.sha256(text.encode()).hexdigest()


def _classify(study: Study, todo: list) -> tuple[list, list]:
    """Jobs (id, overrides, group key) for valid samples; failure records for invalid ones."""
    jobs, invalid = [], []
    for sample_id, overrides in todo:
        try:
            case = sample_case(study.base_data, overrides, study.base_case.name)
        except CaseError as exc:
            invalid.append({"sample_id": sample_id, "status": "failed", "outputs": None,
                            "reason": failure_reason(exc), "seconds": 0.0, "worker": "planner"})
            continue
        jobs.append((sample_id, overrides, group_key(case)))
    return jobs, invalid


def chunks_of(jobs: list, workers: int) -> list[list]:
    """Jobs of one group together, split so every worker gets several chunks."""
    groups = defaultdict(list)
    for job in jobs:
        groups[job[2]].append(job)
    size = max(1, min(MAX_CHUNK, math.ceil(len(jobs) / (4 * max(workers, 1)))))
    return [members[k:k + size] for members in groups.values() for k in range(0, len(members), size)]


def local_workers(requested: int | None) -> int:
    if requested is not None:
        if requested < 1:
            raise CaseError([f"--workers = {requested}: allowed: a whole number ≥ 1"])
        return requested
    import psutil
    by_memory = int(psutil.virtual_memory().available // WORKER_MEMORY)
    return max(1, min(os.cpu_count() or 1, by_memory))


@contextlib.contextmanager
def cluster(workers: int | None, scheduler: str | None):
    """A dask Client: on the given scheduler, or on a LocalCluster closed on exit."""
    from distributed import Client, LocalCluster
    if scheduler:
        try:
            client = Client(scheduler, timeout="20s")
        except (OSError, TimeoutError, ValueError) as exc:
            raise CaseError([f"--scheduler = {scheduler!r}: cannot connect ({exc}); allowed: the address of a "
                             "running dask scheduler, e.g. tcp://scheduler-host:8786"]) from None
        with client:
            yield client
        return
    n = local_workers(workers)
    with LocalCluster(n_workers=n, threads_per_worker=1, processes=True, dashboard_address=None,
                      silence_logs=logging.ERROR) as lc, Client(lc) as client:
        yield client


def _dispatch(study: Study, jobs: list, inputs: dict, store: SampleStore, workers, scheduler, console) -> dict:
    from distributed import as_completed

    payload = {"base_data": study.base_data, "name": study.base_case.name}
    with cluster(workers, scheduler) as client:
        n_workers = max(1, len(client.scheduler_info()["workers"]))
        chunks = chunks_of(jobs, n_workers)
        futures = {client.submit(solve_chunk, payload, chunk, pure=False): chunk for chunk in chunks}
        limit_future = None
        if study.limit and store.meta("limit") is None:
            lim = study.limit
            limit_future = client.submit(find_limit, payload, {"key": lim.key, "low": lim.low, "high": lim.high,
                                                               "criterion": lim.criterion, "steps": lim.steps},
                                         pure=False)
        lost = 0
        with _bar(console, len(jobs)) as bar:
            for future in as_completed(list(futures)):
                try:
                    records = future.result()
                except Exception as exc:  # noqa: BLE001 - a lost worker or scheduler: retried on the next run
                    lost += len(futures[future])
                    console.print(f"[yellow]{len(futures[future])} samples not finished ({type(exc).__name__}); "
                                  "run the study again to finish them[/]")
                    continue
                store.add(records, inputs)
                bar.advance(records)
        if limit_future is not None:
            try:
                store.set_meta("limit", limit_future.result())
            except Exception as exc:  # noqa: BLE001
                console.print(f"[yellow]tolerance limit not found ({type(exc).__name__}: {exc})[/]")
    return {"workers": n_workers, "chunks": len(chunks), "solver_groups": len({j[2] for j in jobs}),
            "samples_lost": lost, "scheduler": scheduler or "local"}


class _bar:
    """Progress bar: done, failed, remaining and the rate of this run.  On a console that is not a
    terminal (output piped or redirected, where rich draws no bar) one plain line per finished chunk."""

    def __init__(self, console: Console, total: int):
        self.total, self.done, self.failed = total, 0, 0
        self.console, self.plain = console, not console.is_terminal
        self.progress = None if self.plain else Progress(
            TextColumn("study"), BarColumn(), TextColumn("{task.fields[counts]}"), TimeElapsedColumn(),
            console=console, transient=False)
        self.start = time.perf_counter()

    def __enter__(self):
        if self.plain:
            self._line(f"{self.total} samples to solve")
            return self
        self.progress.__enter__()
        self.task = self.progress.add_task("samples", total=max(self.total, 1), counts=self._counts())
        return self

    def __exit__(self, *exc):
        return False if self.plain else self.progress.__exit__(*exc)

    def _line(self, text: str) -> None:
        self.console.print(f"clutchfe: study: {text}", markup=False, highlight=False, soft_wrap=True)

    def _counts(self) -> str:
        rate = (self.done + self.failed) / max(time.perf_counter() - self.start, 1e-9)
        remaining = self.total - self.done - self.failed
        return f"{self.done} done · {self.failed} failed · {remaining} remaining · {rate:.1f} samples/s"

    def advance(self, records: list[dict]) -> None:
        self.failed += sum(r["status"] == "failed" for r in records)
        self.done += sum(r["status"] == "done" for r in records)
        if self.plain:
            self._line(self._counts())
            return
        self.progress.update(self.task, advance=len(records), counts=self._counts())
