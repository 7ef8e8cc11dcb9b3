r"""Specific heat capacity of aqueous liquors: one correlation per published source.

Every correlation has the same signature::

    f(x, T, **coefficients) -> c_p [J/(kg K)]

with ``x`` the solids mass fraction [-] and ``T`` the liquor temperature
[K]. Coefficients are keyword arguments in SI (J/(kg K)). Each function
carries its validity ranges as data (``func.validity``) and a one-line
citation (``func.reference``). All arithmetic is CasADi-compatible.

`CP_MODELS` maps the names used in flowsheet files to the functions.
"""

from __future__ import annotations

import math
from typing import Mapping, Sequence

from balance.errors import InputError
from balance.properties.validity import valid_for
from balance.properties.water import liquid_heat_capacity

from ._common import cite, horner, require_coefficients

__all__ = [
    "CP_MODELS", "CHOI_OKOS_COMPONENTS",
    "iapws_if97_water", "polynomial", "geankoplis_sugar", "siebel", "choi_okos",
]


@cite("liquid water, IAPWS-IF97 (IAPWS R7-97(2012), region 1 on the saturation line)")
@valid_for(x=(0.0, 0.0, "-"), T=(273.15, 623.15, "K"))
def iapws_if97_water(x, T):
    r"""Heat capacity of pure liquid water, IAPWS-IF97.

    .. math:: c_p = c_{p,1}(T, p_s(T))

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-]; must be 0 (declared range).
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Specific heat capacity, [J/(kg K)].

    References
    ----------
    IAPWS R7-97(2012), region 1, via
    `balance.properties.water.liquid_heat_capacity`.

    Examples
    --------
    >>> round(iapws_if97_water(0.0, 373.15))
    4217
    """
    return liquid_heat_capacity(T) + 0.0 * x


@cite("polynomial in the solids mass fraction, user coefficients [J/(kg K)]")
@valid_for(x=(0.0, 1.0, "-"))
def polynomial(x, T, coefficients: Sequence[float]):
    r"""Heat capacity as a polynomial in the solids mass fraction.

    .. math:: c_p = \sum_{i=0}^{n} c_i x^i

    independent of temperature.

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-].
    T : float or casadi.SX or casadi.MX
        Temperature, [K] (unused).
    coefficients : sequence of float
        ``c_0, c_1, ..., c_n``, [J/(kg K)].

    Returns
    -------
    float or casadi expression
        Specific heat capacity, [J/(kg K)].

    Notes
    -----
    The range the coefficients were fitted over is declared on the liquor
    (``solids_range``).

    Examples
    --------
    >>> polynomial(0.5, 330.0, coefficients=[4190.0, -2350.0])
    3015.0
    """
    coefficients = require_coefficients(coefficients, "coefficients")
    return horner(x, coefficients)


@cite("sugar solutions, c_p = 4190 - 2350 x J/(kg K), Geankoplis, Transport Processes "
       "and Separation Process Principles, 4th ed. (2003), ch. 8")
@valid_for(x=(0.0, 0.7, "-"), T=(273.15, 393.15, "K"))
def geankoplis_sugar(x, T):
    r"""Heat capacity of aqueous sugar (sucrose) solutions, linear in x.

    .. math:: c_p = 4190 - 2350\,x \quad [\mathrm{J/(kg\,K)}]

    (4.19 - 2.35 x kJ/(kg K) in the source.)

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Sugar mass fraction, [-].
    T : float or casadi.SX or casadi.MX
        Temperature, [K] (unused).

    Returns
    -------
    float or casadi expression
        Specific heat capacity, [J/(kg K)].

    Notes
    -----
    Independent of temperature. At x = 0 it gives 4190 J/(kg K), within
    1 % of IAPWS-IF97 water between 0 and 100 °C. Declared range 0-70 %
    sugar, 0-120 °C (the source's own range is not stated in the copy
    read).

    References
    ----------
    Geankoplis, C. J., Transport Processes and Separation Process
    Principles, 4th ed., Prentice Hall (2003), ch. 8 (evaporation),
    heat capacity of sugar solutions [read].

    Examples
    --------
    >>> geankoplis_sugar(0.5, 330.0)
    3015.0
    """
    return 4190.0 - 2350.0 * x


@cite("Siebel (1892), c_p = 837 + 3349 x_w J/(kg K), foods above freezing (recalled)")
@valid_for(x=(0.0, 0.7, "-"), T=(273.15, 393.15, "K"))
def siebel(x, T):
    r"""Heat capacity of high-moisture foods above freezing, Siebel (1892).

    .. math:: c_p = 837 + 3349\,x_w \quad [\mathrm{J/(kg\,K)}],\qquad x_w = 1 - x

    (0.837 + 3.349 x_w kJ/(kg K) in the usual modern statement.)

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-].
    T : float or casadi.SX or casadi.MX
        Temperature, [K] (unused).

    Returns
    -------
    float or casadi expression
        Specific heat capacity, [J/(kg K)].

    Notes
    -----
    Treats all solids alike, with a solids heat capacity of 837 J/(kg K);
    that is low for sugars and proteins (about 1.2-2.0 kJ/(kg K)), so the
    form runs a few per cent low for milk and far low for concentrated
    syrups. Intended for unfrozen foods rich in water; declared range
    0-70 % solids, 0-120 °C [memory].

    References
    ----------
    Siebel, J. E., Specific heats of various products, Ice and
    Refrigeration 2 (1892) 256-257 [from memory]; the form as quoted in food
    engineering texts.

    Examples
    --------
    >>> siebel(0.09, 293.15)
    3884.59
    """
    return 837.0 + 3349.0 * (1.0 - x)


# Choi & Okos (1986) pure-component heat capacities, kJ/(kg K), t in °C:
# c_p,i = c0 + c1 t + c2 t^2.
_CHOI_OKOS = {
    "water": (4.1762, -9.0864e-5, 5.4731e-6),         # [read]
    "carbohydrate": (1.5488, 1.9625e-3, -5.9399e-6),  # [read]
    "protein": (2.0082, 1.2089e-3, -1.3129e-6),       # [read]
    "fat": (1.9842, 1.4733e-3, -4.8008e-6),           # [memory]; one copy prints 1.4373e-3
    "fibre": (1.8459, 1.8306e-3, -4.6509e-6),         # [memory]
    "ash": (1.0926, 1.8896e-3, -3.6817e-6),           # [memory]
}

#: Dry-solids components of `choi_okos`, as keys of its ``composition``.
CHOI_OKOS_COMPONENTS = ("carbohydrate", "protein", "fat", "fibre", "ash")


def _choi_okos_component(name: str, T):
    """c_p of one Choi-Okos component at T [K], in J/(kg K)."""
    c0, c1, c2 = _CHOI_OKOS[name]
    t = T - 273.15
    return 1000.0 * (c0 + t * (c1 + t * c2))


def _checked_composition(composition) -> dict:
    """Validate a dry-solids composition: known components, sum 1."""
    if not isinstance(composition, Mapping):
        raise InputError("composition must be a table of component mass fractions of the "
                         f"dry solids, got {composition!r}", key="composition")
    out = {}
    for name, value in composition.items():
        if name not in CHOI_OKOS_COMPONENTS:
            raise InputError(f"unknown solids component {name!r}; valid: "
                             f"{', '.join(CHOI_OKOS_COMPONENTS)}", key="composition")
        if isinstance(value, bool) or not isinstance(value, (int, float)) \
                or not math.isfinite(value) or value < 0.0:
            raise InputError(f"fraction of {name!r} must be a number >= 0, got {value!r}",
                             key="composition")
        out[name] = float(value)
    total = sum(out.values())
    if abs(total - 1.0) > 1e-3:
        raise InputError(f"component fractions of the dry solids must sum to 1, got {total:g}",
                         key="composition", hint="give mass fractions of the dry solids")
    return out


@cite("Choi & Okos (1986) composition model, c_p = sum x_i c_p,i(T), in Food "
       "Engineering and Process Applications vol. 1 (pure-component fits as tabulated "
       "in ASHRAE Handbook - Refrigeration)")
@valid_for(x=(0.0, 1.0, "-"), T=(273.15, 423.15, "K"))
def choi_okos(x, T, composition: Mapping[str, float]):
    r"""Heat capacity of an unfrozen food from its composition, Choi & Okos (1986).

    .. math::
        c_p = (1 - x)\, c_{p,w}(t) + x \sum_i f_i\, c_{p,i}(t),\qquad
        c_{p,i}(t) = C_{0,i} + C_{1,i} t + C_{2,i} t^2

    with ``t`` in °C and the component fits (kJ/(kg K)):

    ============  =======  ===========  ===========
    component     C0       C1           C2
    ============  =======  ===========  ===========
    water         4.1762   -9.0864e-5   5.4731e-6
    carbohydrate  1.5488   1.9625e-3    -5.9399e-6
    protein       2.0082   1.2089e-3    -1.3129e-6
    fat           1.9842   1.4733e-3    -4.8008e-6
    fibre         1.8459   1.8306e-3    -4.6509e-6
    ash           1.0926   1.8896e-3    -3.6817e-6
    ============  =======  ===========  ===========

    Parameters
    ----------
    x : float or casadi.SX or casadi.MX
        Solids mass fraction, [-].
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    composition : mapping of str to float
        Mass fraction of each component in the dry solids, [-], summing to
        1; keys among ``carbohydrate`` (lactose, sucrose, starch),
        ``protein``, ``fat``, ``fibre``, ``ash``.

    Returns
    -------
    float or casadi expression
        Specific heat capacity, [J/(kg K)], quadratic in T.

    Notes
    -----
    Above freezing only (no ice term); the fits cover -40 to 150 °C, the
    declared range is 0-150 °C. Water, carbohydrate and protein
    coefficients were read; fat, fibre and ash are recalled. The linear fat
    coefficient is printed 1.4733e-3 in one copy and 1.4373e-3 in another;
    the difference is below 4 J/(kg K) of fat at 100 °C, negligible here.
    The model is additive (no interaction between water and solids) and
    runs about 1 % low for skim milk against measurements.

    References
    ----------
    Choi, Y., Okos, M. R., Effects of temperature and composition on the
    thermal properties of foods, in: Le Maguer, M., Jelen, P. (eds.), Food
    Engineering and Process Applications, vol. 1, Elsevier (1986) 93-101
    [editors and pages from memory];
    tabulated in ASHRAE Handbook - Refrigeration, thermal properties of
    foods.

    Examples
    --------
    Skim milk, 9 % solids, at 20 °C:

    >>> skim = {"carbohydrate": 0.52, "protein": 0.38, "ash": 0.09, "fat": 0.01}
    >>> round(choi_okos(0.09, 293.15, composition=skim))
    3955
    """
    fractions = _checked_composition(composition)
    solids = 0.0
    for name, f in fractions.items():
        solids = solids + f * _choi_okos_component(name, T)
    return (1.0 - x) * _choi_okos_component("water", T) + x * solids


#: Heat-capacity correlations by the name used in flowsheet files.
CP_MODELS = {
    "iapws_if97_water": iapws_if97_water,
    "polynomial": polynomial,
    "geankoplis_sugar": geankoplis_sugar,
    "siebel": siebel,
    "choi_okos": choi_okos,
}
