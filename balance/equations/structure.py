"""Structural analysis: which equations determine which unknowns, told in plant words.

The Jacobian's sparsity makes a bipartite graph of equations (rows) and
unknowns (columns). A maximum matching (Hopcroft–Karp, from networkx) and
the coarse Dulmage–Mendelsohn decomposition built on it split the system
into

* an **over-determined** part: the equations reachable by alternating paths
  from an equation the matching leaves without an unknown. Too many values
  are fixed there. Freeing any fixed value that appears in one of these
  equations removes one excess equation (an augmenting path then exists);
* an **under-determined** part: the unknowns reachable by alternating paths
  from an unknown left without an equation. Something more must be fixed
  there, and fixing any one of these unknowns removes one missing equation
  (each of them is left unmatched by some maximum matching);
* a well-determined rest.

Each part is split into its connected pieces, so that two unrelated
mistakes in two corners of the plant are reported apart, each with its own
count and its own short list of values to free or to fix.

References
----------
A. L. Dulmage and N. S. Mendelsohn, "Coverings of bipartite graphs",
Can. J. Math. 10 (1958) 517–534. J. E. Hopcroft and R. M. Karp, "An n^5/2
algorithm for maximum matchings in bipartite graphs", SIAM J. Comput. 2
(1973) 225–231. A. Pothen and C.-J. Fan, "Computing the block triangular
form of a sparse matrix", ACM Trans. Math. Softw. 16 (1990) 303–324 (the
coarse decomposition by alternating paths used here).
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field

import casadi as ca
import networkx as nx
from networkx.algorithms import bipartite

#: What an over-specified equation leaves without an unknown, in plant words,
#: by the equation's purpose (the words after "<unit>: "). Units added later
#: fall back to "its '<purpose>' equation".
OVER_PHRASES = {
    "heat transfer": "its temperature difference",
    "duty": "its heating-steam flow",
    "duty, vapour side": "its vapour flow",
    "duty, water side": "its cooling-water rise",
    "energy balance": "its energy balance",
    "mass balance": "its mass balance",
    "solids balance": "its solids balance",
    "boiling temperature": "its boiling temperature",
    "saturation": "the steam's state (pressure, temperature and superheat)",
    "condensate saturated": "its condensate temperature",
    "vapour pressure": "its vapour pressure",
    "vapour temperature": "its vapour temperature",
    "outlet temperature": "its outlet temperature",
}

#: Kinds of unit quantities an engineer normally chooses to fix, best first.
_PREFERRED_KINDS = ("pressure", "area", "heat_transfer_coefficient", "power", "temperature",
                    "temperature_difference", "mass_flow", "fraction", "ratio")


@dataclass
class Block:
    """One connected piece of the over- or under-determined part.

    Attributes
    ----------
    equations : list of int
        Indices of its equations (`Model.equations`).
    unknowns : list of int
        Indices of its unknowns (`Model.unknowns`).
    count : int
        Equations in excess (over-determined) or missing (under-determined).
    candidates : list of str
        Over-determined: paths of fixed values any one of which, freed,
        removes one excess equation. Under-determined: paths of unknowns any
        one of which, fixed, removes one missing equation. Best first.
    """

    equations: list[int]
    unknowns: list[int]
    count: int
    candidates: list[str] = field(default_factory=list)
    headline: str = ""


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
        Paths of fixed variables that appear in the over-determined
        equations (freeing any one removes one excess equation).
    unmatched_equations, unmatched_unknowns : list of int
    over_blocks, under_blocks : list of Block
        The two parts split into connected pieces.
    structural_rank : int
        Size of the maximum matching.
    dependencies : list of Dependency
        For a square, structurally sound model: dependencies the Jacobian
        shows at every trial point (`numerical_dependencies`).
    """

    n_unknowns: int
    n_equations: int
    over_equations: list[int] = field(default_factory=list)
    under_unknowns: list[int] = field(default_factory=list)
    over_fixed: list[str] = field(default_factory=list)
    unmatched_equations: list[int] = field(default_factory=list)
    unmatched_unknowns: list[int] = field(default_factory=list)
    over_blocks: list[Block] = field(default_factory=list)
    under_blocks: list[Block] = field(default_factory=list)
    structural_rank: int = 0
    dependencies: list = field(default_factory=list)

    @property
    def structurally_sound(self) -> bool:
        return not self.unmatched_equations and not self.unmatched_unknowns

    @property
    def numerically_singular(self) -> bool:
        """True when some equations combine into a relation among fixed values only."""
        return any(d.kind == "equations" for d in self.dependencies)


def _sparsity_pairs(expr, symbols):
    if expr.numel() == 0 or symbols.numel() == 0:
        return []
    sp = ca.jacobian_sparsity(expr, symbols) if hasattr(ca, "jacobian_sparsity") else ca.jacobian(expr, symbols).sparsity()
    rows, cols = sp.get_triplet()
    return list(zip(rows, cols))


def _bipartite(n_rows, n_cols, pairs):
    graph = nx.Graph()
    rows = [("r", i) for i in range(n_rows)]
    graph.add_nodes_from(rows, bipartite=0)
    graph.add_nodes_from((("c", j) for j in range(n_cols)), bipartite=1)
    graph.add_edges_from((("r", int(i)), ("c", int(j))) for i, j in pairs)
    matching = bipartite.hopcroft_karp_matching(graph, top_nodes=rows) if n_rows and n_cols else {}
    return graph, matching


def _alternating(graph, matching, starts):
    """Nodes reachable from ``starts`` by alternating paths: a non-matching
    edge out of a start-side node, then the matching edge back."""
    seen = set(starts)
    frontier = list(starts)
    while frontier:
        node = frontier.pop()
        for nbr in graph.neighbors(node):
            if matching.get(node) == nbr:
                continue
            if nbr not in seen:
                seen.add(nbr)
                mate = matching.get(nbr)
                if mate is not None and mate not in seen:
                    seen.add(mate)
                    frontier.append(mate)
    return seen


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
        The over-determined part (rows reachable by alternating paths from
        unmatched rows, with their columns), the under-determined part
        (columns reachable from unmatched columns, with their rows), and the
        rows and columns a maximum matching leaves unmatched.

    Examples
    --------
    Two equations in one unknown: both equations are over-determined.

    >>> dulmage_mendelsohn(2, 1, [(0, 0), (1, 0)])[0]
    [0, 1]

    One equation in two unknowns: both unknowns are under-determined.

    >>> dulmage_mendelsohn(1, 2, [(0, 0), (0, 1)])[3]
    [0, 1]

    A square but structurally singular system: x0 appears in two
    equations and x1 in none.

    >>> over_r, over_c, under_r, under_c, _, _ = dulmage_mendelsohn(2, 2, [(0, 0), (1, 0)])
    >>> over_r, over_c, under_c
    ([0, 1], [0], [1])
    """
    graph, matching = _bipartite(n_rows, n_cols, pairs)
    unmatched_rows = [i for i in range(n_rows) if ("r", i) not in matching]
    unmatched_cols = [j for j in range(n_cols) if ("c", j) not in matching]
    over = _alternating(graph, matching, [("r", i) for i in unmatched_rows])
    under = _alternating(graph, matching, [("c", j) for j in unmatched_cols])
    return (sorted(i for s, i in over if s == "r"), sorted(j for s, j in over if s == "c"),
            sorted(i for s, i in under if s == "r"), sorted(j for s, j in under if s == "c"),
            unmatched_rows, unmatched_cols)


def structural_rank(n_rows: int, n_cols: int, pairs: list[tuple[int, int]]) -> int:
    """Size of a maximum matching: the largest rank the Jacobian can have.

    >>> structural_rank(3, 3, [(0, 0), (1, 0), (2, 1), (2, 2)])
    2
    """
    _, matching = _bipartite(n_rows, n_cols, pairs)
    return len(matching) // 2


def _components(graph, nodes):
    sub = graph.subgraph(nodes)
    return [sorted(c) for c in nx.connected_components(sub)]


# -- words ---------------------------------------------------------------------------------


def display_path(model, variable) -> str:
    """The path a user would write for a variable: ``E2.area``, ``feed.flow``,
    ``E2.vapour_out.pressure``, or the stream's own name where neither end is a unit
    key."""
    if not variable.is_stream:
        return variable.path
    fs = model.flowsheet
    stream = fs.stream(variable.owner)
    for unit_name, port in ((stream.source, stream.source_port), (stream.target, stream.target_port)):
        unit = fs.unit(unit_name)
        if unit.boundary and not unit_name.startswith("leaves:"):
            for key, (alias_port, alias_var) in unit.aliases().items():
                if alias_port == port and alias_var == variable.name:
                    return f"{unit_name}.{key}"
    if stream.source.startswith("leaves:"):
        return variable.path
    return f"{stream.source}.{stream.source_port}.{variable.name}"


def plant_words(model, variable) -> str:
    """A variable in words: "the pressure of E3", "the flow of feed", "the
    temperature of the stream V2 (E2 to E3)"."""
    name = "heat-transfer coefficient U" if variable.name == "U" else variable.name.replace("_", " ")
    if not variable.is_stream:
        return f"the {name} of {variable.owner}"
    fs = model.flowsheet
    stream = fs.stream(variable.owner)
    source, target = fs.unit(stream.source), fs.unit(stream.target)
    def kind_of(unit_name, unit):
        words = unit.type_name.replace("_", " ")
        return unit_name if words == unit_name else f"{unit_name} ({words})"

    if source.boundary == "source":
        return f"the {name} of {kind_of(stream.source, source)}"
    if target.boundary == "sink" and not stream.target.startswith("leaves:"):
        return f"the {name} of {kind_of(stream.target, target)}"
    if target.type_name in ("condenser", "direct_contact_condenser") and variable.name == "pressure":
        return f"the condenser pressure ({stream.target})"
    if stream.target.startswith("leaves:"):
        return f"the {name} of what leaves {stream.source}.{stream.source_port}"
    return f"the {name} of the stream {stream.name} ({stream.source} to {stream.target})"


def _candidate_rank(model, variable) -> tuple:
    """Sort key: values an engineer would choose to fix or free come first."""
    fs = model.flowsheet
    if not variable.is_stream:
        tier = 0
    else:
        stream = fs.stream(variable.owner)
        boundary = fs.unit(stream.source).boundary == "source" or (
            fs.unit(stream.target).boundary == "sink" and not stream.target.startswith("leaves:"))
        condenser = (fs.unit(stream.target).type_name in ("condenser", "direct_contact_condenser")
                     and variable.name == "pressure")
        tier = 0 if condenser else 1 if boundary else 2
    kind = _PREFERRED_KINDS.index(variable.kind) if variable.kind in _PREFERRED_KINDS else len(_PREFERRED_KINDS)
    return (tier, kind, variable.path)


def _and(names: list[str]) -> str:
    if len(names) <= 1:
        return "".join(names)
    return ", ".join(names[:-1]) + " and " + names[-1]


def _or(names: list[str]) -> str:
    if len(names) <= 1:
        return "".join(names)
    return ", ".join(names[:-1]) + " or " + names[-1]


# -- analysis ------------------------------------------------------------------------------


def _fixed_by_equation(model) -> dict[int, set[int]]:
    out = defaultdict(set)
    if model.p.numel() and model.g.numel():
        for r, c in _sparsity_pairs(model.g, model.p):
            out[int(r)].add(int(c))
    return out


def analyse(model, numerical: bool | None = None) -> StructuralReport:
    """Structural analysis of a compiled model (square or not).

    Parameters
    ----------
    model : balance.equations.model.Model
    numerical : bool, optional
        Also look for equations that combine into a relation among fixed
        values only (`numerical_dependencies`), which names the culprit when
        the structure alone cannot, as when feed rate, feed solids, product
        rate and product solids are all fixed. True: everywhere, including
        a square and sound model (what ``balance check`` does; it evaluates
        the Jacobian at two trial points, a few tenths of a second for a
        line of a hundred unknowns). None (default): only to sharpen the
        message of an over-determined part. False: never.

    Returns
    -------
    StructuralReport
        The coarse decomposition, split into connected blocks, each with the
        values to free (over-determined) or to fix (under-determined) and a
        headline in plant words.
    """
    n_g, n_x = model.n_equations, model.n_unknowns
    pairs = _sparsity_pairs(model.g, model.x)
    graph, matching = _bipartite(n_g, n_x, pairs)
    unmatched_rows = [i for i in range(n_g) if ("r", i) not in matching]
    unmatched_cols = [j for j in range(n_x) if ("c", j) not in matching]
    over = _alternating(graph, matching, [("r", i) for i in unmatched_rows])
    under = _alternating(graph, matching, [("c", j) for j in unmatched_cols])
    over_r = sorted(i for s, i in over if s == "r")
    under_c = sorted(j for s, j in under if s == "c")
    report = StructuralReport(n_x, n_g, over_r, under_c, [], unmatched_rows, unmatched_cols,
                              structural_rank=len(matching) // 2)
    fixed_in = _fixed_by_equation(model) if over_r or numerical else {}
    square_check = numerical is True
    numerical = numerical is not False
    params = model.parameters
    report.over_fixed = [params[c].path for c in sorted({c for i in over_r for c in fixed_in.get(i, ())})]

    dependencies = []
    if numerical and over_r:
        dependencies = [d for d in numerical_dependencies(model, fixed_in=fixed_in) if d.kind == "equations"]
    for piece in _components(graph, over):
        rows = sorted(i for s, i in piece if s == "r")
        cols = sorted(j for s, j in piece if s == "c")
        block = Block(rows, cols, len(rows) - len(cols))
        local = [d for d in dependencies if set(d.equations) <= set(rows) and d.fixed
                 and len(d.equations) <= LOCAL_DEPENDENCY]
        if local:
            dep = min(local, key=lambda d: len(d.equations))
            first = list(dep.fixed_indices)
            purposes = {model.equations[i].purpose for i in dep.equations}
            if len(purposes) <= 2:
                block.headline = _dependency_sentence(model, dep)
            else:   # a whole unit's equations: say which of its own values are fixed together
                _, block.headline = _over_focus(model, dep.equations, fixed_in)
        else:
            focus, block.headline = _over_focus(model, rows, fixed_in)
            first = focus
        rest = sorted({c for i in rows for c in fixed_in.get(i, ())} - set(first),
                      key=lambda c: _candidate_rank(model, params[c]))
        first = sorted(first, key=lambda c: _candidate_rank(model, params[c]))
        block.candidates = [display_path(model, params[c]) for c in first + rest]
        report.over_blocks.append(block)
    if square_check and n_g == n_x and report.structurally_sound:
        # Only conservation balances (mass, solids, dry air) and 'same' requirements are trusted
        # here: they are linear in the flows, so a dependency among them holds at every point,
        # whereas a dependency among nonlinear equations may be an accident of the trial points.
        report.dependencies = [
            d for d in numerical_dependencies(model, fixed_in=fixed_in)
            if d.kind == "equations" and d.fixed and len(d.equations) <= LOCAL_DEPENDENCY
            and all(model.equations[i].scale_kind == "mass" or model.equations[i].unit == "specification"
                    for i in d.equations)]
    for piece in _components(graph, under):
        rows = sorted(i for s, i in piece if s == "r")
        cols = sorted(j for s, j in piece if s == "c")
        order = sorted(cols, key=lambda j: _candidate_rank(model, model.unknowns[j]))
        block = Block(rows, cols, len(cols) - len(rows),
                      [display_path(model, model.unknowns[j]) for j in order])
        words = [plant_words(model, model.unknowns[j]) for j in order[:3]]
        block.headline = f"nothing fixes {_or(words)}"
        report.under_blocks.append(block)
    return report


def _over_focus(model, rows, fixed_in) -> tuple[list[int], str]:
    """The equation of an over-determined block with the most fixed values of
    its own unit, and the sentence "E2: area, U and duty are all fixed, so its
    temperature difference is over-specified"."""
    best = None
    for i in rows:
        eq = model.equations[i]
        fixed = sorted(fixed_in.get(i, ()))
        own = [c for c in fixed if not model.parameters[c].is_stream and model.parameters[c].owner == eq.unit]
        score = (len(own), len(fixed))
        if best is None or score > best[0]:
            best = (score, eq, own, fixed)
    if best is None or best[0][1] == 0:
        labels = sorted({model.equations[i].label for i in rows})
        return [], ("the equations " + _and(labels[:6]) + (" ..." if len(labels) > 6 else "")
                    + " leave nothing to solve for")
    _, eq, own, fixed = best
    phrase = OVER_PHRASES.get(eq.purpose, f"its '{eq.purpose}' equation")
    if len(own) >= 2:
        # the unit's other own fixed values in the block belong to the same story
        for i in rows:
            if model.equations[i].unit == eq.unit:
                own += [c for c in sorted(fixed_in.get(i, ())) if c not in own
                        and not model.parameters[c].is_stream and model.parameters[c].owner == eq.unit]
        names = [model.parameters[c].name for c in own]
        quantifier = "both" if len(names) == 2 else "all"
        return own, f"{eq.unit}: {_and(names)} are {quantifier} fixed, so {phrase} is over-specified"
    names = [display_path(model, model.parameters[c]) for c in fixed]
    if eq.unit == "specification":
        verb = "are" if len(names) > 1 else "is"
        return fixed, f"{_and(names)} {verb} fixed and also required by '{eq.purpose}'"
    return fixed, f"{eq.unit}: with {_and(names)} fixed, {phrase} is over-specified"


def _dependency_sentence(model, dep) -> str:
    """"the solids balance of E1, E2 and E3 leaves a relation among fixed values only, so
    feed.flow, feed.solids, concentrate.flow and concentrate.solids cannot all be fixed"."""
    by_purpose = defaultdict(list)
    required = []
    for i in dep.equations:
        eq = model.equations[i]
        if eq.unit == "specification":
            required.append(f"'{eq.purpose}'")
        else:
            by_purpose[eq.purpose].append(eq.unit)
    parts = [f"the {purpose} of {_and(units)}" for purpose, units in by_purpose.items()]
    names = dep.fixed
    quantifier = "both" if len(names) == 2 else "all"
    if not parts:
        return f"{_and(names)} are fixed and also required by {_and(required)}"
    if required:
        parts.append(f"the requirement{'s' if len(required) > 1 else ''} {_and(required)}")
    verb = "leaves" if len(parts) == 1 and len(dep.equations) == 1 else "leave"
    together = "" if verb == "leaves" else " together"
    return (f"{_and(parts)}{together} {verb} a relation among fixed values only, so "
            f"{_and(names)} cannot {quantifier} be fixed")


#: A numerical dependency names the culprit only when it is this local.
LOCAL_DEPENDENCY = 12


@dataclass
class Dependency:
    """A numerical dependency found by `numerical_dependencies`.

    Attributes
    ----------
    kind : {'equations', 'unknowns'}
        ``equations``: a combination of these equations cancels every
        unknown, leaving a relation among fixed values (over-specified).
        ``unknowns``: these unknowns can move together without changing any
        residual (under-specified).
    equations : list of int
    unknowns : list of int
    fixed : list of str
        Display paths of the fixed values in those equations.
    fixed_indices : list of int
        Their indices in `Model.parameters`.
    """

    kind: str
    equations: list[int]
    unknowns: list[int]
    fixed: list[str] = field(default_factory=list)
    fixed_indices: list[int] = field(default_factory=list)


#: Largest system for which the dense numerical analysis is run.
NUMERICAL_LIMIT = 1500


def _trial_points(model, count, seed):
    import numpy as np
    rng = np.random.default_rng(seed)
    base = []
    for v in model.unknowns:
        value = v.guess if v.guess is not None else v.nominal
        base.append(min(max(value, v.lower), v.upper))
    base = np.array(base, dtype=float)
    points = []
    for _ in range(count):
        trial = base * (1.0 + 0.05 * rng.uniform(-1.0, 1.0, base.size))
        lower = np.array([v.lower for v in model.unknowns])
        upper = np.array([v.upper for v in model.unknowns])
        points.append(np.clip(trial, lower, upper))
    return points


def _rref_rows(basis, tolerance=1e-9):
    """Rows spanning the same space as ``basis`` (k x n), in reduced echelon
    form, which makes each one as sparse as the space allows."""
    import numpy as np
    a = np.array(basis, dtype=float)
    rows, cols = a.shape
    pivot_row = 0
    for col in range(cols):
        if pivot_row >= rows:
            break
        best = pivot_row + int(np.argmax(np.abs(a[pivot_row:, col])))
        if abs(a[best, col]) < tolerance * max(1.0, np.abs(a).max()):
            continue
        a[[pivot_row, best]] = a[[best, pivot_row]]
        a[pivot_row] /= a[pivot_row, col]
        for r in range(rows):
            if r != pivot_row:
                a[r] -= a[r, col] * a[pivot_row]
        pivot_row += 1
    return a[:pivot_row]


def numerical_dependencies(model, points: int = 2, seed: int = 1, tolerance: float = 1e-9,
                           fixed_in: dict | None = None) -> list[Dependency]:
    """Dependencies the Jacobian shows at every trial point.

    The scaled Jacobian dg/dx is evaluated at ``points`` trial points near
    the variables' guesses or nominal values. A left null vector present at
    every point is a combination of equations that cancels every unknown:
    the solids balances of a chain of effects add up to ``F x_F = P x_P``,
    so feed rate, feed solids, product rate and product solids cannot all
    be fixed, whatever the structure says. A right null vector is a
    direction in which unknowns move without any equation noticing.

    Parameters
    ----------
    model : balance.equations.model.Model
    points : int
        Number of trial points; a dependency must appear at all of them.
    seed : int
        Seed of the trial points (the analysis is repeatable).
    tolerance : float
        Relative size below which a singular value counts as zero.

    Returns
    -------
    list of Dependency
        Empty when the model is larger than `NUMERICAL_LIMIT` or a trial
        point gives non-finite numbers.
    """
    import numpy as np
    n_g, n_x = model.n_equations, model.n_unknowns
    if not n_g or not n_x or max(n_g, n_x) > NUMERICAL_LIMIT:
        return []
    jac = ca.Function("dg_dx", [model.x, model.p], [ca.densify(ca.jacobian(model.g, model.x))])
    p = model.parameter_values()
    scale_r = np.asarray(model.residual_scale, dtype=float)
    found = None
    for x in _trial_points(model, points, seed):
        j = np.asarray(jac(x, p), dtype=float)
        if not np.all(np.isfinite(j)):
            return []
        scale_x = np.maximum(np.abs(x), 1e-6)
        js = j / scale_r[:, None] * scale_x[None, :]
        u, s, vt = np.linalg.svd(js)
        limit = tolerance * (s[0] if s.size else 1.0)
        rank = int(np.sum(s > limit))
        left = u[:, rank:].T       # (n_g - rank) x n_g
        right = vt[rank:, :]       # (n_x - rank) x n_x
        dims = (left.shape[0], right.shape[0])
        if found is None:
            found = (dims, left, right)
        else:
            found = (tuple(min(a, b) for a, b in zip(found[0], dims)), found[1], found[2])
    (k_left, k_right), left, right = found
    out = []
    fixed_in = fixed_in if fixed_in is not None else _fixed_by_equation(model)
    if k_left:
        for row in _rref_rows(left[:k_left] if left.shape[0] == k_left else left)[:k_left]:
            support = [i for i in np.flatnonzero(np.abs(row) > 1e-6 * np.abs(row).max())]
            cols = sorted({c for i in support for c in fixed_in.get(int(i), ())})
            unknowns = sorted({int(c) for r, c in _sparsity_pairs(model.g, model.x) if r in set(support)})
            out.append(Dependency("equations", [int(i) for i in support], unknowns,
                                  [display_path(model, model.parameters[c]) for c in cols], cols))
    if k_right:
        for row in _rref_rows(right)[:k_right]:
            support = [int(j) for j in np.flatnonzero(np.abs(row) > 1e-6 * np.abs(row).max())]
            out.append(Dependency("unknowns", [], support))
    return out


def describe_imbalance(model, report: StructuralReport | None = None) -> str:
    """A message, in plant words, on what is over- or under-specified.

    Counts first (unknowns against equations), then one line per connected
    over- or under-determined piece of the plant: what is over-specified and
    which fixed values could be freed, or what nothing fixes and which
    values could be fixed.

    Parameters
    ----------
    model : balance.equations.model.Model
    report : StructuralReport, optional
        From `analyse`; computed when not given.

    Returns
    -------
    str
    """
    report = report or analyse(model, numerical=True)
    n_x, n_g = model.n_unknowns, model.n_equations
    lines = []
    if n_x > n_g:
        lines.append(f"too few specifications: {n_x} unknowns but {n_g} equations; "
                     f"fix {n_x - n_g} more value{'s' if n_x - n_g > 1 else ''}")
    elif n_g > n_x:
        lines.append(f"too many specifications: {n_g} equations but {n_x} unknowns; "
                     f"free {n_g - n_x} value{'s' if n_g - n_x > 1 else ''}")
    elif not report.structurally_sound:
        lines.append("the specification is structurally singular although unknowns and equations "
                     f"are equal in number ({n_x}): some values are fixed twice over and others not at all")
    for block in report.over_blocks:
        count = f"{block.count} value{'s' if block.count > 1 else ''}"
        if block.candidates:
            shown = block.candidates[:10]
            lines.append(f"over-specified ({count} too many): {block.headline}; free "
                         f"{'one' if block.count == 1 else block.count} of: {', '.join(shown)}"
                         + (" ..." if len(block.candidates) > 10 else ""))
        else:
            labels = sorted({model.equations[i].label for i in block.equations})
            lines.append(f"over-specified ({count} too many): the equations {_and(labels)} "
                         f"contradict each other whatever is fixed (a duplicated equation or 'same' group)")
    for block in report.under_blocks:
        count = f"{block.count} value{'s' if block.count > 1 else ''}"
        shown = block.candidates[:10]
        lines.append(f"under-specified ({count} missing): {block.headline}; fix "
                     f"{'one' if block.count == 1 else block.count} of: {', '.join(shown)}"
                     + (" ..." if len(block.candidates) > 10 else ""))
    has_equations = any(d.kind == "equations" for d in report.dependencies)
    for dep in report.dependencies:
        if dep.kind == "unknowns" and has_equations and len(dep.unknowns) > LOCAL_DEPENDENCY:
            continue
        if dep.kind == "equations":
            lines.append("numerically singular: " + _dependency_sentence(model, dep)
                         + (f"; free one of: {', '.join(dep.fixed[:10])} and fix something else"
                            if dep.fixed else ""))
        else:
            unknowns = sorted(dep.unknowns, key=lambda j: _candidate_rank(model, model.unknowns[j]))
            lines.append("numerically singular at every trial point: no equation settles "
                         + _or([plant_words(model, model.unknowns[j]) for j in unknowns[:4]])
                         + " (they can move together); fix one of: "
                         + ", ".join(display_path(model, model.unknowns[j]) for j in unknowns[:10]))
    if not report.over_blocks and not report.under_blocks and not report.dependencies and n_x == n_g:
        lines.append("the specification is square and structurally sound")
    return "\n  ".join(lines)


__all__ = ["Block", "Dependency", "StructuralReport", "analyse", "describe_imbalance", "display_path",
           "dulmage_mendelsohn", "numerical_dependencies", "plant_words", "structural_rank"]
