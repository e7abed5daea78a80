"""Write the example table data: a fictional courier network, Larkspur Couriers.

Nodes are the company's sites (depots, lockers, partner shops); each is tagged with the service
it mostly handles: same_day, next_day or freight. Edges are regular van routes between sites,
mostly inside one of six regions and more often between sites of the same service. Features
describe each site's daily work. A few sites are new and have no tag yet (empty label), and the
route log holds some repeated routes and a few loops, as real exports do. Everything is drawn
from a seeded generator: no real company, place or person is described.

Run from the repository root:  python examples/make_courier_tables.py
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

SEED = 20
SITES = 360
ROUTES = 1500
REGIONS = 6
SERVICES = ["same_day", "next_day", "freight"]
FOLDER = Path(__file__).parent / "courier"


def sites(rng: np.random.Generator) -> tuple[pd.DataFrame, np.ndarray, np.ndarray]:
    service = rng.choice(3, size=SITES, p=[0.3, 0.45, 0.25])
    region = rng.integers(0, REGIONS, SITES)
    # service means: parcels per day, share of oversize parcels, van visits, open hours
    means = np.array([[220, 0.05, 9, 14], [160, 0.12, 5, 10], [60, 0.55, 3, 9]], dtype=float)
    spread = np.array([70, 0.08, 3, 3], dtype=float)
    values = means[service] + rng.standard_normal((SITES, 4)) * spread * 1.6
    frame = pd.DataFrame(
        {
            "site_id": [f"LC-{i:04d}" for i in rng.permutation(SITES) + 1],
            "service": [SERVICES[s] for s in service],
            "site_parcels_per_day": values[:, 0].clip(0).round(1),
            "site_oversize_share": values[:, 1].clip(0, 1).round(3),
            "site_van_visits": values[:, 2].clip(0).round(1),
            "site_open_hours": values[:, 3].clip(1, 24).round(1),
            "region": region,  # a code, not a measurement: left out of the features
        }
    )
    frame.loc[rng.random(SITES) < 0.05, "service"] = None  # newly opened, not yet tagged
    return frame, service, region


def routes(rng: np.random.Generator, service: np.ndarray, region: np.ndarray) -> np.ndarray:
    """Pairs of site positions: 80% inside a region, and same-service pairs favoured."""
    pairs = []
    while len(pairs) < ROUTES:
        a = rng.integers(SITES)
        local = rng.random() < 0.8
        pool = np.flatnonzero(region == region[a]) if local else np.arange(SITES)
        b = rng.choice(pool)
        if a == b and rng.random() < 0.9:  # the log holds a few loops, not many
            continue
        if service[a] == service[b] or rng.random() < 0.35:
            pairs.append((a, b))
    return np.array(pairs)


def main() -> None:
    rng = np.random.default_rng(SEED)
    frame, service, region = sites(rng)
    pairs = routes(rng, service, region)
    ids = frame["site_id"].to_numpy()
    edges = pd.DataFrame(
        {
            "from_site": ids[pairs[:, 0]],
            "to_site": ids[pairs[:, 1]],
            "vans_per_week": rng.integers(1, 15, len(pairs)),
        }
    )
    FOLDER.mkdir(exist_ok=True)
    frame.to_csv(FOLDER / "sites.csv", index=False)
    edges.to_csv(FOLDER / "routes.csv", index=False)
    print(f"wrote {len(frame)} sites and {len(edges)} routes to {FOLDER}")


if __name__ == "__main__":
    main()
