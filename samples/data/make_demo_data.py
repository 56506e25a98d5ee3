"""Make the INVENTED demo data for ``samples/wellness.dag``.

Nothing here was measured: the numbers are drawn by a computer from a
linear-Gaussian structural equation model of a made-up staff wellness
programme, so that ``dagward independencies --data`` has something to chew on.

Diagram (``motivation`` is unmeasured, so it is simulated but left out of the
CSV files)::

    age -> enrolled, sick_days
    fitness_base -> enrolled, fitness_12m
    motivation -> enrolled, fitness_12m
    enrolled -> fitness_12m -> sick_days
    shift_work -> sick_days, fitness_base

Each variable is the weighted sum of its parents plus standard normal noise,
rescaled to unit variance (weights in ``ARROWS``), then put on a readable
scale (``SCALES``: mean and standard deviation, e.g. age in years) and rounded.
``enrolled`` is a continuous participation score (sessions attended, on
average), ``shift_work`` the share of night shifts in percent: the model is
linear-Gaussian throughout, which is what makes the Markov check exact.

Files (seed 20240611, n = 2,000 rows each):

* ``wellness_consistent.csv`` -- drawn from the diagram. 25 cells of
  ``fitness_12m`` are blanked completely at random to show complete-case
  handling; every implied independence holds in the population.
* ``wellness_extra_arrow.csv`` -- drawn from the diagram plus the arrow
  ``shift_work -> enrolled`` (weight 0.35) that the diagram leaves out. It
  breaks the implied independence ``shift_work ⫫ enrolled | fitness_base``.

Run from the repository root: ``python samples/data/make_demo_data.py``.
"""

from __future__ import annotations

import sys
from pathlib import Path

import networkx as nx
import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent.parent))

from dagward.fileio import write_atomic  # noqa: E402
from dagward.stats import simulate_linear_gaussian  # noqa: E402

SEED = 20240611
N = 2000

ARROWS: dict[tuple[str, str], float] = {
    ("age", "enrolled"): -0.30,
    ("age", "sick_days"): 0.35,
    ("fitness_base", "enrolled"): 0.30,
    ("fitness_base", "fitness_12m"): 0.55,
    ("motivation", "enrolled"): 0.45,
    ("motivation", "fitness_12m"): 0.25,
    ("enrolled", "fitness_12m"): 0.35,
    ("fitness_12m", "sick_days"): -0.40,
    ("shift_work", "sick_days"): 0.30,
    ("shift_work", "fitness_base"): -0.30,
}
EXTRA_ARROW = ("shift_work", "enrolled")
EXTRA_WEIGHT = 0.35

UNMEASURED = {"motivation"}
COLUMNS = ["age", "shift_work", "fitness_base", "enrolled", "fitness_12m", "sick_days"]
# name: (mean, standard deviation, decimals) of the readable scale
SCALES = {
    "age": (42.0, 10.0, 0),
    "shift_work": (25.0, 8.0, 1),
    "fitness_base": (38.0, 6.0, 1),
    "enrolled": (12.0, 4.0, 1),
    "fitness_12m": (39.0, 6.0, 1),
    "sick_days": (8.0, 3.0, 1),
}
MISSING_CELLS = 25


def diagram(extra: bool) -> nx.DiGraph:
    graph = nx.DiGraph(list(ARROWS))
    if extra:
        graph.add_edge(*EXTRA_ARROW)
    return graph


def draw(extra: bool, seed: int) -> dict[str, np.ndarray]:
    weights = dict(ARROWS)
    if extra:
        weights[EXTRA_ARROW] = EXTRA_WEIGHT
    values = simulate_linear_gaussian(diagram(extra), N, seed, coefficients=weights)
    out = {}
    for name in COLUMNS:
        mean, sd, decimals = SCALES[name]
        out[name] = np.round(mean + sd * values[name], decimals)
    return out


def to_csv(columns: dict[str, np.ndarray], blank: dict[str, set[int]]) -> str:
    lines = [",".join(COLUMNS)]
    for row in range(N):
        cells = []
        for name in COLUMNS:
            if row in blank.get(name, set()):
                cells.append("")
            else:
                decimals = SCALES[name][2]
                cells.append(f"{columns[name][row]:.{decimals}f}")
        lines.append(",".join(cells))
    return "\n".join(lines) + "\n"


def main() -> None:
    rng = np.random.default_rng(SEED)
    blank = {"fitness_12m": set(rng.choice(N, size=MISSING_CELLS, replace=False).tolist())}
    write_atomic(HERE / "wellness_consistent.csv", to_csv(draw(False, SEED), blank))
    write_atomic(HERE / "wellness_extra_arrow.csv", to_csv(draw(True, SEED + 1), {}))


if __name__ == "__main__":
    main()
