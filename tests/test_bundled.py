"""Bundled open data and PyG datasets: shapes, the graph contract, and the allow-list."""

from __future__ import annotations

from pathlib import Path

import pytest
import torch

from harness.data import load_graph
from harness.errors import InputError
from harness.planning import parse_suite
from harness.schema.data import DigitsData, KarateData


def pyg_section(tmp_path: Path, **data: object):
    raw = {"name": "p", "data": {"source": "pyg", **data}, "contenders": {"c": {"model": "mlp"}}}
    return parse_suite(raw, str(tmp_path / "suite.toml")).data


def check_contract(data) -> None:
    assert data.x.dtype == torch.float32
    assert data.y.dtype == torch.long
    assert data.is_undirected()
    assert not bool((data.edge_index[0] == data.edge_index[1]).any())
    assert data.edge_index.size(1) == torch.unique(data.edge_index, dim=1).size(1)


def test_karate_follows_the_graph_contract() -> None:
    data = load_graph(KarateData(source="karate"))
    check_contract(data)
    assert data.x.shape == (34, 34)
    assert data.class_names == ["Mr. Hi", "Officer"]


def test_digits_graph_has_every_image_and_at_least_k_neighbours() -> None:
    data = load_graph(DigitsData(source="digits", neighbours=5))
    check_contract(data)
    assert data.num_nodes == 1797 and data.x.shape[1] == 64
    assert float(data.x.max()) <= 1.0
    degrees = torch.bincount(data.edge_index[1], minlength=data.num_nodes)
    assert int(degrees.min()) >= 5  # each image keeps its own 5 neighbours after symmetrising


def test_pyg_karate_club_needs_no_files(tmp_path: Path) -> None:
    data = load_graph(pyg_section(tmp_path, dataset="KarateClub"))
    check_contract(data)
    assert data.num_nodes == 34 and len(data.class_names) == 4


def test_pyg_class_outside_the_allow_list(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"data.dataset: given 'os'; Input should be 'KarateClub'"):
        pyg_section(tmp_path, dataset="os")


def test_pyg_name_must_fit_the_class(tmp_path: Path) -> None:
    with pytest.raises(
        InputError, match=r"name 'Books' is not one of Amazon's; allowed: Computers"
    ):
        pyg_section(tmp_path, dataset="Amazon", name="Books")


def test_planetoid_needs_a_name_that_can_be_a_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"data: name None for Planetoid; allowed: a dataset"):
        pyg_section(tmp_path, dataset="Planetoid")
    with pytest.raises(InputError, match=r"name '\.\./up' for Planetoid; allowed: .*\(letters"):
        pyg_section(tmp_path, dataset="Planetoid", name="../up")


def test_missing_pyg_files_with_download_off_lists_them(tmp_path: Path) -> None:
    section = pyg_section(
        tmp_path, dataset="HeterophilousGraphDataset", name="Minesweeper", root="store"
    )
    with pytest.raises(InputError) as caught:
        load_graph(section)
    message = str(caught.value)
    assert "download is off" in message
    assert "expected minesweeper.npz in " in message
    assert str(tmp_path / "store" / "minesweeper" / "raw") in message
    assert "data.download = true" in message
    assert "\n" not in message


def test_planetoid_name_goes_to_pyg_and_its_failure_is_one_line(tmp_path: Path) -> None:
    # an invented name: PyG's class takes it and looks for its files, which are not there
    section = pyg_section(tmp_path, dataset="Planetoid", name="Larkspur", root="store")
    with pytest.raises(InputError) as caught:
        load_graph(section)
    message = str(caught.value)
    assert message.startswith("data: Planetoid 'Larkspur' files missing and download is off")
    assert "ind.larkspur.x" in message and "ind.larkspur.graph" in message
    assert str(tmp_path / "store" / "Larkspur" / "raw") in message
