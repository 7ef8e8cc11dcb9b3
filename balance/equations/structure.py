"""Structural analysis: which equations determine which unknowns, in plant words.

The Jacobian's sparsity makes a bipartite graph of equations and unknowns.
A maximum matching (Hopcroft–Karp, from networkx) and the
Dulmage–Mendelsohn decomposition built on it split the system into an
over-determined part (equations left without an unknown: too many values
fixed there), an under-determined part (unknowns left without an equation:
something more must be fixed there) and a well-determined rest.

Reference: A. L. Dulmage and N. S. Mendelsohn, "Coverings of bipartite
graphs", Can. J. Math. 10 (1958) 517–534; J. E. Hopcroft and R. M. Karp,
SIAM J. Comput. 2 (1973) 225–231.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field

import casadi as ca
import networkx as nx
from networkx.algorithms import bipartite


@dataclass
class StructuralReport:
    """Result of `analyse`.

    Attributes
    ----------
    n_unknowns, n_equations : int
    over_equations : list of int
        Indices of equations in the over-determined part.
    under_unknowns : list of int
        Indices of unknowns in the under-determined part.
    over_fixed : list of str
        Paths of fixed variables that appear in the over-determined equations.
    unmatched_equations, unmatched_unknowns : list of int
    """

    n_unknowns: int
    n_equations: int
    over_equations: list[int] = field(default_factory=list)
    under_unknowns: list[int] = field(default_factory=list)
    over_fixed: list[str] = field(default_factory=list)
    unmatched_equations: list[int] = field(default_factory=list)
    unmatched_unknowns: list[int] = field(default_factory=list)

    @property
    def structurally_sound(self) -> bool:
        return not self.unmatched_equations and not self.unmatched_unknowns


def _sparsity_pairs(expr, symbols):
    if expr.numel() == 0 or symbols.numel() == 0:
        return []
    sp = ca.jacobian_sparsity(expr, symbols) if hasattr(ca, "jacobian_sparsity") else ca.jacobian(expr, symbols).sparsity()
    rows, cols = sp.get_triplet()
    return list(zip(rows, cols))


def dulmage_mendelsohn(n_rows: int, n_cols: int, pairs: list[tuple[int, int]]):
    """Coarse Dulmage–Mendelsohn decomposition of a bipartite graph.

    Parameters
    ----------
    n_rows, n_cols : int
        Number of equations (rows) and unknowns (columns).
    pairs : list of (row, col)
        Structural non-zeros.

    Returns
    -------
    over_rows, over_cols, under_rows, under_cols, unmatched_rows, unmatched_cols : list of int

    Examples
    --------
    Two equations in one unknown: both equations are over-determined.

    >>> dulmage_mendelsohn(2, 1, [(0, 0), (1, 0)])[0]
    [0, 1]

    One equation in two unknowns: both unknowns are under-determined.

    >>> dulmage_mendelsohn(1, 2, [(0, 0), (0, 1)])[3]
    [0, 1]
    """
    graph = nx.Graph()
    rows = [("r", i) for i in range(n_rows)]
    cols = [("c", j) for j in range(n_cols)]
    graph.add_nodes_from(rows, bipartite=0)
    graph.add_nodes_from(cols, bipartite=1)
    graph.add_edges_from((("r", i), ("c", j)) for i, j in pairs)
    matching = bipartite.hopcroft_karp_matching(graph, top_nodes=rows)
    unmatched_rows = [i for i in range(n_rows) if ("r", i) not in matching]
    unmatched_cols = [j for j in range(n_cols) if ("c", j) not in matching]

    def alternating(starts, side):
        seen = set(starts)
        frontier = list(starts)
        while frontier:
            node = frontier.pop()
            for nbr in graph.neighbors(node):
                if matching.get(node) == nbr:
                    continue
                mate = matching.get(nbr)
                if nbr not in seen:
                    seen.add(nbr)
                    if mate is not None and mate not in seen:
                        seen.add(mate)
                        frontier.append(mate)
        return seen

    over = alternating([("r", i) for i in unmatched_rows], "r")
    under = alternating([("c", j) for j in unmatched_cols], "c")
    return (sorted(i for s, i in over if s == "r"), sorted(j for s, j in over if s == "c"),
            sorted(i for s, i in under if s == "r"), sorted(j for s, j in under if s == "c"),
            unmatched_rows, unmatched_cols)


def analyse(model) -> StructuralReport:
    """Structural analysis of a compiled model (square or not)."""
    pairs = _sparsity_pairs(model.g, model.x)
    over_r, _, _, under_c, un_r, un_c = dulmage_mendelsohn(model.n_equations, model.n_unknowns, pairs)
    report = StructuralReport(model.n_unknowns, model.n_equations, over_r, under_c, [], un_r, un_c)
    if over_r and model.p.numel():
        sub = ca.vertcat(*[model.equations[i].residual for i in over_r])
        fixed = sorted({c for _, c in _sparsity_pairs(sub, model.p)})
        report.over_fixed = [model.parameters[c].path for c in fixed]
    return report


def _group(paths):
    grouped = defaultdict(list)
    for owner, name in paths:
        grouped[owner].append(name)
    return "; ".join(f"{owner}: {', '.join(names)}" for owner, names in grouped.items())


def describe_imbalance(model, report: StructuralReport | None = None) -> str:
    """A message, in plant words, on what is over- or under-specified."""
    report = report or analyse(model)
    n_x, n_g = model.n_unknowns, model.n_equations
    lines = []
    if n_x > n_g:
        lines.append(f"too few specifications: {n_x} unknowns but {n_g} equations; "
                     f"fix {n_x - n_g} more value{'s' if n_x - n_g > 1 else ''}")
    elif n_g > n_x:
        lines.append(f"too many specifications: {n_g} equations but {n_x} unknowns; "
                     f"free {n_g - n_x} value{'s' if n_g - n_x > 1 else ''}")
    else:
        lines.append("the specification is structurally singular although unknowns and equations "
                     f"are equal in number ({n_x})")
    if report.over_equations:
        eqs = [model.equations[i] for i in report.over_equations]
        lines.append("over-specified: the equations " + _group((e.unit, e.purpose) for e in eqs)
                     + (" leave nothing to solve for, given the fixed values "
                        + ", ".join(report.over_fixed) if report.over_fixed else ""))
    if report.under_unknowns:
        unknowns = [model.unknowns[j] for j in report.under_unknowns]
        lines.append("nothing fixes one of: " + _group((v.owner, v.name) for v in unknowns[:24])
                     + (" ..." if len(unknowns) > 24 else ""))
    return "\n  ".join(lines)
