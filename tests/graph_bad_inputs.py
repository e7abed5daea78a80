"""Bad input of graph classification suites, for the standing catalogue
(tests/test_bad_input_catalogue.py): suites, molecule files and graph tables that must each be
refused with one line naming the key, file or row, exit status 2 and no store changed."""

from __future__ import annotations

from tests.graph_files import SMILES

# a fictional dye works screening candidate molecules
GRAPH_SUITE = """\
name = "dye_screen"
seeds = 1
task = "graph_classification"
[data]
source = "molecules"
file = "dyes.csv"
[training]
epochs = 2
[contenders.isomorphism]
model = "gin"
hidden = 8
"""
MOLECULES = "smiles,label\n" + "".join(
    f"{smiles},{'ring' if any(c.isdigit() for c in smiles) else 'chain'}\n" for smiles in SMILES
)
GRAPH_NODES = "graph,id,f\n" + "".join(f"g{g},n{i},1\n" for g in range(4) for i in range(3))
GRAPH_EDGES = "graph,source,target\n" + "".join(f"g{g},n0,n1\ng{g},n1,n2\n" for g in range(4))
GRAPH_LIST = "graph,label\n" + "".join(f"g{g},{'ab'[g % 2]}\n" for g in range(4))
GRAPH_TABLES = """\
[data]
source = "graph_tables"
nodes = "nodes.csv"
edges = "edges.csv"
graphs = "graphs.csv"
"""


def graph_case(name: str, names: str, old: str = "", new: str = "", **files: str):
    """`check` of the dye-screen suite with one edit (`old` -> `new`, or `new` appended)."""
    from tests.test_bad_input_catalogue import Bad

    text = GRAPH_SUITE.replace(old, new, 1) if old else GRAPH_SUITE + new
    written = {"dyes.csv": MOLECULES, "suite.toml": text}
    written |= {key.replace("_", "."): value for key, value in files.items()}
    return Bad(name, ("check", "{suite}"), names, written)


def tables_case(name: str, names: str, **files: str):
    """`check` of the suite on three graph tables (`files` replace them)."""
    data = GRAPH_SUITE[GRAPH_SUITE.index("[data]") : GRAPH_SUITE.index("[training]")]
    tables = {"nodes_csv": GRAPH_NODES, "edges_csv": GRAPH_EDGES, "graphs_csv": GRAPH_LIST}
    return graph_case(name, names, data, GRAPH_TABLES, **(tables | files))


def graph_cases() -> list:
    return [
        graph_case(
            "graph_task_on_one_graph",
            "data: source 'karate' gives one graph, which is for task = node_classification",
            'source = "molecules"\nfile = "dyes.csv"',
            'source = "karate"',
        ),
        graph_case(
            "node_task_on_molecules",
            "data: source 'molecules' gives many graphs, which is for task = "
            "graph_classification; this suite's task is 'node_classification'",
            'task = "graph_classification"',
            'task = "node_classification"',
        ),
        graph_case(
            "graph_per_class_split",
            "split: method 'per_class' is for node classification; allowed for graph "
            "classification: fractions, column, scaffold, size",
            new='[split]\nmethod = "per_class"\n',
        ),
        graph_case(
            "graph_sampled_batches",
            'training.batching: given "sampled"; sampled batches are not extended to graph '
            "classification",
            "epochs = 2",
            'epochs = 2\nbatching = "sampled"\nfanout = "all"',
        ),
        graph_case(
            "graph_homophily_map",
            "homophily_map: not available for graph classification",
            new="[homophily_map]\n",
        ),
        graph_case(
            "graph_inductive_setting",
            "setting: given 'inductive'; not used by graph classification",
            "seeds = 1",
            'seeds = 1\nsetting = "inductive"',
        ),
        graph_case(
            "graph_laplacian_start",
            "contenders: isomorphism.feature_start: given 'laplacian'",
            "hidden = 8",
            'hidden = 8\nfeature_start = "laplacian"',
        ),
        graph_case(
            "graph_identity_start_in_ablation",
            "ablation: isomorphism.axes.feature_start: given 'identity'",
            new='[ablation.isomorphism.axes]\nfeature_start = ["constant", "identity"]\n',
        ),
        graph_case(
            "graph_degree_edges",
            "analysis: degree_edges groups the nodes of one graph",
            new="[analysis]\ndegree_edges = [2, 4]\n",
        ),
        graph_case(
            "graph_link_table",
            "link: [link] is for task = 'link_prediction'",
            new="[link]\nhits_k = 5\n",
        ),
        graph_case(
            "graph_batch_size_zero",
            "graphs.batch_size: given 0",
            new="[graphs]\nbatch_size = 0\n",
        ),
        graph_case(
            "graph_unparsable_smiles",
            "dyes.csv: row 3 (line 4): column 'smiles' holds SMILES 'C1CC((' that RDKit "
            "cannot parse",
            dyes_csv=MOLECULES.replace("CC(C)O,", "C1CC((,", 1),
        ),
        graph_case(
            "graph_empty_label",
            "dyes.csv: row 2 (line 3): column 'label' is empty",
            dyes_csv=MOLECULES.replace("CCCO,chain", "CCCO,", 1),
        ),
        graph_case(
            "graph_smiles_column_missing",
            "dyes.csv: column 'structure' (data.smiles_column) not found",
            'file = "dyes.csv"',
            'file = "dyes.csv"\nsmiles_column = "structure"',
        ),
        graph_case(
            "graph_scaffold_split_without_molecules",
            "split.method: 'scaffold' needs molecules",
            suite_toml=GRAPH_SUITE.replace(
                'source = "molecules"\nfile = "dyes.csv"',
                'source = "synthetic_graphs"\ngraphs = 40',
            )
            + '[split]\nmethod = "scaffold"\n',
        ),
        tables_case(
            "graph_tables_edge_into_another_graph",
            "edges.csv: row 2 (line 3): target 'n9' is not a node of graph 'g0'",
            edges_csv=GRAPH_EDGES.replace("g0,n1,n2", "g0,n1,n9", 1),
        ),
        tables_case(
            "graph_tables_unknown_graph",
            "nodes.csv: row 1 (line 2): graph 'g7' (column 'graph') is not in the graphs table",
            nodes_csv=GRAPH_NODES.replace("g0,n0", "g7,n0", 1),
        ),
        tables_case(
            "graph_tables_graph_without_nodes",
            "graphs.csv: row 5 (line 6): graph 'g4' has no nodes",
            graphs_csv=GRAPH_LIST + "g4,a\n",
        ),
        graph_case(
            "motif_balance_length",
            "data: class_balance has 2 entries; allowed: one per motif (4)",
            'source = "molecules"\nfile = "dyes.csv"',
            'source = "synthetic_graphs"\nclass_balance = [1, 2]',
        ),
        graph_case(
            "readout_on_a_node_suite",
            "contenders: isomorphism.readout pools whole graphs, not used by node classification",
            suite_toml=(
                'name = "depots"\n[data]\nsource = "karate"\n[contenders.isomorphism]\n'
                'model = "gin"\nreadout = "sum"\n'
            ),
        ),
    ]
