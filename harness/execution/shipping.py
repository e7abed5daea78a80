"""Data sent to a Dask cluster's workers, and the folders they cache in.

Each distinct data section of the runs is loaded once by the submitter, pinned (its content
digests kept, harness.schema.data DataSource.pinned) and sent once to every worker (a task
carrying it, whose result Dask's `replicate` copies to every worker). A worker trains on
exactly that graph: it reads no data file, so it needs no shared file system and can never
train on another file at the same path. Its caches (k-hop edge sets, compiled kernels) go to a
folder of its own.
"""

from __future__ import annotations

import os
import uuid
import warnings
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

from distributed import Client, Future, get_worker, wait
from pydantic import BaseModel

from harness.data import keep_loaded
from harness.planning import HOP_CACHE_VARIABLE

CACHE_FOLDER = "heedful-cache"  # in a worker's Dask local directory


@dataclass(frozen=True)
class Shipment:
    """One data section, pinned, and its graph as the workers hold it (a Dask future)."""

    section: BaseModel
    graph: Future


def content_of(section: BaseModel) -> str:
    """What tells data sections apart: the same text means the same graph."""
    return section.model_dump_json()


def sent(graph: object) -> object:
    """On a worker: the graph its task carried."""
    return graph


def ship(client: Client, section: BaseModel, graph: object) -> Shipment:
    """The section's graph, loaded here, sent to every worker (one that joins later gets it
    from another worker); the section pinned to what was loaded. The graph is the result of a
    task that carries it, not scattered data: should every worker holding it die, the
    scheduler runs that task again, where scattered data would be lost with its runs."""
    with warnings.catch_warnings():  # a large graph is meant to travel here, once
        warnings.filterwarnings("ignore", message="Sending large graph")
        future = client.submit(sent, graph, key=f"heedful_graph-{uuid.uuid4().hex}")
    wait(future)
    client.replicate([future])
    return Shipment(section.pinned(), future)


def own_cache_folder() -> str:
    """This worker's cache folder: its own HEEDFUL_CACHE, else one in its Dask local
    directory; kept as its HEEDFUL_CACHE so that runs planned on the worker (tuning) use it."""
    worker_folder = Path(get_worker().local_directory) / CACHE_FOLDER
    folder = os.environ.get(HOP_CACHE_VARIABLE) or str(worker_folder)
    os.environ[HOP_CACHE_VARIABLE] = folder
    return folder


def unpack(sections: Iterable[BaseModel], graphs: Iterable[object], own_cache: bool) -> str | None:
    """On a worker, before a task: the shipped graphs become what load_graph gives for their
    sections; with `own_cache`, caches go to the worker's own folder, which is returned (see
    own_cache_folder)."""
    for section, graph in zip(sections, graphs, strict=True):
        keep_loaded(section, graph)
    return own_cache_folder() if own_cache else None
