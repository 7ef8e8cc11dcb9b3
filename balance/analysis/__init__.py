"""Analysis of solved flowsheets: key figures, comparisons, optimisation and capacity studies."""
