"""Reference for benches/joint.rs: GCO's alpha-expansion (PyPI `gco-wrapper`, `import gco`) on the Potts
problems the bench writes, which are the segment part of the product's own energy on demo scenes.

Reads a JSON list of problems from the path given first (each: name, node_count, label_count, unary as a
flat list of integers, edges as [a, b, weight] integers, start labels), and for each runs GCO's expansion
(`GCO.expansion(-1)`, until no move improves) from the same start labels several times; prints one JSON
object per problem: name, GCO's energy, the median milliseconds of `expansion()` alone (the graph already
set up) and the median of the whole call (graph set-up included).

Run by the bench when python3 with numpy and gco-wrapper is on PATH:
    pip install numpy gco-wrapper
    python3 benches/reference/gco_labeller.py problems.json
"""

import json
import sys
import time

import gco
import numpy as np

REPEATS = 7


def run(problem):
    node_count, label_count = problem["node_count"], problem["label_count"]
    unary = np.array(problem["unary"], dtype=np.int32).reshape(node_count, label_count)
    edges = np.array(problem["edges"], dtype=np.int64).reshape(-1, 3)
    start = [int(label) for label in problem["start"]]
    smooth = (1 - np.eye(label_count)).astype(np.int32)
    expansion_ms, whole_ms = [], []
    energy = None
    for _ in range(REPEATS):
        began = time.perf_counter()
        graph = gco.GCO()
        graph.create_general_graph(node_count, label_count, energy_is_float=False)
        graph.set_data_cost(unary)
        graph.set_all_neighbors(edges[:, 0], edges[:, 1], edges[:, 2].astype(np.int32))
        graph.set_smooth_cost(smooth)
        for site, label in enumerate(start):
            graph.init_label_at_site(site, label)
        moved = time.perf_counter()
        energy = graph.expansion(-1)
        ended = time.perf_counter()
        expansion_ms.append((ended - moved) * 1000.0)
        whole_ms.append((ended - began) * 1000.0)
        graph.destroy_graph()
    return {
        "name": problem["name"],
        "energy": int(energy),
        "expansion_ms": float(np.median(expansion_ms)),
        "whole_ms": float(np.median(whole_ms)),
        "source": f"GCO via gco-wrapper {gco.__version__}",
    }


def main():
    with open(sys.argv[1]) as handle:
        problems = json.load(handle)
    for problem in problems:
        print(json.dumps(run(problem)), flush=True)


if __name__ == "__main__":
    main()
