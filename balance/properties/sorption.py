"""Sorption isotherms: equilibrium moisture of dried solids against water activity.

Owns the Guggenheim–Anderson–de Boer (GAB) isotherm with Arrhenius-type
temperature dependence of its two energy constants, its closed-form inverse,
a registry of named parameter sets, and a check of whether drying air can
take a powder down to a target moisture.

Moisture X is on a dry basis, [kg water / kg dry solids]; water activity
a_w equals the relative humidity of air in equilibrium with the solid, [-].

Every function accepts Python floats and CasADi ``SX``/``MX`` symbols
(except `equilibrium_moisture_reachable`, a numeric check). The numeric
guards (a_w outside [0, 1], the GAB pole at K a_w = 1, negative moisture)
raise errors from `balance.errors`; symbolic callers register range checks.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import casadi as ca

from balance.errors import InputError, OutOfRangeError
from balance.properties.validity import RangeCheck, ValidRange, enforce, valid_for

__all__ = [
    "R_GAS", "GabParameters", "GAB_PARAMETERS", "gab_parameters",
    "gab_constants", "gab_moisture", "gab_water_activity",
    "equilibrium_moisture_reachable",
]

#: Molar gas constant, [J/(mol K)] (CODATA 2018, exact).
R_GAS = 8.314462618

# Generic range of the GAB form: it is usually fitted and trusted for
# 0.05 <= a_w <= 0.9 (van den Berg 1984; common practice), and the
# temperature box spans what food drying sees.
_A_W_RANGE = (0.05, 0.9, "-")
_T_RANGE = (273.15, 373.15, "K")


def _is_symbolic(*values) -> bool:
    return any(isinstance(v, (ca.SX, ca.MX)) for v in values)


@valid_for(T=_T_RANGE)
def gab_constants(T, C0, dH1, K0, dH2):
    r"""Temperature-dependent GAB constants C and K (Arrhenius form).

    .. math:: C = C_0 \exp\!\left(\frac{\Delta H_1}{R T}\right),\qquad
              K = K_0 \exp\!\left(\frac{\Delta H_2}{R T}\right)

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    C0 : float
        Pre-exponential factor of the Guggenheim constant C, [-].
    dH1 : float
        Enthalpy difference for C (monolayer sorption heat minus that of the
        multilayer), [J/mol].
    K0 : float
        Pre-exponential factor of the multilayer constant K, [-].
    dH2 : float
        Enthalpy difference for K (condensation heat minus multilayer
        sorption heat), [J/mol].

    Returns
    -------
    tuple
        (C, K), both [-].

    References
    ----------
    van den Berg, C. (1984). Description of water activity of foods for
    engineering purposes by means of the G.A.B. model of sorption. In
    McKenna, B. M. (ed.), Engineering and Food, vol. 1, Elsevier, 311-321.
    Used in this form by Lin, Chen & Pearce, J. Food Eng. 68 (2005) 257-264.

    Examples
    --------
    >>> C, K = gab_constants(298.15, 0.5, 2000.0, 1.0, 0.0)
    >>> round(C, 4), K
    (1.1204, 1.0)
    """
    RT = R_GAS * T
    return C0 * ca.exp(dH1 / RT), K0 * ca.exp(dH2 / RT)


@valid_for(a_w=_A_W_RANGE, T=_T_RANGE)
def gab_moisture(a_w, T, m0, C0, dH1, K0, dH2):
    r"""Equilibrium moisture from water activity, Guggenheim–Anderson–de Boer (GAB) isotherm.

    .. math:: X = \frac{m_0\,C\,K\,a_w}{(1 - K a_w)\,(1 - K a_w + C K a_w)}

    with C and K from `gab_constants`. K = 1 gives the BET isotherm with
    infinitely many layers; a_w -> 0 gives Henry's law, X = m0 C K a_w.

    Parameters
    ----------
    a_w : float or casadi.SX or casadi.MX
        Water activity (relative humidity of air in equilibrium), [-].
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    m0 : float
        Monolayer moisture content, [kg water / kg dry solids].
    C0 : float
        Pre-exponential factor of C, [-].
    dH1 : float
        Enthalpy difference for C, [J/mol].
    K0 : float
        Pre-exponential factor of K, [-].
    dH2 : float
        Enthalpy difference for K, [J/mol].

    Returns
    -------
    float or casadi expression
        Equilibrium moisture content, [kg water / kg dry solids].

    Raises
    ------
    InputError
        For numbers, if a_w is outside [0, 1].
    OutOfRangeError
        For numbers, if K a_w >= 1 (the isotherm's pole: with K > 1 the GAB
        form diverges before a_w = 1).

    Notes
    -----
    The GAB form is generally fitted to, and trusted for, water activities
    of about 0.05-0.9 (declared range); a parameter set has its own
    temperature and activity ranges (`GabParameters`).

    References
    ----------
    Guggenheim, E. A. (1966), Applications of Statistical Mechanics,
    Clarendon Press, Oxford, ch. 11; Anderson, R. B. (1946), J. Am. Chem.
    Soc. 68, 686-691; de Boer, J. H. (1953), The Dynamical Character of
    Adsorption, Clarendon Press, Oxford; van den Berg (1984), see
    `gab_constants`.

    Examples
    --------
    >>> round(gab_moisture(0.3, 298.15, 0.05, 10.0, 0.0, 0.8, 0.0), 5)   # kg/kg
    0.04997
    """
    C, K = gab_constants(T, C0, dH1, K0, dH2)
    Ka = K * a_w
    if not _is_symbolic(a_w, T):
        if a_w < 0.0 or a_w > 1.0:
            raise InputError(f"water activity {float(a_w):g} is outside [0, 1]", key="a_w")
        if Ka >= 1.0:
            raise OutOfRangeError(
                f"K a_w = {float(Ka):.4f} >= 1 at a_w = {float(a_w):g}, T = {float(T):g} K: "
                f"beyond the pole of the GAB isotherm (a_w < 1/K = {1.0 / float(K):.4f})",
                key="a_w")
    return m0 * C * Ka / ((1.0 - Ka) * (1.0 - Ka + C * Ka))


@valid_for(T=_T_RANGE)
def gab_water_activity(X, T, m0, C0, dH1, K0, dH2):
    r"""Water activity from moisture content, the GAB isotherm inverted in closed form.

    With y = K a_w the GAB isotherm is quadratic in y:

    .. math:: X (C - 1)\,y^2 + [m_0 C - X (C - 2)]\,y - X = 0

    whose root in (0, 1) is taken in the cancellation-free form

    .. math:: y = \frac{2X}{b + \sqrt{b^2 + 4 X^2 (C - 1)}},\quad
              b = m_0 C - X (C - 2),\qquad a_w = y / K

    valid for any C > 0 (also C <= 1 and C = 1, where it reduces to
    y = X/(m0 + X)).

    Parameters
    ----------
    X : float or casadi.SX or casadi.MX
        Moisture content, [kg water / kg dry solids].
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    m0, C0, dH1, K0, dH2 : float
        GAB parameters as in `gab_moisture`.

    Returns
    -------
    float or casadi expression
        Water activity, [-]. May exceed 1 (moisture above what any air can
        hold at T: free water); the caller decides what that means.

    Raises
    ------
    InputError
        For numbers, if X < 0.

    References
    ----------
    The GAB isotherm, see `gab_moisture`; the quadratic is the polynomial
    form used to fit it (a_w/X = alpha a_w^2 + beta a_w + gamma).

    Examples
    --------
    >>> round(gab_water_activity(0.04997, 298.15, 0.05, 10.0, 0.0, 0.8, 0.0), 4)
    0.3
    """
    if not _is_symbolic(X, T) and X < 0.0:
        raise InputError(f"moisture content {float(X):g} kg/kg is negative", key="X")
    C, K = gab_constants(T, C0, dH1, K0, dH2)
    b = m0 * C - X * (C - 2.0)
    y = 2.0 * X / (b + ca.sqrt(b * b + 4.0 * X * X * (C - 1.0)))
    return y / K


# ---------------------------------------------------------------------------
# Named parameter sets


@dataclass(frozen=True)
class GabParameters:
    """A named GAB parameter set with the ranges of its fit.

    Parameters
    ----------
    name : str
        Registry name, e.g. ``"skim milk powder"``.
    m0 : float
        Monolayer moisture, [kg water / kg dry solids].
    C0 : float
        Pre-exponential factor of C, [-].
    dH1 : float
        Enthalpy difference for C, [J/mol].
    K0 : float
        Pre-exponential factor of K, [-].
    dH2 : float
        Enthalpy difference for K, [J/mol].
    T_range : tuple of float
        (low, high) temperature of the fit, [K].
    a_w_range : tuple of float
        (low, high) water activity of the fit, [-].
    source : str
        Full reference.
    confidence : str
        How the numbers were obtained ("read in the paper", or "from memory,
        low confidence, verify against the paper").
    """

    name: str
    m0: float
    C0: float
    dH1: float
    K0: float
    dH2: float
    T_range: tuple = field(default=(273.15, 373.15))
    a_w_range: tuple = field(default=(0.05, 0.9))
    source: str = ""
    confidence: str = ""

    @property
    def coefficients(self) -> dict:
        """The five GAB coefficients as keyword arguments of `gab_moisture`."""
        return dict(m0=self.m0, C0=self.C0, dH1=self.dH1, K0=self.K0, dH2=self.dH2)

    @property
    def validity(self) -> tuple:
        """The fit's ranges as `ValidRange` objects (for `RangeCheck`)."""
        return (ValidRange("T", self.T_range[0], self.T_range[1], "K"),
                ValidRange("a_w", self.a_w_range[0], self.a_w_range[1], "-"))

    def moisture(self, a_w, T):
        """Equilibrium moisture, `gab_moisture` with these coefficients, [kg/kg]."""
        return gab_moisture(a_w, T, **self.coefficients)

    def water_activity(self, X, T):
        """Water activity, `gab_water_activity` with these coefficients, [-]."""
        return gab_water_activity(X, T, **self.coefficients)


GAB_PARAMETERS = {
    "skim milk powder": GabParameters(
        name="skim milk powder",
        m0=0.06156, C0=0.001645, dH1=24831.0, K0=5.710, dH2=-5118.0,
        T_range=(298.15, 343.15), a_w_range=(0.05, 0.9),
        source=("Lin, S. X. Q., Chen, X. D. & Pearce, D. L. (2005). Desorption "
                "isotherm of milk powders at elevated temperatures and over a wide "
                "range of relative humidity. J. Food Eng. 68, 257-264 (GAB, "
                "desorption, with C and K Arrhenius in T)."),
        confidence=("from memory, low confidence, verify against the paper: values as "
                    "recalled from later spray-drying models that cite it; the T and "
                    "a_w ranges of the fit are also recalled, not read"),
    ),
}


def gab_parameters(name: str) -> GabParameters:
    """Look up a named GAB parameter set.

    Parameters
    ----------
    name : str
        Registry name (case-insensitive), one of ``GAB_PARAMETERS``.

    Returns
    -------
    GabParameters

    Raises
    ------
    InputError
        For an unknown name; the message lists the valid ones.

    Examples
    --------
    >>> gab_parameters("Skim milk powder").m0
    0.06156
    """
    key = name.strip().lower()
    if key not in GAB_PARAMETERS:
        raise InputError(f"unknown sorption parameter set {name!r}; valid: "
                         + ", ".join(repr(k) for k in sorted(GAB_PARAMETERS)), key="isotherm")
    return GAB_PARAMETERS[key]


def equilibrium_moisture_reachable(X_target, T, rh, params, policy: str = "refuse"):
    """Can air at (T, rh) dry a powder down to X_target? A numeric check.

    The powder can only approach the equilibrium moisture X_eq of the air
    it leaves the dryer with: X_eq = GAB(a_w = rh, T). A target at or above
    X_eq is reachable (given residence time); below it, not with that air.

    Parameters
    ----------
    X_target : float
        Target moisture content of the product, [kg water / kg dry solids].
    T : float
        Temperature of the powder and the air around it, [K].
    rh : float
        Relative humidity of that air, [-] (= equilibrium water activity).
    params : GabParameters or str
        The isotherm, or its registry name.
    policy : {"refuse", "warn"}
        Outside the parameter set's ranges: raise `OutOfRangeError`
        ("refuse", the default) or issue a `UserWarning` and go on ("warn").

    Returns
    -------
    (bool, float)
        Whether X_target >= X_eq, and X_eq in [kg water / kg dry solids].

    Raises
    ------
    InputError
        If X_target < 0 or rh outside [0, 1], or for an unknown name.
    OutOfRangeError
        Under ``policy="refuse"``, if T or rh lie outside the fit's ranges.

    Examples
    --------
    >>> ok, X_eq = equilibrium_moisture_reachable(0.04, 343.15, 0.10, "skim milk powder")
    >>> ok, round(X_eq, 4)
    (True, 0.0347)
    """
    if isinstance(params, str):
        params = gab_parameters(params)
    X_target, T, rh = float(X_target), float(T), float(rh)
    if not math.isfinite(X_target) or X_target < 0.0:
        raise InputError(f"target moisture {X_target:g} kg/kg must be a number >= 0",
                         key="X_target")
    if not 0.0 <= rh <= 1.0:
        raise InputError(f"relative humidity {rh:g} is outside [0, 1]", key="rh")
    T_range, a_w_range = params.validity
    checks = [RangeCheck("powder temperature", T, T_range, source=f"GAB isotherm of {params.name}"),
              RangeCheck("equilibrium water activity", rh, a_w_range,
                         source=f"GAB isotherm of {params.name}")]
    for message in enforce(checks, [T, rh], policy=policy):
        warnings.warn(message, UserWarning, stacklevel=2)
    X_eq = float(params.moisture(rh, T))
    if not math.isfinite(X_eq):
        raise OutOfRangeError(f"GAB isotherm of {params.name} gave X_eq = {X_eq} at "
                              f"T = {T:g} K, rh = {rh:g}", key="rh")
    return X_target >= X_eq, X_eq
