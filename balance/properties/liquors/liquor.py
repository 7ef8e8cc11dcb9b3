r"""The `Liquor`: one boiling-point-rise model and one heat-capacity model, one enthalpy datum.

A liquor is water with dissolved solids, described by the solids mass
fraction ``x`` [-]. `Liquor` composes a correlation from
`~balance.properties.liquors.boiling_point_rise` with one from
`~balance.properties.liquors.heat_capacity` and defines the liquor enthalpy
on the datum every stream of `balance` shares: liquid water at the triple
point, u = s = 0 (IAPWS). This module also holds the built-in liquors
(`BUILTIN_LIQUORS`) and builds user liquors from flowsheet-file tables
(`liquor_from_table`).

Heat of dilution (heat of solution) is neglected in every liquor: the
enthalpy of a liquor is that of its water plus the sensible heat of its
solids relative to water. That is fair for sugar and dairy liquors and
poor for caustic soda.
"""

from __future__ import annotations

import inspect
import math
import types
import warnings
from dataclasses import dataclass, field, replace
from typing import Any, Callable, ClassVar, Mapping

from balance.errors import BalanceError, InputError
from balance.properties.validity import RangeCheck, ValidRange
from balance.properties.water import (T_TRIPLE, liquid_enthalpy, saturation_pressure,
                                      saturation_temperature)

from . import boiling_point_rise as bpr
from . import heat_capacity as cp
from .boiling_point_rise import BPR_MODELS
from .heat_capacity import CP_MODELS

__all__ = [
    "Liquor", "LiquorWarning", "BUILTIN_LIQUORS", "builtin_liquor", "liquor_from_table",
    "SKIM_MILK_SOLIDS", "WHOLE_MILK_SOLIDS",
]

# Three-point Gauss-Legendre rule on [-1, 1]: exact for polynomials of degree 5.
_GL_NODE = math.sqrt(3.0 / 5.0)
_GL_WEIGHTS = (5.0 / 9.0, 8.0 / 9.0, 5.0 / 9.0)

_IF97_WATER = ("IAPWS-IF97 (IAPWS R7-97(2012)): saturation temperature and liquid-water "
               "enthalpy; enthalpy datum liquid water at the triple point (u = s = 0)")


class LiquorWarning(UserWarning):
    """A liquor model is used where it is known to be approximate."""


@dataclass(frozen=True, eq=False)
class Liquor:
    r"""Water with dissolved solids: boiling-point rise, heat capacity, enthalpy.

    Parameters
    ----------
    name : str
        Name used in flowsheet files and reports.
    description : str
        One line for reports.
    bpr_model : callable
        ``f(x, T_water, p, **bpr_coefficients) -> BPR [K]``, from
        `~balance.properties.liquors.boiling_point_rise`.
    cp_model : callable
        ``f(x, T, **cp_coefficients) -> c_p [J/(kg K)]``, from
        `~balance.properties.liquors.heat_capacity`.
    bpr_coefficients, cp_coefficients : mapping, optional
        Keyword arguments of the two models, SI (K; J/(kg K)).
    solids_range : (float, float), optional
        Solids mass fractions the liquor data are good for, [-], checked in
        addition to the models' own ranges.
    notes : tuple of str, optional
        Further sources and assumptions, listed in `sources`.
    cautions : tuple of str, optional
        Known weaknesses a report should print beside the results.

    Notes
    -----
    The enthalpy is

    .. math::
        h(x, T) = h_f(T) + \int_{T_{tp}}^{T}
                  \left[c_p(x, T') - c_p(0, T')\right] \mathrm{d}T'

    with ``h_f`` the IAPWS-IF97 enthalpy of liquid water (datum u = s = 0
    at the triple point, T_tp = 273.16 K). So ``x = 0`` reproduces IF97
    water exactly, every stream shares one datum, and a model's mismatch
    with water at ``x = 0`` (4190 against 4216 J/(kg K) at 100 °C, say) does
    not leak into the energy balance. The integral is evaluated by
    three-point Gauss-Legendre quadrature, exact for heat capacities
    polynomial in T up to degree 5 (all built-in models). Hence
    ``dh/dT = dh_f/dT + c_p(x, T) - c_p(0, T)``, which equals the model's
    ``c_p(x, T)`` up to its water mismatch.

    Heat of dilution is NOT included (`heat_of_dilution_included` is
    False): mixing water and solids at one temperature releases no heat in
    this model.

    Examples
    --------
    >>> syrup = builtin_liquor("sucrose")
    >>> round(syrup.boiling_temperature(0.5, 101_325.0) - 273.15, 2)   # °C
    101.8
    >>> round(syrup.heat_capacity(0.5, 330.0))                         # J/(kg K)
    3015
    >>> round(syrup.enthalpy(0.0, 330.0) - liquid_enthalpy(330.0), 9)  # J/kg
    0.0
    """

    name: str
    description: str
    bpr_model: Callable = bpr.no_rise
    cp_model: Callable = cp.iapws_if97_water
    bpr_coefficients: Mapping[str, Any] = field(default_factory=dict)
    cp_coefficients: Mapping[str, Any] = field(default_factory=dict)
    solids_range: tuple[float, float] | None = None
    notes: tuple[str, ...] = ()
    cautions: tuple[str, ...] = ()

    #: Heat of dilution (heat of solution) is not modelled by any liquor.
    heat_of_dilution_included: ClassVar[bool] = False

    def __post_init__(self):
        object.__setattr__(self, "bpr_coefficients",
                           types.MappingProxyType(dict(self.bpr_coefficients)))
        object.__setattr__(self, "cp_coefficients",
                           types.MappingProxyType(dict(self.cp_coefficients)))

    def __repr__(self) -> str:
        return (f"Liquor({self.name!r}, bpr={self.bpr_model.__name__}, "
                f"cp={self.cp_model.__name__})")

    # -- properties -----------------------------------------------------------

    def boiling_point_rise(self, x, T_water, p):
        """Boiling-point rise, [K], at solids fraction x [-], water boiling
        temperature T_water [K] and pressure p [Pa]."""
        return self.bpr_model(x, T_water, p, **self.bpr_coefficients)

    def boiling_temperature(self, x, p):
        """Boiling temperature of the liquor, [K]: T_s(p) (IAPWS-IF97) + BPR."""
        T_water = saturation_temperature(p)
        return T_water + self.boiling_point_rise(x, T_water, p)

    def heat_capacity(self, x, T):
        """Specific heat capacity, [J/(kg K)], at solids fraction x [-] and T [K]."""
        return self.cp_model(x, T, **self.cp_coefficients)

    def enthalpy(self, x, T):
        """Specific enthalpy, [J/kg], datum liquid water at the triple point.

        ``h = h_f(T) + int_{T_tp}^{T} [c_p(x, T') - c_p(0, T')] dT'`` by
        three-point Gauss-Legendre quadrature; no heat of dilution.
        """
        mid = 0.5 * (T + T_TRIPLE)
        half = 0.5 * (T - T_TRIPLE)
        integral = 0.0
        for weight, node in zip(_GL_WEIGHTS, (-_GL_NODE, 0.0, _GL_NODE)):
            T_node = mid + node * half
            excess = self.heat_capacity(x, T_node) - self.heat_capacity(0.0, T_node)
            integral = integral + weight * excess
        return liquid_enthalpy(T) + half * integral

    # -- validity and sources -------------------------------------------------

    def range_checks(self, x, T=None, p=None, label: str = "liquor",
                     unit: str | None = None) -> list[RangeCheck]:
        """Validity checks for the caller to evaluate on numbers.

        Parameters
        ----------
        x : float or casadi expression
            Solids mass fraction, [-].
        T : float or casadi expression, optional
            Liquor temperature, [K]; checks of the heat-capacity model.
        p : float or casadi expression, optional
            Pressure, [Pa], where the liquor boils; checks of the
            boiling-point-rise model (its ``T_water`` is ``T_s(p)``). Leave
            out where the liquor does not boil (a preheater).
        label : str
            Where the checks apply, in plant words ("E2 liquor").
        unit : str, optional
            The unit operation, for messages.

        Returns
        -------
        list of RangeCheck
            One per declared range of the models in use, plus the liquor's
            ``solids_range``.
        """
        values = {"x": x}
        if T is not None:
            values["T"] = T
        models = [(self.cp_model, "heat capacity")]
        if p is not None:
            values["p"] = p
            values["T_water"] = saturation_temperature(p)
            models.insert(0, (self.bpr_model, "boiling-point rise"))
        checks = []
        for model, what in models:
            for valid in getattr(model, "validity", ()):
                if valid.name in values:
                    checks.append(RangeCheck(label=f"{label} {what}",
                                             value=values[valid.name], valid=valid,
                                             source=model.__name__, unit=unit))
        if self.solids_range is not None:
            low, high = self.solids_range
            checks.append(RangeCheck(label=f"{label} solids",
                                     value=x, valid=ValidRange("x", low, high, "-"),
                                     source=f"liquor '{self.name}'", unit=unit))
        return checks

    @property
    def sources(self) -> list[str]:
        """Citations of the models and data in use, for reports."""
        out = []
        for text in (getattr(self.bpr_model, "reference", self.bpr_model.__name__),
                     getattr(self.cp_model, "reference", self.cp_model.__name__),
                     *self.notes, _IF97_WATER,
                     "heat of dilution neglected"):
            if text not in out:
                out.append(text)
        return out


# ---------------------------------------------------------------------------
# Built-in liquors

#: Dry-solids composition of skim milk for `~heat_capacity.choi_okos`
#: [common practice / from memory]: about 5.0 % lactose, 3.5 % protein,
#: 0.8 % ash and 0.1 % fat in 9 % total solids.
SKIM_MILK_SOLIDS = types.MappingProxyType(
    {"carbohydrate": 0.52, "protein": 0.38, "ash": 0.09, "fat": 0.01})
#: Dry-solids composition of whole milk [common practice / from memory]: about
#: 4.8 % lactose, 3.3 % protein, 3.7 % fat and 0.7 % ash in 12.5 % total solids.
WHOLE_MILK_SOLIDS = types.MappingProxyType(
    {"carbohydrate": 0.38, "protein": 0.26, "fat": 0.30, "ash": 0.06})

_NAOH_CAUTION = ("sodium hydroxide: the heat of dilution is large and is NOT modelled; "
                 "energy results are approximate (use an enthalpy-concentration chart "
                 "for design)")

BUILTIN_LIQUORS: dict[str, Liquor] = {
    "water": Liquor(
        "water", "pure water (IAPWS-IF97), no dissolved solids",
        bpr.no_rise, cp.iapws_if97_water, solids_range=(0.0, 0.0)),
    "sucrose": Liquor(
        "sucrose", "aqueous sucrose: Starzak-Peacock water activity, Geankoplis c_p",
        bpr.starzak_peacock_sucrose, cp.geankoplis_sugar),
    "sucrose_simple": Liquor(
        "sucrose_simple", "aqueous sucrose: simple Geankoplis BPR and c_p",
        bpr.geankoplis_sucrose, cp.geankoplis_sugar),
    "sodium_hydroxide": Liquor(
        "sodium_hydroxide", "aqueous NaOH: Geankoplis Dühring lines; heat of dilution "
        "not modelled",
        bpr.geankoplis_sodium_hydroxide, cp.polynomial,
        cp_coefficients={"coefficients": (4190.0, -1840.0)},
        notes=("NaOH c_p = 4190 - 1840 x J/(kg K), linear between water and about "
               "3.27 kJ/(kg K) (0.78 Btu/(lb F)) at 50 % NaOH [common practice, from "
               "memory; +-5 %]",),
        cautions=(_NAOH_CAUTION,)),
    "skim_milk": Liquor(
        "skim_milk", "skim-milk concentrate: colligative BPR (low confidence), "
        "Choi-Okos c_p",
        bpr.dairy_colligative, cp.choi_okos,
        bpr_coefficients={"osmolality": bpr.SKIM_MILK_OSMOLALITY},
        cp_coefficients={"composition": dict(SKIM_MILK_SOLIDS)},
        notes=("skim-milk solids 52 % lactose, 38 % protein, 9 % ash, 1 % fat "
               "[common practice / from memory]",)),
    "whole_milk": Liquor(
        "whole_milk", "whole-milk concentrate: colligative BPR (low confidence), "
        "Choi-Okos c_p",
        bpr.dairy_colligative, cp.choi_okos,
        bpr_coefficients={"osmolality": bpr.WHOLE_MILK_OSMOLALITY},
        cp_coefficients={"composition": dict(WHOLE_MILK_SOLIDS)},
        notes=("whole-milk solids 38 % lactose, 26 % protein, 30 % fat, 6 % ash "
               "[common practice / from memory]",)),
}


def builtin_liquor(name: str) -> Liquor:
    """The built-in liquor called ``name``.

    ==================  ==============================  =================================
    name                boiling-point rise              heat capacity
    ==================  ==============================  =================================
    water               none                            IAPWS-IF97
    sucrose             Starzak & Peacock (1997)        Geankoplis 4190 - 2350 x
    sucrose_simple      Geankoplis 1.78 x + 6.22 x^2    Geankoplis 4190 - 2350 x
    sodium_hydroxide    Geankoplis Fig. 8.4-2 Dühring   4190 - 1840 x (from memory)
    skim_milk           colligative (low confidence)    Choi & Okos, skim-milk solids
    whole_milk          colligative (low confidence)    Choi & Okos, whole-milk solids
    ==================  ==============================  =================================

    ``sodium_hydroxide``: the heat of dilution of NaOH is large and is NOT
    modelled, so energy balances with it are approximate; asking for it
    issues a `LiquorWarning`, and the caution is kept in ``cautions`` for
    reports.

    Raises
    ------
    InputError
        For an unknown name; the message lists the valid ones.

    Examples
    --------
    >>> builtin_liquor("skim_milk").cp_model.__name__
    'choi_okos'
    >>> builtin_liquor("molasses")
    Traceback (most recent call last):
    ...
    balance.errors.InputError: key 'liquor': unknown liquor 'molasses'; valid: water, ...
    """
    try:
        liquor = BUILTIN_LIQUORS[name]
    except (KeyError, TypeError):
        raise InputError(f"unknown liquor {name!r}; valid: {', '.join(BUILTIN_LIQUORS)}",
                         key="liquor") from None
    for caution in liquor.cautions:
        warnings.warn(caution, LiquorWarning, stacklevel=2)
    return liquor


# ---------------------------------------------------------------------------
# User liquors from flowsheet-file tables

_TABLE_KEYS = ("base", "description", "boiling_point_rise", "heat_capacity", "solids_range")

# Kind of each model parameter, as written in a flowsheet file.
_PARAMETER_KINDS = {
    "coefficients": "a list of numbers",
    "lines": "a list of [x, a, b] lines",
    "composition": "a table of component fractions",
    "alpha": "a number", "beta": "a number", "gamma": "a number", "delta": "a number",
    "p_unit": "a number", "osmolality": "a number",
}

_SECTIONS = {
    # key: (registry, number of leading arguments that are not coefficients, field names)
    "boiling_point_rise": (BPR_MODELS, 3, "bpr_model", "bpr_coefficients"),
    "heat_capacity": (CP_MODELS, 2, "cp_model", "cp_coefficients"),
}


def _is_number(value) -> bool:
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value))


def _check_kind(value, kind: str) -> bool:
    if kind == "a number":
        return _is_number(value)
    if kind == "a list of numbers":
        return (isinstance(value, (list, tuple)) and len(value) > 0
                and all(_is_number(v) for v in value))
    if kind == "a list of [x, a, b] lines":
        return (isinstance(value, (list, tuple)) and len(value) > 0
                and all(isinstance(r, (list, tuple)) and len(r) == 3
                        and all(_is_number(v) for v in r) for r in value))
    if kind == "a table of component fractions":
        return isinstance(value, Mapping) and all(_is_number(v) for v in value.values())
    raise AssertionError(kind)


def _model_from_table(section: str, spec, fail) -> tuple[Callable, dict]:
    """Model function and coefficients from one ``{"model": ..., ...}`` table."""
    registry, n_args, _, _ = _SECTIONS[section]
    if isinstance(spec, str):
        spec = {"model": spec}
    if not isinstance(spec, Mapping):
        fail(f"must be a model name or a table with a 'model' key, got {spec!r}", section)
    if "model" not in spec:
        fail(f"missing key 'model'; valid models: {', '.join(registry)}", f"{section}.model")
    model_name = spec["model"]
    if not isinstance(model_name, str) or model_name not in registry:
        fail(f"unknown model {model_name!r}; valid: {', '.join(registry)}", f"{section}.model")
    func = registry[model_name]
    parameters = list(inspect.signature(func).parameters.values())[n_args:]
    names = [par.name for par in parameters]
    coefficients = {}
    for key, value in spec.items():
        if key == "model":
            continue
        if key not in names:
            valid = ", ".join(names) if names else "none"
            fail(f"unknown key {key!r} for model {model_name!r}; valid: {valid}",
                 f"{section}.{key}")
        kind = _PARAMETER_KINDS[key]
        if not _check_kind(value, kind):
            fail(f"must be {kind}, got {value!r}", f"{section}.{key}")
        coefficients[key] = dict(value) if isinstance(value, Mapping) else value
    for par in parameters:
        if par.default is inspect.Parameter.empty and par.name not in coefficients:
            fail(f"missing key {par.name!r} ({_PARAMETER_KINDS[par.name]}) for model "
                 f"{model_name!r}", f"{section}.{par.name}")
    return func, coefficients


def liquor_from_table(name: str, table: Mapping, file: str | None = None) -> Liquor:
    r"""Build a user liquor from a flowsheet-file table.

    Parameters
    ----------
    name : str
        The liquor's name (its key under ``liquors`` in the file).
    table : mapping
        Keys:

        ``base`` (str, optional)
            A built-in liquor (see `builtin_liquor`) to start from; the
            other keys then override its parts.
        ``description`` (str, optional)
        ``boiling_point_rise`` (table or model name; required without ``base``)
            ``{"model": <name in BPR_MODELS>, <coefficient>: <value>, ...}``
        ``heat_capacity`` (table or model name; required without ``base``)
            ``{"model": <name in CP_MODELS>, <coefficient>: <value>, ...}``
        ``solids_range`` ([low, high], optional)
            Solids mass fractions the data are good for, [-].

        Coefficients are SI: kelvin for boiling-point rise coefficients and
        Dühring intercepts (``lines`` rows ``[x, a, b]`` with
        ``T_boil = a + b T_water`` in K), J/(kg K) for heat-capacity
        coefficients, Pa for ``p_unit``, mol/kg for ``osmolality``;
        ``composition`` gives mass fractions of the dry solids.
    file : str, optional
        The flowsheet file, for messages.

    Returns
    -------
    Liquor

    Raises
    ------
    InputError
        For a missing, unknown or mistyped key, an unknown model or base
        name (the message lists the valid ones), or coefficients giving a
        non-finite value; located at ``unit='liquors.<name>'`` and the
        offending key.

    Examples
    --------
    >>> syrup = liquor_from_table("syrup", {
    ...     "boiling_point_rise": {"model": "polynomial", "coefficients": [0, 1.78, 6.22]},
    ...     "heat_capacity": {"model": "polynomial", "coefficients": [4190, -2350]},
    ...     "solids_range": [0, 0.7]})
    >>> round(syrup.boiling_point_rise(0.5, 373.12, 101_325.0), 3)
    2.445
    >>> liquor_from_table("syrup", {"base": "sucrose", "colour": "amber"}, file="plant.toml")
    Traceback (most recent call last):
    ...
    balance.errors.InputError: plant.toml: unit 'liquors.syrup': key 'colour': unknown key 'colour'; ...
    """
    unit = f"liquors.{name}"

    def fail(message: str, key: str | None, hint: str | None = None):
        raise InputError(message, file=file, unit=unit, key=key, hint=hint)

    if not isinstance(table, Mapping):
        fail(f"a liquor must be a table of keys, got {table!r}", None)
    for key in table:
        if key not in _TABLE_KEYS:
            fail(f"unknown key {key!r}; valid: {', '.join(_TABLE_KEYS)}", key)

    if "base" in table:
        base = table["base"]
        if not isinstance(base, str) or base not in BUILTIN_LIQUORS:
            fail(f"unknown base liquor {base!r}; valid: {', '.join(BUILTIN_LIQUORS)}", "base")
        liquor = replace(BUILTIN_LIQUORS[base], name=name)
        if liquor.cautions:
            for caution in liquor.cautions:
                warnings.warn(f"liquor '{name}': {caution}", LiquorWarning, stacklevel=2)
    else:
        for key in ("boiling_point_rise", "heat_capacity"):
            if key not in table:
                fail(f"missing key {key!r} (or give 'base', one of "
                     f"{', '.join(BUILTIN_LIQUORS)})", key)
        liquor = Liquor(name, f"user liquor '{name}'")

    changes: dict[str, Any] = {}
    if "description" in table:
        if not isinstance(table["description"], str):
            fail(f"must be a string, got {table['description']!r}", "description")
        changes["description"] = table["description"]
    for section, (_, _, model_field, coefficients_field) in _SECTIONS.items():
        if section in table:
            func, coefficients = _model_from_table(section, table[section], fail)
            changes[model_field] = func
            changes[coefficients_field] = coefficients
    if "solids_range" in table:
        rng = table["solids_range"]
        if not (isinstance(rng, (list, tuple)) and len(rng) == 2
                and all(_is_number(v) for v in rng) and 0.0 <= rng[0] <= rng[1] <= 1.0):
            fail(f"must be [low, high] with 0 <= low <= high <= 1, got {rng!r}", "solids_range")
        changes["solids_range"] = (float(rng[0]), float(rng[1]))
    liquor = replace(liquor, **changes)
    _trial(liquor, fail)
    return liquor


def _trial(liquor: Liquor, fail) -> None:
    """Evaluate the liquor once inside its ranges; a bad coefficient set fails here."""
    lows, highs = [0.0], [1.0]
    for model in (liquor.bpr_model, liquor.cp_model):
        for valid in getattr(model, "validity", ()):
            if valid.name == "x":
                lows.append(valid.low)
                highs.append(valid.high)
    if liquor.solids_range is not None:
        lows.append(liquor.solids_range[0])
        highs.append(liquor.solids_range[1])
    low, high = max(lows), min(highs)
    x = 0.5 * (low + high) if low <= high else low
    T = 333.15
    p = saturation_pressure(T)
    for section, evaluate in (
            ("boiling_point_rise", lambda: liquor.boiling_point_rise(x, T, p)),
            ("heat_capacity", lambda: liquor.enthalpy(x, T) + liquor.heat_capacity(x, T))):
        try:
            value = float(evaluate())
        except BalanceError as err:
            key = f"{section}.{err.key}" if err.key else section
            fail(err.message, key, err.hint)
        except (ArithmeticError, TypeError, ValueError) as err:
            fail(f"cannot be evaluated at x = {x:g}, T = {T:g} K: {err}", section)
        if not math.isfinite(value):
            fail(f"gives a non-finite value ({value}) at x = {x:g}, T = {T:g} K, "
                 f"p = {p:g} Pa", section)
