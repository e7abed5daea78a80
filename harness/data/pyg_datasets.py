"""PyG datasets named in a suite: only classes on the schema's allow-list, under a local root.

With `download = false` a dataset whose files are missing is an error that lists the files
PyG expects and the folder it expects them in; nothing is fetched. A `name` that PyG checks
itself (schema.data.NAME_CHECKED_BY_PYG) is passed through, and PyG's failure is one line too.
"""

from __future__ import annotations

import pickle
import zipfile

import numpy as np
import torch
import torch_geometric.datasets
from torch_geometric.data import Data

from harness.data.assemble import assemble
from harness.data.pyg_folder import check_folder, record_folder
from harness.errors import InputError
from harness.schema.data import PYG_DATASETS, PygData


class _FilesMissing(Exception):
    def __init__(self, folder: str, files: list[str]) -> None:
        super().__init__(folder)
        self.folder, self.files = folder, files


def _refuse_download(self: torch_geometric.data.Dataset) -> None:
    names = self.raw_file_names
    names = [names] if isinstance(names, str) else list(names)
    raise _FilesMissing(self.raw_dir, names)


def open_dataset(spec: PygData) -> torch_geometric.data.Dataset:
    """The PyG dataset object; downloads only when the suite allows it."""
    if spec.dataset not in PYG_DATASETS:  # the schema already refuses these; never import them
        raise InputError(f"data.dataset: {spec.dataset!r} is not on the allow-list")
    dataset_class = getattr(torch_geometric.datasets, spec.dataset)
    if spec.dataset == "KarateClub":
        return dataset_class()  # built into PyG, no files
    if not spec.download:
        dataset_class = type(
            dataset_class.__name__,
            (dataset_class,),
            {"download": _refuse_download, "process": dataset_class.process},
        )
    arguments = {"root": spec.root} if spec.name is None else {"root": spec.root, "name": spec.name}
    if not spec.trusted:
        check_folder(spec.root)
    try:
        dataset = dataset_class(**arguments)
    except _FilesMissing as missing:
        raise InputError(
            f"data: {spec.dataset}{f' {spec.name!r}' if spec.name else ''} files missing and "
            f"download is off; expected {', '.join(missing.files)} in {missing.folder}; allowed: "
            "place the files there or set data.download = true"
        ) from None
    # empty or corrupt files fail inside PyG in many ways; each is one line
    except (
        AssertionError,
        EOFError,
        IndexError,
        KeyError,
        OSError,
        RuntimeError,
        TypeError,
        ValueError,
        pickle.UnpicklingError,
        zipfile.BadZipFile,
    ) as error:
        first_line = str(error).splitlines()[0] if str(error) else error.__class__.__name__
        raise InputError(
            f"data: cannot load {spec.dataset} from {spec.root}: {first_line}"
        ) from None
    record_folder(spec.root)
    return dataset


def _split_part(graph: Data) -> np.ndarray | None:
    """Split masks as one integer per node (0 train, 1 validation, 2 test, -1 none), or None.

    Masks with several columns give a (nodes, columns) array; the splitter picks a column.
    """
    masks = [getattr(graph, name, None) for name in ("train_mask", "val_mask", "test_mask")]
    if any(mask is None for mask in masks):
        return None
    stacked = torch.stack([m if m.dim() == 2 else m.unsqueeze(1) for m in masks])
    part = torch.full(stacked.shape[1:], -1, dtype=torch.long)
    for index in (2, 1, 0):
        part[stacked[index]] = index
    return part.numpy()


def load_pyg(spec: PygData) -> Data:
    """The first graph of the dataset, cleaned like every other source."""
    graph = open_dataset(spec)[0]
    labels = graph.y.numpy()
    if labels.ndim != 1:
        raise InputError(
            f"data: {spec.dataset} has {labels.shape[1]} labels per node; allowed: one class "
            "per node (single-label node classification)"
        )
    edges = graph.edge_index.numpy()
    data = assemble(
        graph.x.float().numpy(),
        edges[0],
        edges[1],
        labels,
        unordered_repeats=False,
        split_part=_split_part(graph),
    )
    data.split_origin = f"data: {spec.dataset} split masks"
    return data
