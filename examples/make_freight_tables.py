"""Write the freight example tables: a fictional freight exchange, Cobalt Ridge Exchange.

Nodes are the exchange's members (terminals, warehouses, distributors); each is tagged with
the cargo class it mostly receives: bulk, perishables or parcels. Edges are shipments, each
with its transport mode and weight. A member's contract supply arrives by rail from its one
contract supplier, whose own outgoing cargo class decides what the member receives; spot loads
by road or sea come from any member. A member's features describe what it sends, not what it
receives, so the tag is read from the right neighbour: the one across a rail edge. Everything
is drawn from a seeded generator: no real company, place or person is described.

Run from the repository root:  python examples/make_freight_tables.py
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

SEED = 24
MEMBERS = 400
SPOT_LOADS = 4  # per member
CLASSES = ["bulk", "perishables", "parcels"]
FOLDER = Path(__file__).parent / "freight"


def members(rng: np.random.Generator) -> tuple[pd.DataFrame, np.ndarray]:
    """Members with what they send (their own class) and what they receive (the label)."""
    sends = rng.integers(0, len(CLASSES), MEMBERS)
    supplier = rng.integers(0, MEMBERS, MEMBERS)
    receives = sends[supplier]
    # outgoing profile per class sent: loads per week, mean load in tonnes, cold-chain share
    means = np.array([[12, 28.0, 0.02], [30, 6.0, 0.7], [80, 0.8, 0.05]])
    spread = np.array([6, 6.0, 0.15])
    values = means[sends] + rng.standard_normal((MEMBERS, 3)) * spread
    ids = [f"CR-{i:04d}" for i in rng.permutation(MEMBERS) + 1]
    frame = pd.DataFrame(
        {
            "member_id": ids,
            "receives": [CLASSES[c] for c in receives],
            "sends_loads_per_week": values[:, 0].clip(0).round(1),
            "sends_mean_tonnes": values[:, 1].clip(0.1).round(2),
            "sends_cold_share": values[:, 2].clip(0, 1).round(3),
        }
    )
    return frame, supplier


def shipments(rng: np.random.Generator, ids: list[str], supplier: np.ndarray) -> pd.DataFrame:
    contract = pd.DataFrame(
        {
            "shipper": [ids[s] for s in supplier],
            "consignee": ids,
            "mode": "rail",
            "tonnes": rng.gamma(6.0, 5.0, MEMBERS).round(1),
        }
    )
    count = MEMBERS * SPOT_LOADS
    spot = pd.DataFrame(
        {
            "shipper": [ids[s] for s in rng.integers(0, MEMBERS, count)],
            "consignee": np.repeat(ids, SPOT_LOADS),
            "mode": rng.choice(["road", "sea"], count, p=[0.7, 0.3]),
            "tonnes": rng.gamma(2.0, 4.0, count).round(1),
        }
    )
    both = pd.concat([contract, spot], ignore_index=True)
    return both.sample(frac=1.0, random_state=SEED).reset_index(drop=True)


def main() -> None:
    rng = np.random.default_rng(SEED)
    nodes, supplier = members(rng)
    edges = shipments(rng, list(nodes["member_id"]), supplier)
    FOLDER.mkdir(exist_ok=True)
    for name, table in (("members", nodes), ("shipments", edges)):
        table.to_csv(FOLDER / f"{name}.csv", index=False)
    print(f"wrote {len(nodes)} members and {len(edges)} shipments to {FOLDER}")


if __name__ == "__main__":
    main()
