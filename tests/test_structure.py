"""Structural analysis: the Dulmage-Mendelsohn decomposition and the imbalance messages.

The decomposition is checked on small systems whose answer is known by hand,
then against a second computation on random systems: a row belongs to the
over-determined part exactly when some maximum matching leaves it unmatched
(and a column to the under-determined part likewise), which is tested by
deleting the row or column and recomputing the matching size with scipy's
``maximum_bipartite_matching`` (Hopcroft-Karp, an implementation independent
of the networkx one `balance` uses). References: Dulmage & Mendelsohn, Can. J.
Math. 10 (1958) 517-534; the characterisation of the coarse decomposition by
vertices missed by some maximum matching is the bipartite case of the
Gallai-Edmonds structure theorem (e.g. Lovász & Plummer, Matching Theory,
1986, ch. 3).
"""

from __future__ import annotations

import re

import numpy as np
import pytest
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import maximum_bipartite_matching

from balance.equations.model import compile_flowsheet
from balance.equations.structure import describe_imbalance, dulmage_mendelsohn, structural_rank
from balance.errors import SpecificationError
from balance.flowsheet.file_format import load

DEMO = "flowsheets/skim_milk_3_effect_forward.toml"


# ---------------------------------------------------------------------------
# Hand-built systems with known answers


@pytest.mark.parametrize("n_rows, n_cols, pairs, over_rows, over_cols, under_rows, under_cols", [
    # x0 = a; x0 + x1 = b; x1 + x2 = c: lower triangular, well determined.
    (3, 3, [(0, 0), (1, 0), (1, 1), (2, 1), (2, 2)], [], [], [], []),
    # Three equations in two coupled unknowns: every equation is over-determined.
    (3, 2, [(0, 0), (1, 0), (1, 1), (2, 1)], [0, 1, 2], [0, 1], [], []),
    # Two equations fix x0 twice; one equation in x1 and x2 leaves one of them free.
    (3, 3, [(0, 0), (1, 0), (2, 1), (2, 2)], [0, 1], [0], [2], [1, 2]),
    # An equation with no unknown at all (a relation among fixed values only).
    (2, 1, [(0, 0)], [1], [], [], []),
    # An unknown that appears in no equation.
    (1, 2, [(0, 0)], [], [], [], [1]),
    # A well-determined block (rows 0-1, cols 0-1) beside an over-determined one (rows 2-3, col 2).
    (4, 3, [(0, 0), (0, 1), (1, 1), (2, 2), (3, 2)], [2, 3], [2], [], []),
    # The same with row 3 also in x1: the surplus can now sit in row 1, 2 or 3; only row 0,
    # the one equation in x0, is always needed.
    (4, 3, [(0, 0), (0, 1), (1, 1), (2, 2), (3, 2), (3, 1)], [1, 2, 3], [1, 2], [], []),
])
def test_dulmage_mendelsohn_known_answers(n_rows, n_cols, pairs, over_rows, over_cols, under_rows,
                                          under_cols):
    o_r, o_c, u_r, u_c, unmatched_rows, unmatched_cols = dulmage_mendelsohn(n_rows, n_cols, pairs)
    assert (o_r, o_c, u_r, u_c) == (over_rows, over_cols, under_rows, under_cols)
    # The deficiencies: as many unmatched rows (columns) as rows (columns) exceed the matching.
    rank = structural_rank(n_rows, n_cols, pairs)
    assert len(unmatched_rows) == n_rows - rank and len(unmatched_cols) == n_cols - rank
    assert set(unmatched_rows) <= set(o_r) and set(unmatched_cols) <= set(u_c)


def _scipy_rank(n_rows, n_cols, pairs):
    if not pairs or n_rows == 0 or n_cols == 0:
        return 0
    rows, cols = zip(*pairs)
    graph = csr_matrix((np.ones(len(pairs)), (rows, cols)), shape=(n_rows, n_cols))
    return int(np.sum(maximum_bipartite_matching(graph, perm_type="column") >= 0))


def _random_system(rng):
    n_rows, n_cols = int(rng.integers(1, 9)), int(rng.integers(1, 9))
    density = rng.uniform(0.1, 0.5)
    pairs = sorted({(i, j) for i in range(n_rows) for j in range(n_cols) if rng.random() < density})
    return n_rows, n_cols, pairs


@pytest.mark.parametrize("seed", range(40))
def test_dulmage_mendelsohn_against_deletion_with_scipy(seed):
    n_rows, n_cols, pairs = _random_system(np.random.default_rng(seed))
    o_r, o_c, u_r, u_c, _, _ = dulmage_mendelsohn(n_rows, n_cols, pairs)
    rank = _scipy_rank(n_rows, n_cols, pairs)
    assert structural_rank(n_rows, n_cols, pairs) == rank
    # A row is over-determined iff deleting it leaves the maximum matching as large.
    over_rows = [i for i in range(n_rows)
                 if _scipy_rank(n_rows, n_cols, [(r, c) for r, c in pairs if r != i]) == rank]
    under_cols = [j for j in range(n_cols)
                  if _scipy_rank(n_rows, n_cols, [(r, c) for r, c in pairs if c != j]) == rank]
    assert o_r == over_rows and u_c == under_cols
    # Their partners: the unknowns of the over-determined equations, the equations of the
    # under-determined unknowns.
    assert o_c == sorted({c for r, c in pairs if r in o_r})
    assert u_r == sorted({r for r, c in pairs if c in u_c})


# ---------------------------------------------------------------------------
# Imbalance messages on flowsheets, in plant words


def _model(fixes=None, frees=()):
    fs = load(DEMO)
    for path, value in (fixes or {}).items():
        fs.fix(path, value)
    for path in frees:
        fs.free(path)
    return fs, compile_flowsheet(fs, require_square=False)


def test_over_specified_names_the_unit_and_what_to_free():
    # E2's area fixed on top of equal areas and fixed product solids.
    _, model = _model({"E2.area": 100.0})
    text = describe_imbalance(model)
    assert text.startswith("too many specifications: 39 equations but 38 unknowns; free 1 value")
    assert re.search(r"^\s*over-specified.*\bE2: ", text, re.M), text
    assert "E2.area" in text


def test_under_specified_names_the_units_and_what_to_fix():
    _, model = _model(frees=["concentrate.solids"])
    text = describe_imbalance(model)
    assert text.startswith("too few specifications: 40 unknowns but 39 equations; fix 1 more value")
    assert re.search(r"under-specified.*\bE[123]\b", text), text
    assert re.search(r"fix one of: .*\bE[123]\.(area|pressure)\b", text), text


def test_structurally_singular_names_both_ends():
    # Square in count: E2's pressure fixed (over-specifies the train) and the condenser's
    # cooling-water outlet freed (leaves the condenser under-specified).
    _, model = _model({"E2.pressure": 4.0e4}, ["condenser.cooling_out.temperature"])
    assert model.n_unknowns == model.n_equations
    text = describe_imbalance(model)
    assert "structurally singular" in text
    assert re.search(r"over-specified.*\bE[12]: ", text), text
    assert re.search(r"under-specified.*condenser", text), text
    assert "condenser.cooling_out.temperature" in text


def test_compile_raises_a_specification_error_with_the_description():
    fs, model = _model({"E2.area": 100.0})
    with pytest.raises(SpecificationError, match=r"(?s)too many specifications.*E2: ") as info:
        compile_flowsheet(fs)
    assert info.value.file == DEMO
    assert describe_imbalance(model) in str(info.value)
