"""Checks of solvsel.science.hansen against published values and outside references.

Sources named beside each check.  "Hansen (2007)" is Hansen, C. M., *Hansen
Solubility Parameters: A User's Handbook*, 2nd ed., CRC Press, 2007, Appendix A;
the same values are in the ``chemicals`` library dataset MANUEL_RUBEN_2022
(Diaz de los Rios & Murcia Belmonte, SN Appl. Sci. 4, 185, 2022), which the
first test uses to confirm the numbers typed here.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from solvsel.science import hansen as H
from solvsel.errors import InputError, MissingDataError, OutOfRangeError

# Hansen (2007) values [MPa^0.5]
HSP = {
    "acetone": ("67-64-1", (15.5, 10.4, 7.0)),
    "toluene": ("108-88-3", (18.0, 1.4, 2.0)),
    "ethyl acetate": ("141-78-6", (15.8, 5.3, 7.2)),
    "n-hexane": ("110-54-3", (14.9, 0.0, 0.0)),
    "methanol": ("67-56-1", (14.7, 12.3, 22.3)),
    "ethanol": ("64-17-5", (15.8, 8.8, 19.4)),
    "water": ("7732-18-5", (15.5, 16.0, 42.3)),
    "propylene glycol": ("57-55-6", (16.8, 10.4, 21.3)),
    "glycerol": ("56-81-5", (17.4, 11.3, 27.2)),
}


def hsp(name):
    return HSP[name][1]


def test_typed_values_match_the_reference_library():
    # the chemicals library's MANUEL_RUBEN_2022 dataset carries Hansen's table;
    # values are given to 0.1 MPa^0.5, so agreement within 0.05 means same number
    from chemicals.solubility import hansen_delta_d, hansen_delta_h, hansen_delta_p

    for name, (cas, values) in HSP.items():
        lib = [f(cas, method="MANUEL_RUBEN_2022") / 1000.0 for f in (hansen_delta_d, hansen_delta_p, hansen_delta_h)]
        assert lib == pytest.approx(values, abs=0.05), name


@pytest.mark.parametrize(
    "a, b, squared_sum",
    [
        # worked by hand from Hansen (2007) values: 4*dD^2 + dP^2 + dH^2
        ("acetone", "toluene", 4 * 2.5**2 + 9.0**2 + 5.0**2),  # 131.00
        ("n-hexane", "ethanol", 4 * 0.9**2 + 8.8**2 + 19.4**2),  # 457.04
        ("ethyl acetate", "methanol", 4 * 1.1**2 + 7.0**2 + 15.1**2),  # 281.85
        ("propylene glycol", "water", 4 * 1.3**2 + 5.6**2 + 21.0**2),  # 479.12
        ("glycerol", "n-hexane", 4 * 2.5**2 + 11.3**2 + 27.2**2),  # 892.53
        ("ethanol", "water", 4 * 0.3**2 + 7.2**2 + 22.9**2),  # 576.61
    ],
)
def test_ra_worked_by_hand(a, b, squared_sum):
    # tolerance 1e-9: the arithmetic is exact up to rounding
    assert float(H.ra(hsp(a), hsp(b))) == pytest.approx(math.sqrt(squared_sum), rel=1e-9)
    assert float(H.red(hsp(a), hsp(b), 8.0)) == pytest.approx(math.sqrt(squared_sum) / 8.0, rel=1e-9)


def test_ra_is_vectorised_and_symmetric():
    names = list(HSP)
    pts = np.array([hsp(n) for n in names])
    m = H.ra(pts[:, None, :], pts[None, :, :])
    assert m.shape == (len(names), len(names))
    assert np.allclose(m, m.T) and np.allclose(np.diag(m), 0.0)
    assert m[names.index("acetone"), names.index("toluene")] == pytest.approx(math.sqrt(131.0))


def test_ra_to_surface_sign():
    # inside the sphere is negative (a good solvent), by definition
    assert float(H.ra_to_surface(hsp("acetone"), hsp("toluene"), 12.0)) == pytest.approx(math.sqrt(131) - 12)
    assert H.ra_to_surface(hsp("acetone"), hsp("toluene"), 12.0) < 0
    with pytest.raises(InputError):
        H.ra_to_surface(hsp("acetone"), hsp("toluene"), 0.0)


def test_mix_worked_by_hand_and_two_non_solvents_make_a_solvent():
    # Hansen (2007), ch. 1: the blend is the volume-fraction average, so two
    # liquids each outside a sphere can average to a point inside it.
    # n-hexane and ethanol 60/40 by volume: dD = 0.6*14.9 + 0.4*15.8 = 15.26,
    # dP = 0.4*8.8 = 3.52, dH = 0.4*19.4 = 7.76 (worked by hand).
    b = H.mix([hsp("n-hexane"), hsp("ethanol")], [0.6, 0.4])
    assert b.tolist() == pytest.approx([15.26, 3.52, 7.76], abs=1e-12)
    # a solute sphere at that point with R0 = 5 (illustrative; e.g. an
    # aroma chemical of middling polarity): both pure liquids lie outside,
    # the blend inside.
    centre, r0 = [15.3, 3.5, 7.8], 5.0
    assert H.red(hsp("n-hexane"), centre, r0) > 1 and H.red(hsp("ethanol"), centre, r0) > 1
    assert H.red(b, centre, r0) < 0.05


def test_mix_broadcasts_many_blends():
    pts = np.array([hsp("ethanol"), hsp("water"), hsp("propylene glycol")])
    rng = np.random.default_rng(0)
    f = rng.dirichlet(np.ones(3), size=1000)
    out = H.mix(pts, f)
    assert out.shape == (1000, 3)
    assert np.allclose(out, f @ pts)


@pytest.mark.parametrize("bad", [[0.5, 0.6], [1.2, -0.2], [0.5, np.nan]])
def test_mix_rejects_bad_fractions(bad):
    with pytest.raises(InputError, match="fractions"):
        H.mix([hsp("ethanol"), hsp("water")], bad)


def test_mix_rejects_wrong_count():
    with pytest.raises(InputError, match="expected 2 fractions"):
        H.mix([hsp("ethanol"), hsp("water")], [0.2, 0.3, 0.5])


def test_convert_fractions_against_published_ethanol_strengths():
    # 40 % v/v ethanol is 34.0 % w/w in the international alcoholometric tables
    # (OIML R 22, 1975, at 20 C; from memory).  Additive volumes give 34.5 %:
    # the 0.5-point gap is the volume contraction, so tolerance 0.01.
    rho = [0.7893, 0.9982]  # ethanol and water at 20 C, CRC Handbook (from memory)
    w = H.convert_fractions([0.4, 0.6], "volume", "mass", density_g_cm3=rho)
    assert w[0] == pytest.approx(0.340, abs=0.01)
    # and back: the round trip is exact
    back = H.convert_fractions(w, "mass", "volume", density_g_cm3=rho)
    assert back == pytest.approx([0.4, 0.6], rel=1e-12)


def test_convert_fractions_mole_basis_worked_by_hand():
    # 50/50 by mass ethanol (46.07 g/mol) and water (18.015 g/mol):
    # x_ethanol = (50/46.07) / (50/46.07 + 50/18.015) = 0.2811 (by hand)
    x = H.convert_fractions([0.5, 0.5], "mass", "mole", mw_g_mol=[46.07, 18.015])
    assert x[0] == pytest.approx(0.2811, abs=1e-4)
    # volume -> mole goes through mass
    v = H.convert_fractions(x, "mole", "volume", density_g_cm3=[0.789, 0.997], mw_g_mol=[46.07, 18.015])
    assert v == pytest.approx(H.convert_fractions([0.5, 0.5], "mass", "volume", density_g_cm3=[0.789, 0.997]))


def test_convert_fractions_needs_data():
    with pytest.raises(MissingDataError, match="density"):
        H.convert_fractions([0.5, 0.5], "volume", "mass")
    with pytest.raises(MissingDataError, match="mw_g_mol"):
        H.convert_fractions([0.5, 0.5], "mass", "mole", mw_g_mol=[46.07, None])
    with pytest.raises(InputError, match="frm"):
        H.convert_fractions([0.5, 0.5], "weight", "mass")


@pytest.mark.parametrize(
    "cas, values, lo, hi",
    [
        # Outside reference: the total solubility parameter sqrt((Hvap - RT)/Vm)
        # of the `thermo` library at 25 and 60 C (its vapour-pressure / Hvap
        # and liquid-volume correlations).  Hansen and Beerbower's rules are a
        # first-order approximation (Hansen 2007, ch. 1): we ask that the
        # predicted fall of the total parameter be within 25 % of the library's
        # (measured here: 0.78-1.08); a dispersion-only liquid within 10 %.
        ("110-54-3", hsp("n-hexane"), 0.9, 1.1),
        ("108-88-3", hsp("toluene"), 0.75, 1.25),
        ("64-17-5", hsp("ethanol"), 0.75, 1.25),
        ("67-64-1", hsp("acetone"), 0.75, 1.25),
        ("141-78-6", hsp("ethyl acetate"), 0.75, 1.25),
    ],
)
def test_temperature_shift_against_reference_library(cas, values, lo, hi):
    from thermo import Chemical

    c25, c60 = Chemical(cas, T=298.15), Chemical(cas, T=333.15)
    alpha = math.log(c60.Vml / c25.Vml) / 35.0
    shifted, vm = H.shift_temperature(values, alpha, 60.0, vm_cm3_mol=100.0)
    predicted = np.linalg.norm(shifted) / np.linalg.norm(values) - 1
    library = c60.solubility_parameter / c25.solubility_parameter - 1
    assert lo < predicted / library < hi
    assert vm == pytest.approx(100.0 * c60.Vml / c25.Vml, rel=1e-9)


def test_temperature_shift_follows_the_handbooks_trend():
    # Hansen (2007), ch. 1: all three fall on heating, dH fastest (its rule has
    # the extra 1.22e-3 /K); cooling raises them; no change at the reference.
    base = np.array(hsp("ethanol"))
    hot = H.shift_temperature(base, 1.1e-3, 70.0)
    cold = H.shift_temperature(base, 1.1e-3, -40.0)
    assert np.all(hot < base) and np.all(cold > base)
    rel = 1 - hot / base
    assert rel[2] > rel[0] > rel[1]
    assert H.shift_temperature(base, 1.1e-3, 25.0) == pytest.approx(base)
    # worked by hand: dH(70 C) = 19.4 exp(-(1.22e-3 + 0.55e-3) * 45) = 17.91
    assert hot[2] == pytest.approx(19.4 * math.exp(-(1.22e-3 + 0.5 * 1.1e-3) * 45.0), rel=1e-12)
    assert hot[2] == pytest.approx(17.91, abs=0.005)


def test_temperature_shift_is_vectorised():
    pts = np.array([hsp("ethanol"), hsp("n-hexane"), hsp("water")])
    out = H.shift_temperature(pts, np.array([1.1e-3, 1.4e-3, 2.6e-4]), 40.0)
    one = H.shift_temperature(pts[1], 1.4e-3, 40.0)
    assert out.shape == (3, 3) and out[1] == pytest.approx(one)


def test_temperature_shift_range_is_enforced():
    with pytest.raises(OutOfRangeError, match="boiling point"):
        H.shift_temperature(hsp("n-hexane"), 1.4e-3, 80.0, bp_C=68.7)
    with pytest.raises(OutOfRangeError, match="melting point"):
        H.shift_temperature(hsp("water"), 2.6e-4, -10.0, mp_C=0.0)
    with pytest.raises(OutOfRangeError, match="-80 to 150"):
        H.shift_temperature(hsp("toluene"), 1.1e-3, 200.0)
    with pytest.raises(OutOfRangeError, match="alpha"):
        H.shift_temperature(hsp("toluene"), 0.5, 30.0)
    with pytest.raises(MissingDataError):
        H.shift_temperature(hsp("toluene"), np.nan, 30.0)
    # unknown points (NaN) are not checked
    H.shift_temperature(hsp("toluene"), 1.1e-3, 30.0, mp_C=np.nan, bp_C=np.nan)


def test_chi_and_critical_chi_worked_by_hand():
    # chi = V1 Ra^2 / (4 R T): n-hexane (V 131.6, Hansen 2007) with ethanol at 25 C
    # = 131.6 * 457.04 / (4 * 8.314462618 * 298.15) = 6.066 (by hand)
    chi = float(H.chi_flory_huggins(hsp("n-hexane"), hsp("ethanol"), 131.6, 25.0))
    assert chi == pytest.approx(131.6 * 457.04 / (4 * 8.314462618 * 298.15), rel=1e-9)
    # Flory (1953): chi_c = 1/2 (1 + 1/sqrt(N))^2 with N the size ratio
    assert float(H.chi_critical(100.0, 100.0)) == 2.0
    assert float(H.chi_critical(50.0, 200.0)) == pytest.approx(0.5 * 1.5**2)


@pytest.mark.parametrize("chi", [2.05, 2.5, 3.0, 4.0, 6.0, 10.0, 20.0])
def test_symmetric_binodal_matches_the_closed_form(chi):
    # Symmetric regular solution (Flory 1953 / any thermodynamics text): the
    # coexisting phases obey ln(phi / (1 - phi)) = chi (2 phi - 1); phi_b = 1 - phi_a.
    b = H.binodal(chi)
    assert b.success and b.split
    p = b.phi_a
    assert math.log(p / (1 - p)) == pytest.approx(chi * (2 * p - 1), rel=1e-8)
    assert b.phi_b == pytest.approx(1 - p, rel=1e-9, abs=1e-15)


def test_symmetric_binodal_tabulated_point():
    # chi = 3: phi = 0.0707 (the classic root; e.g. Prausnitz et al. 1999, ch. 7
    # regular-solution example, from memory) to the printed 4 digits
    assert H.binodal(3.0).phi_a == pytest.approx(0.0707, abs=5e-5)


def test_unequal_binodal_satisfies_equal_chemical_potentials():
    # Independent check of the common tangent: the exchange chemical potentials
    # from the Flory-Huggins expressions (Flory 1953, eqs. XII-) are equal in
    # both phases.
    n1, n2, chi = 1.0, 4.0, 1.6
    b = H.binodal(chi, n1, n2)
    assert b.success and b.split and chi > b.chi_critical

    def mu1(p):  # per molecule of 1, /RT
        return math.log(1 - p) + (1 - n1 / n2) * p + chi * n1 * p * p

    def mu2(p):
        return math.log(p) + (1 - n2 / n1) * (1 - p) + chi * n2 * (1 - p) ** 2

    assert mu1(b.phi_a) == pytest.approx(mu1(b.phi_b), abs=1e-9)
    assert mu2(b.phi_a) == pytest.approx(mu2(b.phi_b), abs=1e-9)


def test_miscible_below_critical():
    b = H.binodal(1.9)
    assert not b.split and math.isnan(b.phi_a)


def test_ideal_solubility_against_published_fusion_data():
    # Naphthalene: Tm and Hfus from the chemicals library; ideal x at 25 C is
    # quoted as 0.30 in Prausnitz et al. (1999, ch. 11) (from memory), 2 digits
    from chemicals import Hfus, Tm

    x = H.ideal_solubility(25.0, Tm("91-20-3") - 273.15, Hfus("91-20-3") / 1000.0)
    assert x == pytest.approx(0.30, abs=0.01)
    with pytest.raises(OutOfRangeError, match="melting point"):
        H.ideal_solubility(90.0, 80.2, 19.0)
    with pytest.raises(MissingDataError):
        H.ideal_solubility(25.0, None, 19.0)


def test_activity_coefficient_limits():
    # pure solute: gamma = 1 (x2 = 1, phi1 = 0); equal HSP and equal sizes: 1 everywhere
    g = H.ln_gamma_hansen(1.0, hsp("toluene"), 120.0, hsp("ethanol"), 58.5)
    assert float(g) == pytest.approx(0.0, abs=1e-12)
    g2 = H.ln_gamma_hansen([0.0, 0.3], hsp("toluene"), 100.0, hsp("toluene"), 100.0)
    assert np.allclose(g2, 0.0)


def test_partition_prefers_the_closer_phase():
    # A hydrocarbon-like solute between water and n-hexane goes to the hexane
    # (common practice: oils wash out of water into hexane).
    p = H.partition_coefficient([17.2, 1.8, 4.3], 162.0, hsp("water"), 18.0, hsp("n-hexane"), 131.6)
    assert p.k_c > 1e3 and p.log10_k_c == pytest.approx(math.log10(p.k_c))
    swapped = H.partition_coefficient([17.2, 1.8, 4.3], 162.0, hsp("n-hexane"), 131.6, hsp("water"), 18.0)
    assert swapped.k_c == pytest.approx(1 / p.k_c, rel=1e-9)


def test_blend_pseudo_solvent_limits_and_hand_values():
    # a "blend" of one liquid is that liquid; mole-average volume worked by hand
    # (see the doctest): ethanol / water 50/50 by volume -> 27.5 cm^3/mol
    h, v, m = H.blend_pseudo_solvent([hsp("ethanol"), hsp("water")], [1.0, 0.0], [58.5, 18.0], [46.07, 18.015])
    assert h.tolist() == pytest.approx(list(hsp("ethanol"))) and v == pytest.approx(58.5) and m == pytest.approx(46.07)
    _, v2, _ = H.blend_pseudo_solvent([hsp("ethanol"), hsp("water")], [0.5, 0.5], [58.5, 18.0], [46.07, 18.015])
    assert v2 == pytest.approx(1 / (0.5 / 58.5 + 0.5 / 18.0))
    with pytest.raises(InputError):
        H.blend_pseudo_solvent([hsp("ethanol"), hsp("water")], [0.5, 0.5], [58.5, -1.0], [46.07, 18.015])


def test_rank_order_matches_brute_force():
    rng = np.random.default_rng(5)
    t = rng.uniform([14, 0, 0], [21, 20, 25], size=(50, 3))
    s = rng.uniform([14, 0, 0], [21, 20, 25], size=(30, 3))
    full = H.ra(t[:, None, :], s[None, :, :])
    order, score = H.rank_order(t, s)
    assert np.allclose(score, np.sort(full, axis=1), atol=1e-9)
    o5, s5 = H.rank_order(t, s, r0=np.full(50, 4.0), k=5)
    assert np.allclose(s5, np.sort(full, axis=1)[:, :5] / 4.0, atol=1e-9)
    assert (o5 == order[:, :5]).mean() > 0.99  # ties aside


# ----------------------------------------------------------------------------- whole-mixture stability


def _chi(n, value):
    return value * (np.ones((n, n)) - np.eye(n))


@pytest.mark.parametrize("ratio", [1.0, 10.0, 100.0])
def test_tangent_plane_binary_critical_point(ratio):
    # Flory (1953) ch. 13: a binary of sizes 1 and N splits first at
    # chi_c = (1 + N^-0.5)^2 / 2, at phi_c = 1 / (1 + N^0.5) of the larger one
    v = [50.0, 50.0 * ratio]
    chi_c = 0.5 * (1 + ratio**-0.5) ** 2
    phi_c = 1 / (1 + ratio**0.5)
    at = [1 - phi_c, phi_c]
    assert H.mixture_stability(v, at, _chi(2, 0.98 * chi_c)).stable
    assert not H.mixture_stability(v, at, _chi(2, 1.02 * chi_c)).stable


@pytest.mark.parametrize("chi, n2", [(3.0, 1.0), (1.6, 4.0), (2.5, 1.0)])
def test_tangent_plane_binary_agrees_with_the_binodal(chi, n2):
    # Inside the coexistence range of the common tangent (checked above against
    # the closed form and the chemical potentials of Flory 1953) the mixture
    # splits, outside it is stable, and the trial phase found is near the other
    # coexisting composition.
    b = H.binodal(chi, 1.0, n2)
    v = [100.0, 100.0 * n2]
    for phi, stable in ((0.5 * b.phi_a, True), (b.phi_a + 0.3 * (b.phi_b - b.phi_a), False),
                        (b.phi_b + 0.5 * (1 - b.phi_b), True)):
        r = H.mixture_stability(v, [1 - phi, phi], _chi(2, chi))
        assert r.stable is stable, phi
    r = H.mixture_stability(v, [1 - b.phi_a * 1.2, b.phi_a * 1.2], _chi(2, chi))
    assert not r.stable and r.trial[1] == pytest.approx(b.phi_b, abs=0.1)


def test_tangent_plane_symmetric_ternary():
    # Three liquids of one size, one chi for every pair (the symmetric regular
    # ternary, derived from the Flory-Huggins free energy): at the centroid the
    # Hessian is (3 - chi) times a positive-definite matrix, so the centroid is
    # locally unstable above chi = 3 (then surely unstable); each binary edge
    # splits above chi = 2 (Flory), so at chi = 1.5 nothing splits.
    v = [80.0] * 3
    assert not H.mixture_stability(v, [1 / 3] * 3, _chi(3, 3.05)).stable
    for phi in ([1 / 3] * 3, [0.8, 0.1, 0.1], [0.05, 0.45, 0.5]):
        assert H.mixture_stability(v, phi, _chi(3, 1.5)).stable
    # a pair split on an edge stays split with a little of a third liquid that
    # mixes with both (chi 0): the tangent-plane test sees the whole blend
    C = np.array([[0, 3.0, 0], [3.0, 0, 0], [0, 0, 0]])
    assert not H.mixture_stability(v, [0.48, 0.48, 0.04], C).stable
    # and a lot of it brings them together (the co-solvent effect)
    assert H.mixture_stability(v, [0.15, 0.15, 0.70], C).stable


def test_tangent_plane_rejects_bad_input():
    with pytest.raises(InputError):
        H.mixture_stability([100, 100], [0.7, 0.7], _chi(2, 1.0))
    with pytest.raises(InputError):
        H.mixture_stability([100, -1], [0.5, 0.5], _chi(2, 1.0))
