"""Suite files: malformed input gives one line and exit 2; valid suites expand into paired runs."""

from __future__ import annotations

import hashlib
import shutil
import sqlite3
import tomllib
from pathlib import Path

import pytest

from harness.cli import main
from harness.errors import InputError
from harness.planning import expand, load_suite, parse_suite, read_suite_file

# (id, text to replace in the tiny suite, replacement, fragments the message must contain)
MALFORMED = [
    (
        "toml_syntax",
        "seeds = 2",
        "seeds = 2 2",
        ["TOML syntax error:", "(at line 3, column 11)"],
    ),
    (
        "unknown_top_key",
        "seeds = 2",
        "seed = 2",
        ["(top level): unknown key 'seed' (did you mean 'seeds'?); allowed keys: name,"],
    ),
    (
        "unknown_contender_key",
        "heads = 2",
        "head = 2",
        ["contenders.attention: unknown key 'head' (did you mean 'heads'?); allowed keys:"],
    ),
    (
        "unknown_training_key",
        "learning_rate = 0.02",
        "learning_rte = 0.02",
        ["training: unknown key 'learning_rte' (did you mean 'learning_rate'?)"],
    ),
    (
        "wrong_type_text_for_number",
        "nodes = 120",
        'nodes = "many"',
        ["data.nodes: given 'many' (text); allowed: a number, without quotes"],
    ),
    (
        "wrong_type_boolean_seeds",
        "seeds = 2",
        "seeds = true",
        ["seeds: given true; allowed: a number or text, not true or false"],
    ),
    (
        "wrong_type_fractional_epochs",
        "epochs = 15",
        "epochs = 15.5",
        ["training.epochs: given 15.5; Input should be a valid integer"],
    ),
    (
        "negative_seed_count",
        "seeds = 2",
        "seeds = -3",
        ["seeds: given -3; allowed: a count from 1 to 10000, or a list of seeds"],
    ),
    (
        "repeated_seed_in_list",
        "seeds = 2",
        "seeds = [4, 4]",
        ["seeds: given [4, 4]; allowed: distinct seeds >= 0"],
    ),
    (
        "zero_heads",
        "heads = 2",
        "heads = 0",
        ["contenders.attention.heads: given 0; Input should be greater than or equal to 1"],
    ),
    (
        "homophily_above_one",
        "edge_homophily = 0.8",
        "edge_homophily = 1.5",
        ["data.edge_homophily: given 1.5; Input should be less than or equal to 1"],
    ),
    (
        "homophily_below_zero",
        "edge_homophily = 0.8",
        "edge_homophily = -0.1",
        ["data.edge_homophily: given -0.1; Input should be greater than or equal to 0"],
    ),
    (
        "hidden_width_zero",
        'model = "mlp"\nhidden = 8',
        'model = "mlp"\nhidden = 0',
        ["contenders.features_only.hidden: given 0; Input should be greater than or equal to 1"],
    ),
    (
        "unknown_model_kind",
        'model = "mlp"',
        'model = "recurrent"',
        ["contenders.features_only: Input tag 'recurrent'", "'gat'", "'gcn'", "'mlp'"],
    ),
    (
        "model_kind_missing",
        'model = "mlp"\n',
        "",
        ["contenders.features_only: required key 'model' is missing"],
    ),
    (
        "unknown_metric",
        'metric = "accuracy"',
        'metric = "f1"',
        ["metric: given 'f1'; allowed for task 'node_classification': accuracy, macro_f1, roc_auc"],
    ),
    (
        "split_over_one",
        "train = 0.4",
        "train = 0.5",
        ["split: train + validation + test = 1.1; allowed: at most 1"],
    ),
    (
        "balance_length",
        "graph_seed = 3",
        "graph_seed = 3\nclass_balance = [0.5, 0.5]",
        ["data: class_balance has 2 entries; allowed: one per class (3)"],
    ),
    (
        "class_left_empty",
        'metric = "accuracy"',
        'metric = "roc_auc"',
        [
            "data: class 2 gets 6e-08 of 120 nodes; allowed: nodes and class_balance "
            "that give every class at least one node"
        ],
    ),
]


def malformed_text(tiny_suite_text: str, case_id: str, old: str, new: str) -> str:
    assert old in tiny_suite_text, f"{case_id}: the tiny suite lacks {old!r}"
    text = tiny_suite_text.replace(old, new, 1)
    if case_id == "class_left_empty":
        # the third class gets a vanishing share: only two classes would be present
        text = text.replace("graph_seed = 3", "graph_seed = 3\nclass_balance = [1, 1, 1e-9]")
    return text


def check_fails(path: Path, capsys: pytest.CaptureFixture) -> str:
    """Run `heedful check PATH`; assert exit 2, one line on stderr, nothing on stdout."""
    status = main(["check", str(path)])
    captured = capsys.readouterr()
    assert status == 2
    assert captured.out == ""
    assert "Traceback" not in captured.err
    lines = captured.err.rstrip("\n").split("\n")
    assert len(lines) == 1, captured.err
    assert lines[0].startswith(f"heedful: error: {path}: ")
    return lines[0]


@pytest.mark.parametrize(
    ("case_id", "old", "new", "fragments"), MALFORMED, ids=[c[0] for c in MALFORMED]
)
def test_malformed_suite_one_line_and_exit_2(
    case_id, old, new, fragments, tiny_suite_text, write_suite, capsys
):
    path = write_suite(malformed_text(tiny_suite_text, case_id, old, new), f"{case_id}.toml")
    line = check_fails(path, capsys)
    for fragment in fragments:
        assert fragment in line


def test_missing_suite_file(tmp_path, capsys):
    path = tmp_path / "nowhere.toml"
    assert check_fails(path, capsys) == f"heedful: error: {path}: suite file not found"


def test_empty_contender_table(tiny_suite_text, write_suite, capsys):
    head = tiny_suite_text.split("[contenders.")[0]
    path = write_suite(head + "[contenders]\n", "empty.toml")
    line = check_fails(path, capsys)
    assert line.endswith(f"{path}: contenders: allowed: at least one [contenders.NAME] table")


def test_no_contenders_at_all(tiny_suite_text, write_suite, capsys):
    path = write_suite(tiny_suite_text.split("[contenders.")[0], "none.toml")
    assert check_fails(path, capsys).endswith(f"{path}: contenders: required key is missing")


def test_unreadable_suite_files(tmp_path, capsys):
    folder = tmp_path / "folder.toml"
    folder.mkdir()
    assert check_fails(folder, capsys).endswith("cannot read suite file (IsADirectoryError)")
    binary = tmp_path / "binary.toml"
    binary.write_bytes(b"\xff\xfe\x00name")
    assert check_fails(binary, capsys).endswith("cannot read suite file (UnicodeDecodeError)")


def digest(folder: Path) -> dict[str, str]:
    """Hash of every file under a folder, by relative name."""
    return {
        str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }


def test_failing_commands_leave_the_store_untouched(
    finished_store, tiny_suite_text, write_suite, tmp_path, capsys
):
    """Bad suites given to `run` and `check`, and a bad `show`, change no byte of the store."""
    _, original = finished_store
    folder = tmp_path / "kept"
    folder.mkdir()
    store = folder / "runs.db"
    shutil.copy(original, store)
    with sqlite3.connect(store) as connection:
        rows_before = connection.execute("SELECT * FROM runs ORDER BY key").fetchall()
    before = digest(folder)
    assert len(rows_before) == 6
    for case_id, old, new, _ in MALFORMED[:6]:
        path = write_suite(malformed_text(tiny_suite_text, case_id, old, new), "bad.toml")
        assert main(["run", str(path), "--store", str(store), "--quiet"]) == 2
        assert main(["check", str(path)]) == 2
    assert main(["run", str(tmp_path / "nowhere.toml"), "--store", str(store)]) == 2
    assert digest(folder) == before
    assert main(["show", "no_such_suite", "--store", str(store)]) == 2
    assert "no stored runs for suite 'no_such_suite'" in capsys.readouterr().err
    with sqlite3.connect(store) as connection:
        assert connection.execute("SELECT * FROM runs ORDER BY key").fetchall() == rows_before


def test_toml_syntax_error_names_line_and_column(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text('name = "x"\n\n[data\nsource = "synthetic"\n')
    with pytest.raises(InputError, match=r"broken.toml: TOML syntax error: .*line 3, column 6"):
        read_suite_file(path)


def test_expand_pairs_every_contender_with_every_seed(tiny_suite):
    suite = load_suite(tiny_suite)
    specs = expand(suite)
    assert len(specs) == 3 * 2
    assert {(s.contender, s.seed) for s in specs} == {
        (c, seed) for c in ("attention", "convolution", "features_only") for seed in (0, 1)
    }
    assert len({s.key for s in specs}) == 6
    assert {s.model for s in specs} == {"gat", "gcn", "mlp"}


def test_seed_list_and_training_override(tiny_suite_text):
    import tomllib

    raw = tomllib.loads(tiny_suite_text)
    raw["seeds"] = [11, 3]
    raw["contenders"]["features_only"]["training"] = {"epochs": 4, "learning_rate": 0.1}
    suite = parse_suite(raw, "inline")
    assert suite.seed_list == [11, 3]
    specs = {(s.contender, s.seed): s for s in expand(suite)}
    assert specs["features_only", 3].training.epochs == 4
    assert specs["features_only", 3].training.learning_rate == 0.1
    assert specs["features_only", 3].training.patience == 15  # the suite default is kept
    assert specs["convolution", 3].training.epochs == 15


def test_run_key_hashes_what_determines_the_result(tiny_suite_text):
    """Renaming a suite or contender keeps keys; changing options, data or seed changes them."""
    import tomllib

    raw = tomllib.loads(tiny_suite_text)
    keys = {(s.contender, s.seed): s.key for s in expand(parse_suite(raw, "a"))}
    renamed = dict(raw, name="other_name")
    renamed["contenders"] = {"gcn_renamed": raw["contenders"]["convolution"]}
    again = {s.seed: s.key for s in expand(parse_suite(renamed, "b"))}
    assert again == {0: keys["convolution", 0], 1: keys["convolution", 1]}

    def keys_with(section: str, key: str, value: object) -> set[str]:
        changed = tomllib.loads(tiny_suite_text)
        target = changed
        for part in section.split(".") if section else []:
            target = target[part]
        target[key] = value
        return {s.key for s in expand(parse_suite(changed, "c"))}

    original = set(keys.values())
    assert keys_with("data", "graph_seed", 4).isdisjoint(original)
    assert keys_with("training", "learning_rate", 0.03).isdisjoint(original)
    assert len(keys_with("contenders.convolution", "hidden", 9) & original) == 4
    assert keys_with("", "seeds", [5, 6]).isdisjoint(original)


def test_roc_auc_when_a_test_split_holds_one_class(tmp_path, capsys):
    """A table whose split column puts only class 'parcel' nodes in the test part."""
    rows = ["id,label,weight,volume,part"]
    for index in range(30):
        part = "train" if index < 12 else "validation" if index < 20 else "test"
        label = "parcel" if part == "test" or index % 2 else "letter"
        rows.append(f"depot{index},{label},{index % 7 / 7:.3f},{index % 5 / 5:.3f},{part}")
    (tmp_path / "depots.csv").write_text("\n".join(rows) + "\n")
    routes = ["source,target"] + [f"depot{i},depot{(i + 1) % 30}" for i in range(30)]
    (tmp_path / "routes.csv").write_text("\n".join(routes) + "\n")
    path = tmp_path / "one_class_test.toml"
    path.write_text(
        'name = "depots"\nseeds = 2\nmetric = "roc_auc"\n'
        '[data]\nsource = "tables"\nnodes = "depots.csv"\nedges = "routes.csv"\n'
        'split_column = "part"\n[split]\nmethod = "column"\n'
        '[contenders.features_only]\nmodel = "mlp"\n'
    )
    line = check_fails(path, capsys)
    assert line == (
        f"heedful: error: {path}: metric: 'roc_auc' is not defined when the test split of "
        "seed 0 holds one class; allowed: accuracy or macro_f1, or a larger test split"
    )
    path.write_text(path.read_text().replace('"roc_auc"', '"macro_f1"'))
    assert main(["check", str(path)]) == 0  # the same data is fine for another metric


def test_a_byte_order_mark_before_the_suite_is_accepted(tiny_suite_text, tmp_path):
    """Some Windows editors save UTF-8 with a byte-order mark; it is not part of the TOML."""
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + tiny_suite_text.encode("utf-8"))
    assert load_suite(path) == parse_suite(read_suite_file(path), str(path))
    assert load_suite(path).name == "tiny_couriers"


@pytest.mark.parametrize("name", ["", "a b", "a.b", "a\nb", "x" * 65, "[bold]x", "né"])
def test_names_outside_plain_ascii_are_refused(tiny_suite_text, name):
    """Names become table cells and JUnit class names (split at a dot): plain names only."""
    quoted = name.replace("\n", "\\n")
    for old, new in [
        ('name = "tiny_couriers"', f'name = "{quoted}"'),
        ("[contenders.attention]", f'[contenders."{quoted}"]'),
    ]:
        raw = tomllib.loads(tiny_suite_text.replace(old, new))
        with pytest.raises(InputError, match="allowed: ASCII letters, digits, _ and -, 1 to 64"):
            parse_suite(raw, "suite.toml")


@pytest.mark.parametrize(
    ("old", "new", "where"),
    [
        ("heads = 2", 'heads = "4"', "contenders.attention.heads: given '4' (text)"),
        ("seeds = 2", 'seeds = ["0", "1"]', "seeds: given ['0', '1'] (text)"),
        ("train = 0.4", 'train = "0.4"', "split.train: given '0.4' (text)"),
    ],
)
def test_numbers_given_as_text_are_refused(tiny_suite_text, old, new, where):
    raw = tomllib.loads(tiny_suite_text.replace(old, new))
    with pytest.raises(InputError) as caught:
        parse_suite(raw, "suite.toml")
    assert str(caught.value) == f"suite.toml: {where}; allowed: a number, without quotes"
