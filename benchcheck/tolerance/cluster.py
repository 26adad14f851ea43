"""Running a study's trials on an existing dask.distributed cluster (``--executor dask``).

The client draws every trial's excursions itself (they depend only on the seed, the sampler
and the trial index), hands batches to the cluster, and takes the finished batches back in
the order they finish (``dask.distributed.as_completed``), so each trial reaches the run file
as soon as its batch is back. Each worker thread builds the evaluator once per layout (from
the layout's text, shipped with every batch, so a worker needs no copy of the file) and runs
its transforms on one thread, as the worker processes of the local pool do. Results are the
same as a local run's: the draw never depends on where or in which order a trial ran.

Needs the optional extra ``benchcheck[cluster]`` (dask[distributed]).
"""

from __future__ import annotations

import hashlib
import threading
from collections.abc import Callable, Sequence
from pathlib import Path

from benchcheck.errors import BenchcheckError
from benchcheck.layout.model import Layout
from benchcheck.tolerance.runfile import TrialRecord
from benchcheck.tolerance.workers import PluginOptions, TrialRunner, build_runner, use_one_fft_thread

__all__ = ["EXECUTORS", "layout_text", "evaluate_batch_on_worker", "run_on_dask"]

#: Where a study's trials run: here or in local worker processes, or on a dask cluster.
EXECUTORS = ("processes", "dask")

#: How long to wait for the scheduler before giving up with one clear message.
CONNECT_TIMEOUT = "20s"

#: Trial runners built on this worker, by (layout hash, plugin options, thread).
_RUNNERS: dict[tuple, TrialRunner] = {}
_RUNNERS_LOCK = threading.Lock()


def layout_text(layout: Layout) -> str:
    """The text of the layout's file, refused when it no longer matches the loaded layout."""
    if not layout.path or not Path(layout.path).is_file():
        raise BenchcheckError("a cluster study ships the layout file's text to the workers; this layout has "
                              "no file (save it first)")
    text = Path(layout.path).read_text(encoding="utf-8")
    if layout.text_hash and hashlib.sha256(text.encode("utf-8")).hexdigest() != layout.text_hash:
        raise BenchcheckError(f"{layout.path} changed since it was loaded; run the study again")
    return text


def _runner_for(text: str, path: str, text_hash: str, plugin_options: PluginOptions) -> TrialRunner:
    key = (text_hash, plugin_options, threading.get_ident())
    with _RUNNERS_LOCK:
        runner = _RUNNERS.get(key)
    if runner is None:
        from benchcheck.evaluate.registries import collect_registries
        from benchcheck.layout.loader import parse_layout
        from benchcheck.plugin_manager import make_plugin_manager

        plugin_manager = make_plugin_manager(disabled=plugin_options.disabled, autoload=plugin_options.autoload)
        registries = collect_registries(plugin_manager)
        layout = parse_layout(text, path, registries.element_types, registries.pattern_fields)
        runner = use_one_fft_thread(build_runner(layout, plugin_manager))
        with _RUNNERS_LOCK:
            _RUNNERS[key] = runner
    return runner


def evaluate_batch_on_worker(text: str, path: str, text_hash: str, plugin_options: PluginOptions,
                             batch: Sequence[tuple[int, dict, dict]]) -> list[TrialRecord]:
    """Evaluate a batch of (index, perturbation, seed record) on a cluster worker.

    The evaluator is built on the first batch a worker thread sees and kept for the next.
    """
    return _runner_for(text, path, text_hash, plugin_options).run_batch(batch)


def run_on_dask(layout: Layout, batches: Sequence[Sequence[tuple[int, dict, dict]]],
                add: Callable[[TrialRecord], None], scheduler, plugin_options: PluginOptions) -> None:
    """Evaluate ``batches`` on the dask cluster at ``scheduler`` and ``add`` each finished trial.

    Parameters
    ----------
    layout : Layout
        The bench (its file's text is shipped to the workers).
    batches : sequence of batches
        Each a list of (trial index, perturbation in SI, seed record), drawn here.
    add : callable
        Called with each finished TrialRecord, in the order batches finish.
    scheduler : str or dask.distributed.Client
        The scheduler's address (``tcp://host:8786``), or a client already connected.
    plugin_options : PluginOptions
        How each worker makes its plugin manager.

    Raises
    ------
    BenchcheckError
        When dask.distributed is not installed, the scheduler cannot be reached, or a
        batch fails on a worker (the message names the error).
    """
    try:
        from dask.distributed import Client, as_completed
    except ImportError:
        raise BenchcheckError("--executor dask needs dask.distributed: "
                              "pip install 'benchcheck[cluster]'") from None
    text = layout_text(layout)
    owns_client = not isinstance(scheduler, Client)
    if owns_client:
        if not scheduler:
            raise BenchcheckError("--executor dask needs --scheduler ADDRESS (for example tcp://10.0.0.5:8786)")
        try:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT)
        except (OSError, TimeoutError) as error:
            raise BenchcheckError(f"cannot reach the dask scheduler at {scheduler} ({error})") from None
    else:
        client = scheduler
    futures = []
    try:
        futures = [client.submit(evaluate_batch_on_worker, text, str(layout.path), layout.text_hash,
                                 plugin_options, list(batch), pure=False) for batch in batches]
        for future in as_completed(futures):
            try:
                records = future.result()
            except BenchcheckError:
                raise
            except Exception as error:  # noqa: BLE001 (a worker's failure arrives as the task's own exception)
                raise BenchcheckError(f"a trial batch failed on the cluster: {type(error).__name__}: {error}") from None
            for record in records:
                add(record)
    finally:
        unfinished = [future for future in futures if not future.done()]
        if unfinished:
            client.cancel(unfinished)
        if owns_client:
            client.close()
