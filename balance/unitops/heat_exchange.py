"""Temperature driving forces shared by the heat-transfer equations.

Only numerically safe forms live here; the equations that use them belong to
each unit operation.
"""

from __future__ import annotations

import casadi as ca

#: Smallest driving force [K] used inside the logarithm; a real exchanger
#: never works this close, and the result checks flag it long before.
SMALLEST_DIFFERENCE = 1e-3


def log_mean_temperature_difference(dt_a, dt_b):
    """Logarithmic mean of two terminal temperature differences [K].

    LMTD = (dt_a - dt_b) / ln(dt_a / dt_b), which tends to dt_a when the two
    are equal (then the series b·(1 + (r-1)/2 - (r-1)²/12) is used,
    r = dt_a/dt_b, to avoid 0/0). Each difference is floored at
    `SMALLEST_DIFFERENCE` so that a Newton iterate that crosses zero gives a
    finite value; physically crossed exchangers are rejected by the result
    checks, not here.

    Parameters
    ----------
    dt_a, dt_b : float or casadi expression
        Terminal temperature differences [K].

    Returns
    -------
    float or casadi expression
        Log-mean temperature difference [K].

    Notes
    -----
    The standard result for counter-current or one-side-isothermal exchangers
    (any heat-transfer text, e.g. Incropera & DeWitt, *Fundamentals of Heat
    and Mass Transfer*, 6th ed., eq. 11.15) — common practice.

    Examples
    --------
    >>> round(float(log_mean_temperature_difference(20.0, 10.0)), 4)
    14.427
    >>> round(float(log_mean_temperature_difference(10.0, 10.0)), 6)
    10.0
    """
    a = ca.fmax(dt_a, SMALLEST_DIFFERENCE)
    b = ca.fmax(dt_b, SMALLEST_DIFFERENCE)
    r = a / b
    near = ca.fabs(r - 1) < 1e-4
    r_safe = ca.if_else(near, 2.0, r)
    exact = b * (r_safe - 1) / ca.log(r_safe)
    series = b * (1 + (r - 1) / 2 - (r - 1) ** 2 / 12)
    return ca.if_else(near, series, exact)
