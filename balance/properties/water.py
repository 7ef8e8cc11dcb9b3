"""Water and steam: IAPWS-IF97 regions 1 (liquid), 2 (vapour) and 4 (saturation).

Implements the Revised Release on the IAPWS Industrial Formulation 1997 for
the Thermodynamic Properties of Water and Steam, IAPWS R7-97(2012), for the
three regions an evaporator or dryer line works in:

* region 1, compressed and saturated liquid (eqs. 7 and Table 3, coefficients
  Table 2);
* region 2, superheated and saturated vapour, the general equation with its
  ideal-gas part and residual part (eqs. 15-17 and Table 12, coefficients
  Tables 10 and 11; the metastable-vapour variant of section 6.2 is not
  used);
* region 4, the saturation line (eq. 30, p_s(T), and backward eq. 31, T_s(p),
  coefficients Table 34).

Every function is built from `casadi` arithmetic only, so the same call works
on Python floats (returning a float) and on CasADi ``SX``/``MX`` symbols
(returning an expression that can be differentiated). The coefficient tables
are module-level tuples; the sums loop over those constants, never over
values.

Enthalpy and entropy datum: IF97's, which is that of IAPWS-95: the specific
internal energy and the specific entropy of saturated liquid water at the
triple point are zero (u = 0, s = 0 at 273.16 K, 611.657 Pa; h there is
p v, about 0.61 J/kg). CoolProp's default water reference state is the same,
so enthalpies can be compared with CoolProp directly.

Validity ranges are declared with `~balance.properties.validity.valid_for`.
They are boxes in T and p; the region boundaries that depend on both (region 1
needs p >= p_s(T), region 2 needs p <= p_s(T) below 623.15 K) are stated in
the docstrings and must be checked by the caller.

Examples
--------
>>> import casadi as ca
>>> T = ca.SX.sym("T")
>>> dL_dT = ca.Function("dL_dT", [T], [ca.jacobian(latent_heat(T), T)])
>>> round(latent_heat(373.15) / 1e3, 1)    # kJ/kg
2256.5
>>> round(float(dL_dT(373.15)), 0)          # J/(kg K)
-2641.
"""

from __future__ import annotations

import casadi as ca

from balance.properties.validity import valid_for

__all__ = [
    "R_WATER", "T_TRIPLE", "P_TRIPLE", "T_CRITICAL", "P_CRITICAL", "MOLAR_MASS_WATER",
    "saturation_pressure", "saturation_temperature",
    "region1_enthalpy", "region1_entropy", "region1_heat_capacity", "region1_specific_volume",
    "region2_enthalpy", "region2_entropy", "region2_heat_capacity", "region2_specific_volume",
    "liquid_enthalpy", "liquid_entropy", "liquid_heat_capacity",
    "vapour_enthalpy", "vapour_entropy", "saturated_vapour_enthalpy", "latent_heat",
]

#: Specific gas constant of water, [J/(kg K)] (IAPWS R7-97(2012), eq. 1).
R_WATER = 461.526
#: Triple-point temperature, [K] (IAPWS R7-97(2012), section 2).
T_TRIPLE = 273.16
#: Triple-point pressure, [Pa] (IAPWS R7-97(2012), section 2).
P_TRIPLE = 611.657
#: Critical temperature, [K] (IAPWS R7-97(2012), eq. 3).
T_CRITICAL = 647.096
#: Critical pressure, [Pa] (IAPWS R7-97(2012), eq. 4).
P_CRITICAL = 22.064e6
#: Molar mass of water, [kg/mol] (IAPWS R7-97(2012), section 2).
MOLAR_MASS_WATER = 0.018015268

# Region boundaries used in the validity declarations, [K] and [Pa].
_T_MIN = 273.15          # lower temperature limit of IF97
_T_13 = 623.15           # boundary between regions 1 and 3
_T_2_MAX = 1073.15       # upper limit of region 2
_P_MAX = 100e6           # upper pressure limit of regions 1 and 2
_P_SAT_MIN = 611.213     # p_s(273.15 K), lower pressure limit of region 4

# ---------------------------------------------------------------------------
# Region 1, IAPWS R7-97(2012) Table 2: (I_i, J_i, n_i), i = 1..34.
# gamma(pi, tau) = sum n_i (7.1 - pi)^I_i (tau - 1.222)^J_i   (eq. 7)
_P1_STAR = 16.53e6   # [Pa]
_T1_STAR = 1386.0    # [K]
_REGION1 = (
    (0, -2, 0.14632971213167),
    (0, -1, -0.84548187169114),
    (0, 0, -0.37563603672040e1),
    (0, 1, 0.33855169168385e1),
    (0, 2, -0.95791963387872),
    (0, 3, 0.15772038513228),
    (0, 4, -0.16616417199501e-1),
    (0, 5, 0.81214629983568e-3),
    (1, -9, 0.28319080123804e-3),
    (1, -7, -0.60706301565874e-3),
    (1, -1, -0.18990068218419e-1),
    (1, 0, -0.32529748770505e-1),
    (1, 1, -0.21841717175414e-1),
    (1, 3, -0.52838357969930e-4),
    (2, -3, -0.47184321073267e-3),
    (2, 0, -0.30001780793026e-3),
    (2, 1, 0.47661393906987e-4),
    (2, 3, -0.44141845330846e-5),
    (2, 17, -0.72694996297594e-15),
    (3, -4, -0.31679644845054e-4),
    (3, 0, -0.28270797985312e-5),
    (3, 6, -0.85205128120103e-9),
    (4, -5, -0.22425281908000e-5),
    (4, -2, -0.65171222895601e-6),
    (4, 10, -0.14341729937924e-12),
    (5, -8, -0.40516996860117e-6),
    (8, -11, -0.12734301741641e-8),
    (8, -6, -0.17424871230634e-9),
    (21, -29, -0.68762131295531e-18),
    (23, -31, 0.14478307828521e-19),
    (29, -38, 0.26335781662795e-22),
    (30, -39, -0.11947622640071e-22),
    (31, -40, 0.18228094581404e-23),
    (32, -41, -0.93537087292458e-25),
)

# ---------------------------------------------------------------------------
# Region 2, ideal-gas part, IAPWS R7-97(2012) Table 10: (J0_i, n0_i), i = 1..9.
# gamma0(pi, tau) = ln(pi) + sum n0_i tau^J0_i   (eq. 16)
_P2_STAR = 1e6      # [Pa]
_T2_STAR = 540.0    # [K]
_REGION2_IDEAL = (
    (0, -0.96927686500217e1),
    (1, 0.10086655968018e2),
    (-5, -0.56087911283020e-2),
    (-4, 0.71452738081455e-1),
    (-3, -0.40710498223928),
    (-2, 0.14240819171444e1),
    (-1, -0.43839511319450e1),
    (2, -0.28408632460772),
    (3, 0.21268463753307e-1),
)

# Region 2, residual part, IAPWS R7-97(2012) Table 11: (I_i, J_i, n_i), i = 1..43.
# gamma_r(pi, tau) = sum n_i pi^I_i (tau - 0.5)^J_i   (eq. 17)
_REGION2_RESIDUAL = (
    (1, 0, -0.17731742473213e-2),
    (1, 1, -0.17834862292358e-1),
    (1, 2, -0.45996013696365e-1),
    (1, 3, -0.57581259083432e-1),
    (1, 6, -0.50325278727930e-1),
    (2, 1, -0.33032641670203e-4),
    (2, 2, -0.18948987516315e-3),
    (2, 4, -0.39392777243355e-2),
    (2, 7, -0.43797295650573e-1),
    (2, 36, -0.26674547914087e-4),
    (3, 0, 0.20481737692309e-7),
    (3, 1, 0.43870667284435e-6),
    (3, 3, -0.32277677238570e-4),
    (3, 6, -0.15033924542148e-2),
    (3, 35, -0.40668253562649e-1),
    (4, 1, -0.78847309559367e-9),
    (4, 2, 0.12790717852285e-7),
    (4, 3, 0.48225372718507e-6),
    (5, 7, 0.22922076337661e-5),
    (6, 3, -0.16714766451061e-10),
    (6, 16, -0.21171472321355e-2),
    (6, 35, -0.23895741934104e2),
    (7, 0, -0.59059564324270e-17),
    (7, 11, -0.12621808899101e-5),
    (7, 25, -0.38946842435739e-1),
    (8, 8, 0.11256211360459e-10),
    (8, 36, -0.82311340897998e1),
    (9, 13, 0.19809712802088e-7),
    (10, 4, 0.10406965210174e-18),
    (10, 10, -0.10234747095929e-12),
    (10, 14, -0.10018179379511e-8),
    (16, 29, -0.80882908646985e-10),
    (16, 50, 0.10693031879409),
    (18, 57, -0.33662250574171),
    (20, 20, 0.89185845355421e-24),
    (20, 35, 0.30629316876232e-12),
    (20, 48, -0.42002467698208e-5),
    (21, 21, -0.59056029685639e-25),
    (22, 53, 0.37826947613457e-5),
    (23, 39, -0.12768608934681e-14),
    (24, 26, 0.73087610595061e-28),
    (24, 40, 0.55414715350778e-16),
    (24, 58, -0.94369707241210e-6),
)

# ---------------------------------------------------------------------------
# Region 4, IAPWS R7-97(2012) Table 34: n_1 .. n_10 (T* = 1 K, p* = 1 MPa).
_N4 = (
    0.11670521452767e4,
    -0.72421316703206e6,
    -0.17073846940092e2,
    0.12020824702470e5,
    -0.32325550322333e7,
    0.14915108613530e2,
    -0.48232657361591e4,
    0.40511340542057e6,
    -0.23855557567849,
    0.65017534844798e3,
)
_P4_STAR = 1e6   # [Pa]


def _falling(k: int, m: int) -> int:
    """Falling factorial k (k-1) ... (k-m+1): the factor d^m/dx^m x^k brings down."""
    out = 1
    for j in range(m):
        out *= k - j
    return out


def _power_sums(terms, x, y, orders):
    """Derivatives of g(x, y) = sum n x^I y^J for each (a, b) in ``orders``.

    Returns ``[d^(a+b) g / dx^a dy^b for (a, b) in orders]``. The powers of
    ``x`` and ``y`` are computed once per distinct exponent and shared among
    all terms and orders; terms whose derivative vanishes are skipped. The
    loop runs over the constant coefficient table only.
    """
    cache = ({}, {})

    def power(which, base, e):
        if e == 0:
            return 1.0
        store = cache[which]
        if e not in store:
            store[e] = base if e == 1 else base ** e
        return store[e]

    out = []
    for a, b in orders:
        total = 0.0
        for i_exp, j_exp, n in terms:
            c = n * _falling(i_exp, a) * _falling(j_exp, b)
            if c != 0:
                total = total + c * power(0, x, i_exp - a) * power(1, y, j_exp - b)
        out.append(total)
    return out


def _region1(T, p, orders):
    """tau and the derivatives of gamma (eq. 7) in region 1.

    ``orders`` holds (order in pi, order in tau). A derivative in pi of
    (7.1 - pi)^I carries a factor -1 per order.
    """
    tau = _T1_STAR / T
    sums = _power_sums(_REGION1, 7.1 - p / _P1_STAR, tau - 1.222, orders)
    return tau, [(-1) ** a * g for (a, _), g in zip(orders, sums)]


def _region2_ideal(tau, orders):
    """Derivatives in tau of the tau-dependent part of gamma0 (eq. 16)."""
    terms = tuple((j, 0, n) for j, n in _REGION2_IDEAL)   # nine constants
    return _power_sums(terms, tau, 1.0, [(b, 0) for b in orders])


# ---------------------------------------------------------------------------
# Region 4


@valid_for(T=(_T_MIN, T_CRITICAL, "K"))
def saturation_pressure(T):
    r"""Saturation pressure of water, IAPWS-IF97 region 4, eq. 30.

    .. math::
        \vartheta = T + \frac{n_9}{T - n_{10}},\quad
        A = \vartheta^2 + n_1\vartheta + n_2,\quad
        B = n_3\vartheta^2 + n_4\vartheta + n_5,\quad
        C = n_6\vartheta^2 + n_7\vartheta + n_8,

    .. math::
        \frac{p_s}{1\ \mathrm{MPa}} =
        \left[\frac{2C}{-B + \sqrt{B^2 - 4AC}}\right]^4

    with T in kelvin and the n_i of Table 34.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Saturation pressure, [Pa].

    Notes
    -----
    Valid from 273.15 K to the critical point, 647.096 K. Differs from
    IAPWS-95 (CoolProp) by at most 1.8e-4 relative over that range
    (measured).

    References
    ----------
    IAPWS R7-97(2012), Revised Release on the IAPWS Industrial Formulation
    1997 for the Thermodynamic Properties of Water and Steam, section 8.1,
    eq. 30, Table 34; verification values Table 35.

    Examples
    --------
    >>> round(saturation_pressure(373.15), 1)   # Pa
    101418.0
    """
    n = _N4
    theta = T + n[8] / (T - n[9])
    theta2 = theta * theta
    A = theta2 + n[0] * theta + n[1]
    B = n[2] * theta2 + n[3] * theta + n[4]
    C = n[5] * theta2 + n[6] * theta + n[7]
    ratio = 2.0 * C / (-B + ca.sqrt(B * B - 4.0 * A * C))
    ratio2 = ratio * ratio
    return _P4_STAR * ratio2 * ratio2


@valid_for(p=(_P_SAT_MIN, P_CRITICAL, "Pa"))
def saturation_temperature(p):
    r"""Saturation temperature of water, IAPWS-IF97 region 4, backward eq. 31.

    .. math::
        \beta = (p / 1\ \mathrm{MPa})^{1/4},\quad
        E = \beta^2 + n_3\beta + n_6,\quad
        F = n_1\beta^2 + n_4\beta + n_7,\quad
        G = n_2\beta^2 + n_5\beta + n_8,

    .. math::
        D = \frac{2G}{-F - \sqrt{F^2 - 4EG}},\quad
        \frac{T_s}{1\ \mathrm{K}} =
        \frac{n_{10} + D - \sqrt{(n_{10} + D)^2 - 4(n_9 + n_{10}D)}}{2}

    Eq. 31 is the exact inverse of eq. 30 (the same quadratic solved for the
    other variable), so the two agree to rounding.

    Parameters
    ----------
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Saturation temperature, [K].

    Notes
    -----
    Valid from 611.213 Pa (p_s at 273.15 K) to the critical pressure,
    22.064 MPa.

    References
    ----------
    IAPWS R7-97(2012), section 8.2, eq. 31, Table 34; verification values
    Table 36.

    Examples
    --------
    >>> round(saturation_temperature(101325.0), 3)   # K
    373.124
    """
    n = _N4
    beta = (p / _P4_STAR) ** 0.25
    beta2 = beta * beta
    E = beta2 + n[2] * beta + n[5]
    F = n[0] * beta2 + n[3] * beta + n[6]
    G = n[1] * beta2 + n[4] * beta + n[7]
    D = 2.0 * G / (-F - ca.sqrt(F * F - 4.0 * E * G))
    n10_D = n[9] + D
    return 0.5 * (n10_D - ca.sqrt(n10_D * n10_D - 4.0 * (n[8] + n[9] * D)))


# ---------------------------------------------------------------------------
# Region 1

_REGION1_RANGE = dict(T=(_T_MIN, _T_13, "K"), p=(_P_SAT_MIN, _P_MAX, "Pa"))


@valid_for(**_REGION1_RANGE)
def region1_enthalpy(T, p):
    r"""Specific enthalpy of liquid water, IAPWS-IF97 region 1.

    .. math::
        h = R T \tau \gamma_\tau,\quad
        \gamma = \sum_{i=1}^{34} n_i (7.1 - \pi)^{I_i} (\tau - 1.222)^{J_i},
        \quad \pi = p / 16.53\ \mathrm{MPa},\ \tau = 1386\ \mathrm{K} / T

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific enthalpy, [J/kg], IF97 datum (u = s = 0 for saturated
        liquid at the triple point).

    Notes
    -----
    Region 1: 273.15 K <= T <= 623.15 K and p_s(T) <= p <= 100 MPa. The
    declared p range is the box 611.213 Pa to 100 MPa; the caller checks
    p >= p_s(T).

    References
    ----------
    IAPWS R7-97(2012), section 5, eq. 7, Tables 2 and 3; verification values
    Table 5.

    Examples
    --------
    >>> round(region1_enthalpy(300.0, 3e6), 3)   # J/kg
    115331.273
    """
    tau, (g_tau,) = _region1(T, p, [(0, 1)])
    return R_WATER * T * tau * g_tau


@valid_for(**_REGION1_RANGE)
def region1_entropy(T, p):
    r"""Specific entropy of liquid water, IAPWS-IF97 region 1.

    .. math:: s = R (\tau \gamma_\tau - \gamma)

    with gamma, pi and tau as in `region1_enthalpy`.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific entropy, [J/(kg K)], IF97 datum.

    Notes
    -----
    Region 1: 273.15 K <= T <= 623.15 K and p_s(T) <= p <= 100 MPa.

    References
    ----------
    IAPWS R7-97(2012), section 5, eq. 7, Tables 2 and 3; verification values
    Table 5.

    Examples
    --------
    >>> round(region1_entropy(300.0, 3e6), 5)   # J/(kg K)
    392.29479
    """
    tau, (g, g_tau) = _region1(T, p, [(0, 0), (0, 1)])
    return R_WATER * (tau * g_tau - g)


@valid_for(**_REGION1_RANGE)
def region1_heat_capacity(T, p):
    r"""Isobaric specific heat capacity of liquid water, IAPWS-IF97 region 1.

    .. math:: c_p = -R \tau^2 \gamma_{\tau\tau}

    with gamma, pi and tau as in `region1_enthalpy`.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Isobaric specific heat capacity, [J/(kg K)].

    Notes
    -----
    Region 1: 273.15 K <= T <= 623.15 K and p_s(T) <= p <= 100 MPa.

    References
    ----------
    IAPWS R7-97(2012), section 5, eq. 7, Tables 2 and 3; verification values
    Table 5.

    Examples
    --------
    >>> round(region1_heat_capacity(300.0, 3e6), 4)   # J/(kg K)
    4173.0122
    """
    tau, (g_tautau,) = _region1(T, p, [(0, 2)])
    return -R_WATER * tau * tau * g_tautau


@valid_for(**_REGION1_RANGE)
def region1_specific_volume(T, p):
    r"""Specific volume of liquid water, IAPWS-IF97 region 1.

    .. math:: v = \frac{R T}{p} \pi \gamma_\pi

    with gamma, pi and tau as in `region1_enthalpy`.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific volume, [m3/kg].

    Notes
    -----
    Region 1: 273.15 K <= T <= 623.15 K and p_s(T) <= p <= 100 MPa.

    References
    ----------
    IAPWS R7-97(2012), section 5, eq. 7, Tables 2 and 3; verification values
    Table 5.

    Examples
    --------
    >>> round(region1_specific_volume(300.0, 3e6) * 1e3, 8)   # dm3/kg
    1.00215168
    """
    _, (g_pi,) = _region1(T, p, [(1, 0)])
    return R_WATER * T / _P1_STAR * g_pi


# ---------------------------------------------------------------------------
# Region 2

_REGION2_RANGE = dict(T=(_T_MIN, _T_2_MAX, "K"), p=(0.0, _P_MAX, "Pa"))


@valid_for(**_REGION2_RANGE)
def region2_enthalpy(T, p):
    r"""Specific enthalpy of steam, IAPWS-IF97 region 2.

    .. math::
        h = R T \tau (\gamma^o_\tau + \gamma^r_\tau),\quad
        \gamma^o = \ln\pi + \sum_{i=1}^{9} n^o_i \tau^{J^o_i},\quad
        \gamma^r = \sum_{i=1}^{43} n_i \pi^{I_i} (\tau - 0.5)^{J_i}

    with pi = p / 1 MPa and tau = 540 K / T.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific enthalpy, [J/kg], IF97 datum.

    Notes
    -----
    Region 2: 0 < p <= p_s(T) for 273.15 K <= T <= 623.15 K, up to the B23
    line from 623.15 K to 863.15 K and up to 100 MPa from 863.15 K to
    1073.15 K. The declared box is 273.15-1073.15 K, 0-100 MPa; the caller
    checks p <= p_s(T). The general region 2 equation holds on the
    saturated-vapour line itself.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17, Tables 10-12; verification
    values Table 15.

    Examples
    --------
    >>> round(region2_enthalpy(300.0, 3500.0), 2)   # J/kg
    2549911.45
    """
    tau = _T2_STAR / T
    (g0_tau,) = _region2_ideal(tau, [1])
    (gr_tau,) = _power_sums(_REGION2_RESIDUAL, p / _P2_STAR, tau - 0.5, [(0, 1)])
    return R_WATER * T * tau * (g0_tau + gr_tau)


@valid_for(**_REGION2_RANGE)
def region2_entropy(T, p):
    r"""Specific entropy of steam, IAPWS-IF97 region 2.

    .. math::
        s = R [\tau (\gamma^o_\tau + \gamma^r_\tau) - (\gamma^o + \gamma^r)]

    with the gammas, pi and tau as in `region2_enthalpy`.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific entropy, [J/(kg K)], IF97 datum.

    Notes
    -----
    Region 2, see `region2_enthalpy`.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17, Tables 10-12; verification
    values Table 15.

    Examples
    --------
    >>> round(region2_entropy(300.0, 3500.0), 5)   # J/(kg K)
    8522.38967
    """
    pi = p / _P2_STAR
    tau = _T2_STAR / T
    g0, g0_tau = _region2_ideal(tau, [0, 1])
    gr, gr_tau = _power_sums(_REGION2_RESIDUAL, pi, tau - 0.5, [(0, 0), (0, 1)])
    return R_WATER * (tau * (g0_tau + gr_tau) - (ca.log(pi) + g0 + gr))


@valid_for(**_REGION2_RANGE)
def region2_heat_capacity(T, p):
    r"""Isobaric specific heat capacity of steam, IAPWS-IF97 region 2.

    .. math:: c_p = -R \tau^2 (\gamma^o_{\tau\tau} + \gamma^r_{\tau\tau})

    with the gammas, pi and tau as in `region2_enthalpy`.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Isobaric specific heat capacity, [J/(kg K)].

    Notes
    -----
    Region 2, see `region2_enthalpy`.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17, Tables 10-12; verification
    values Table 15.

    Examples
    --------
    >>> round(region2_heat_capacity(300.0, 3500.0), 5)   # J/(kg K)
    1913.00162
    """
    tau = _T2_STAR / T
    (g0_tt,) = _region2_ideal(tau, [2])
    (gr_tt,) = _power_sums(_REGION2_RESIDUAL, p / _P2_STAR, tau - 0.5, [(0, 2)])
    return -R_WATER * tau * tau * (g0_tt + gr_tt)


@valid_for(**_REGION2_RANGE)
def region2_specific_volume(T, p):
    r"""Specific volume of steam, IAPWS-IF97 region 2.

    .. math:: v = \frac{R T}{p} \pi (\gamma^o_\pi + \gamma^r_\pi),
        \quad \gamma^o_\pi = 1/\pi

    with the gammas, pi and tau as in `region2_enthalpy`.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa].

    Returns
    -------
    float or casadi expression
        Specific volume, [m3/kg].

    Notes
    -----
    Region 2, see `region2_enthalpy`.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17, Tables 10-12; verification
    values Table 15.

    Examples
    --------
    >>> round(region2_specific_volume(300.0, 3500.0), 5)   # m3/kg
    39.49139
    """
    pi = p / _P2_STAR
    (gr_pi,) = _power_sums(_REGION2_RESIDUAL, pi, _T2_STAR / T - 0.5, [(1, 0)])
    return R_WATER * T / p * (1.0 + pi * gr_pi)


# ---------------------------------------------------------------------------
# Liquid and vapour of an evaporator line

_LIQUID_RANGE = dict(T=(_T_MIN, _T_13, "K"))


@valid_for(**_LIQUID_RANGE)
def liquid_enthalpy(T):
    r"""Specific enthalpy of saturated liquid water at T, from IAPWS-IF97 region 1.

    .. math:: h_f(T) = h_1(T, p_s(T))

    Used for saturated and for compressed liquid alike: the pressure effect
    is neglected. At constant T, (dh/dp)_T = v (1 - alpha T), 60-100 J/kg
    per bar between 420 K and 300 K (75 J/kg per bar at 100 °C: 0.02 % of h,
    or 0.02 K of sensible heat); an evaporator line sees a few bar at most.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Specific enthalpy, [J/kg], IF97 datum (u = s = 0 for saturated
        liquid at the triple point).

    Notes
    -----
    Valid from 273.15 K to 623.15 K (the region 1 part of the saturation
    line).

    References
    ----------
    IAPWS R7-97(2012), region 1 (eq. 7, Tables 2, 3) evaluated at the region 4
    saturation pressure (eq. 30).

    Examples
    --------
    >>> round(liquid_enthalpy(373.15) / 1e3, 2)   # kJ/kg
    419.1
    """
    return region1_enthalpy(T, saturation_pressure(T))


@valid_for(**_LIQUID_RANGE)
def liquid_entropy(T):
    r"""Specific entropy of saturated liquid water at T, from IAPWS-IF97 region 1.

    .. math:: s_f(T) = s_1(T, p_s(T))

    Used for compressed liquid as well; the pressure effect, (ds/dp)_T =
    -v alpha, is about -0.08 J/(kg K) per bar at 100 °C and is neglected.

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Specific entropy, [J/(kg K)], IF97 datum.

    Notes
    -----
    Valid from 273.15 K to 623.15 K.

    References
    ----------
    IAPWS R7-97(2012), region 1 (eq. 7, Tables 2, 3) evaluated at the region 4
    saturation pressure (eq. 30).

    Examples
    --------
    >>> round(liquid_entropy(373.15), 1)   # J/(kg K)
    1307.0
    """
    return region1_entropy(T, saturation_pressure(T))


@valid_for(**_LIQUID_RANGE)
def liquid_heat_capacity(T):
    r"""Isobaric specific heat capacity of saturated liquid water at T, IAPWS-IF97.

    .. math:: c_{p,f}(T) = c_{p,1}(T, p_s(T))

    This is the isobaric heat capacity on the saturation line, not the
    derivative of `liquid_enthalpy` along it (they differ by
    v (1 - alpha T) dp_s/dT: 0.06 % at 100 °C, 0.18 % at 150 °C).

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Isobaric specific heat capacity, [J/(kg K)].

    Notes
    -----
    Valid from 273.15 K to 623.15 K.

    References
    ----------
    IAPWS R7-97(2012), region 1 (eq. 7, Tables 2, 3) evaluated at the region 4
    saturation pressure (eq. 30).

    Examples
    --------
    >>> round(liquid_heat_capacity(373.15), 0)   # J/(kg K)
    4216.
    """
    return region1_heat_capacity(T, saturation_pressure(T))


@valid_for(**_REGION2_RANGE)
def vapour_enthalpy(T, p):
    r"""Specific enthalpy of superheated or saturated steam, IAPWS-IF97 region 2.

    .. math:: h_v(T, p) = h_2(T, p)

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa]; at most p_s(T) below 623.15 K.

    Returns
    -------
    float or casadi expression
        Specific enthalpy, [J/kg], IF97 datum.

    Notes
    -----
    Region 2, see `region2_enthalpy`.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17, Tables 10-12.

    Examples
    --------
    >>> round(vapour_enthalpy(423.15, 101325.0) / 1e3, 1)   # kJ/kg
    2776.6
    """
    return region2_enthalpy(T, p)


@valid_for(**_REGION2_RANGE)
def vapour_entropy(T, p):
    r"""Specific entropy of superheated or saturated steam, IAPWS-IF97 region 2.

    .. math:: s_v(T, p) = s_2(T, p)

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].
    p : float or casadi.SX or casadi.MX
        Pressure, [Pa]; at most p_s(T) below 623.15 K.

    Returns
    -------
    float or casadi expression
        Specific entropy, [J/(kg K)], IF97 datum.

    Notes
    -----
    Region 2, see `region2_enthalpy`.

    References
    ----------
    IAPWS R7-97(2012), section 6.1, eqs. 15-17, Tables 10-12.

    Examples
    --------
    >>> round(vapour_entropy(423.15, 101325.0), 0)   # J/(kg K)
    7608.
    """
    return region2_entropy(T, p)


@valid_for(**_LIQUID_RANGE)
def saturated_vapour_enthalpy(T):
    r"""Specific enthalpy of saturated steam at T, IAPWS-IF97 region 2.

    .. math:: h_g(T) = h_2(T, p_s(T))

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Specific enthalpy, [J/kg], IF97 datum.

    Notes
    -----
    Valid from 273.15 K to 623.15 K (above, the saturated vapour lies in
    region 3).

    References
    ----------
    IAPWS R7-97(2012), region 2 (eqs. 15-17, Tables 10-12) evaluated at the
    region 4 saturation pressure (eq. 30).

    Examples
    --------
    >>> round(saturated_vapour_enthalpy(373.15) / 1e3, 1)   # kJ/kg
    2675.6
    """
    return region2_enthalpy(T, saturation_pressure(T))


@valid_for(**_LIQUID_RANGE)
def latent_heat(T):
    r"""Latent heat of vaporisation of water at T, IAPWS-IF97.

    .. math:: \Delta h_v(T) = h_2(T, p_s(T)) - h_1(T, p_s(T))

    Parameters
    ----------
    T : float or casadi.SX or casadi.MX
        Temperature, [K].

    Returns
    -------
    float or casadi expression
        Specific enthalpy of vaporisation, [J/kg].

    Notes
    -----
    Valid from 273.15 K to 623.15 K.

    References
    ----------
    IAPWS R7-97(2012), regions 1, 2 and 4 (eqs. 7, 15-17, 30).

    Examples
    --------
    >>> round(latent_heat(373.15) / 1e3, 1)   # kJ/kg
    2256.5
    """
    p_s = saturation_pressure(T)
    return region2_enthalpy(T, p_s) - region1_enthalpy(T, p_s)
