"""Mapping onto k-input look-up tables by cut enumeration.

A *cut* of a node is a set of nodes whose values determine it; a cut of at most k nodes is
one k-LUT.  Cuts are merged bottom-up from the two inputs of each NAND (an inverter keeps its
input's cuts), keeping the best few per node.  Each node gets a depth label, the fewest LUT
levels from the primary signals, as FlowMap computes it (Cong and Ding 1994; here over the
enumerated cuts rather than by max-flow), and an *area flow*, the LUTs of its cone shared out
over fanouts (area recovery after Cong, Wu and Ding 1999).  ``goal="delay"`` picks the
deepest-first cut of least depth, then least area flow; ``goal="area"`` least area flow, then
depth.  The cover is taken from the circuit's roots down through the chosen cuts.

References
----------
Cong, J. and Ding, Y., "FlowMap: an optimal technology mapping algorithm for delay
optimization in lookup-table based FPGA designs", *IEEE Trans. CAD* 13(1), 1994.
Cong, J., Wu, C. and Ding, Y., "Cut ranking and pruning: enabling a general and efficient
FPGA mapping solution", *Proc. FPGA '99*, 1999.
"""

from __future__ import annotations

from dataclasses import dataclass

from fsmsynth.map.subject import SubjectGraph

CUTS_PER_NODE = 24
"""Cuts kept per node (besides the node itself); more cuts, better labels, slower."""


@dataclass(frozen=True, slots=True)
class Lut:
    """One LUT: the subject node it computes, its input nodes and its truth table (bit
    ``m`` is the output when input ``i`` is ``m >> i & 1``)."""

    node: int
    leaves: tuple[int, ...]
    table: int


def _table(subject: SubjectGraph, root: int, leaves: tuple[int, ...]) -> int:
    """Truth table of ``root`` over ``leaves`` by simulating the cone on bit vectors."""
    points = 1 << len(leaves)
    ones = (1 << points) - 1
    value: dict[int, int] = {}
    for i, leaf in enumerate(leaves):
        value[leaf] = sum(1 << m for m in range(points) if m >> i & 1)

    def of(n: int) -> int:
        if n in value:
            return value[n]
        node = subject.nodes[n]
        if node[0] == "const":
            result = ones if node[1] else 0
        elif node[0] == "inv":
            result = ones & ~of(int(node[1]))
        else:
            assert node[0] == "nand", "a cut leaves no primary signal out"
            result = ones & ~(of(int(node[1])) & of(int(node[2])))
        value[n] = result
        return result

    return of(root)


def map_luts(subject: SubjectGraph, k: int, goal: str = "area") -> list[Lut]:
    """The LUTs covering every root of ``subject``, each of at most ``k`` inputs."""
    fanout = subject.fanouts()
    cuts: list[list[tuple[int, ...]]] = []
    depth: list[int] = []
    flow: list[float] = []
    best: list[tuple[int, ...]] = []
    for n, node in enumerate(subject.nodes):
        if node[0] in ("in", "const"):
            cuts.append([(n,)])
            depth.append(0)
            flow.append(0.0)
            best.append(())
            continue
        children = [int(c) for c in node[1:]]
        merged: set[tuple[int, ...]] = set()
        if len(children) == 1:
            merged.update(cuts[children[0]])
        else:
            for a in cuts[children[0]]:
                for b in cuts[children[1]]:
                    joined = tuple(sorted(set(a) | set(b)))
                    if len(joined) <= k:
                        merged.add(joined)
        merged.discard((n,))

        def rank(cut: tuple[int, ...]) -> tuple[float, ...]:
            d = 1 + max(depth[leaf] for leaf in cut)
            f = 1.0 + sum(flow[leaf] / max(fanout[leaf], 1) for leaf in cut)
            return (d, f, len(cut)) if goal == "delay" else (f, d, len(cut))

        ranked = sorted(merged, key=lambda c: (rank(c), c))[:CUTS_PER_NODE]
        chosen = ranked[0]
        best.append(chosen)
        depth.append(1 + max(depth[leaf] for leaf in chosen))
        flow.append(1.0 + sum(flow[leaf] / max(fanout[leaf], 1) for leaf in chosen))
        cuts.append([(n,), *ranked])
    made: dict[int, Lut] = {}
    stack = [r for r in subject.roots.values()]
    while stack:
        n = stack.pop()
        if n in made or subject.nodes[n][0] in ("in", "const"):
            continue
        leaves = best[n]
        made[n] = Lut(n, leaves, _table(subject, n, leaves))
        stack.extend(leaves)
    return [made[n] for n in sorted(made)]
