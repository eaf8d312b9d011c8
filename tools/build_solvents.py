"""Rebuild tables/solvents.csv from tools/solvents_curated.csv.

The curated file holds what a person decided (names, synonyms, CAS, roles,
water miscibility with its source where published, cost class, notes).  This script adds, for pure compounds,
the HSP from the published datasets bundled with the `chemicals` library (keys
MANUEL_RUBEN_2022, ALSHERI_HANSEN, WDR_SCHRIER only) and the physical
properties at 25 C from `chemicals` (molar mass, boiling and melting point,
flash point) and `thermo` (liquid density, viscosity, thermal expansion); where
these give only an estimate or nothing, the published specific gravities and flash
points below (:func:`liquid_props`, :func:`flash_K`), else recalled values marked
so; and for the mixtures the values written below with their sources: the
ethanol-water strengths from the OIML R 22 alcoholometric formula, the published
tables of tables/ethanol_water.csv and the flash-point model of Liaw et al. (2002)
(:func:`ethanol_water_row`), the oils from their
standards' relative density and saponification value, the published flash points
and density slope (:func:`oil_props`); what no source gives stays marked recalled.

Run:  .venv/bin/python tools/build_solvents.py   (needs the `test` extra: thermo)
"""

from __future__ import annotations

import csv
import sys
import warnings
from pathlib import Path

warnings.filterwarnings("ignore")

ROOT = Path(__file__).resolve().parents[1]
CURATED = ROOT / "tools" / "solvents_curated.csv"
OUT = ROOT / "tables" / "solvents.csv"

DATASETS = {"MANUEL_RUBEN_2022": "hsp_mr2022", "ALSHERI_HANSEN": "hsp_alshehri2022", "WDR_SCHRIER": "hsp_schrier2020"}

# Which dataset a row takes its HSP from, where not the default MANUEL_RUBEN_2022
HSP_CHOICE = {"56-81-5": "ALSHERI_HANSEN"}
# rows whose HSP is taken from a model compound's row (CAS of the model)
HSP_MODEL = {"75-28-5": "106-97-8"}
TRIOLEIN, TRIBUTYRIN = "122-32-7", "60-01-5"
OILS = {"8001-21-6", "8001-25-0", "8002-13-9", "8001-22-7", "8001-30-7"}

# Oils: properties recalled from handbooks and supplier data sheets (kind memory), where no source below
# replaces them: mw, density_25C, bp, mp, flash, visc_25C
MIXTURE_PROPS = {
    "73398-61-5": (504.0, 0.942, None, -5.0, 240.0, 25.0),
    "8001-21-6": (885.4, 0.918, None, -17.0, 316.0, 49.0),
    "8001-25-0": (885.4, 0.911, None, -6.0, 318.0, 67.0),
    "8002-13-9": (885.4, 0.914, None, -10.0, 320.0, 60.0),
    "8001-22-7": (885.4, 0.917, None, -16.0, 320.0, 50.0),
    "8001-30-7": (885.4, 0.917, None, -11.0, 320.0, 52.0),
}
# Densities at 25 C from the USP monographs' specific gravities 25/25 C (times water's density at 25 C).
USP_DENSITY = {
    "8001-25-0": (0.9098, "oils_usp_olive_secondary"),
    "8002-13-9": (0.9103, "oils_usp_canola"),
    "8001-22-7": (0.9163, "oils_usp_soybean"),
    "8001-30-7": (0.9148, "oils_usp_corn"),
}
# Relative density d20/20 (midpoint of the standard's range) of oils whose standard gives it at 20 C,
# and its source: density at 25 C = d20/20 x water at 20 C - 5 K x OIL_DENSITY_SLOPE.
RELATIVE_DENSITY_20 = {"8001-21-6": (0.9195, "oils_codex_sunflower"), "73398-61-5": (0.95, "oils_pheur_mct")}
# Saponification value [mg KOH/g] (midpoint of the standard's range) and its source: mean molar mass of
# the triglyceride = 3 x 56105.6 / SV (g/mol).
SAPONIFICATION_VALUE = {"8001-21-6": (190.5, "oils_codex_sunflower"), "73398-61-5": (335.0, "oils_pheur_mct"),
                        "8001-22-7": (190.0, "oils_usp_soybean")}
# Flash point [C] (from the chart's degrees F) and its source; the oils' melting points and viscosities
# stay recalled (memory_oil_mp), and so do all of them where no flash point is published here
# (memory_oil_props_other).
OIL_FLASH = {"8001-30-7": ((617 - 32) / 1.8, "oils_iseo_flash"), "8002-13-9": ((619 - 32) / 1.8, "oils_iseo_flash"),
             "8001-22-7": ((626 - 32) / 1.8, "oils_iseo_flash"), "8001-21-6": ((607 - 32) / 1.8, "oils_iseo_flash")}
# Fall of the density of vegetable oils with temperature [g/cm3 per K] (source oils_density_slope); the
# thermal expansion of every oil row is this slope over its density at 25 C.
OIL_DENSITY_SLOPE = 0.00064
WATER_20C_G_CM3 = 0.99820
WATER_25C_G_CM3 = 0.99705
KOH_MG_MOL = 56105.6

# ethanol-water strengths: ethanol volume fraction (% v/v at 20 C); their closed-cup flash points are computed
# by the model of Liaw et al. (2002) (solvsel.science.extraction.flash_point_C, source ethwat_liaw_flash)
ETHANOL_WATER = {"ethanol 96% v/v": 0.96, "ethanol 70% v/v": 0.70, "ethanol 50% v/v": 0.50, "ethanol 40% v/v": 0.40}
ETHANOL_WATER_SOURCES = ("ethwat_oiml_r22;ethwat_derived;extract_etb_freezing;extract_bingham_viscosity;"
                         "extract_chemsep_nrtl;extract_poling_antoine;chemicals_lib;ethwat_liaw_flash")
# OIML R 22 (1975) International alcoholometric tables: density [kg/m3] of ethanol-water as a polynomial in
# the mass fraction p of ethanol whose coefficients are polynomials in (t - 20 C); rows from p^11 down to p^0,
# each row's coefficients from the highest power of (t - 20) down to the constant (A_k, B_k, C_ik of R 22),
# as transcribed at the address of source ethwat_oiml_r22.
OIML_R22 = [
    [1.285617841998974e3, -3.903285426e4],
    [7.442971530188783, -7.420201433430137e3, 2.234460334e5],
    [-5.411227621436812e-1, -4.414153236817392e1, 1.852373922069467e4, -5.478461354e5],
    [2.458043105903461, 1.080435942856230e2, -2.605562982188164e4, 7.470172998e5],
    [-4.672147440794683, -1.422753946421155e2, 2.248646550400788e4, -6.138381234e5],
    [4.810060584300675, 1.096355666577570e2, -1.210164659068747e4, 3.062874042e5],
    [-2.895696483903638, -5.029988758547014e1, 3.924090430035045e3, -8.829278388e4],
    [-1.515784836987210e-6, 1.022992966719220, 1.353034988843029e1, -7.047478054272792e2, 1.352215441e4],
    [6.515031360099368e-6, -2.002561813734156e-1, -2.170575700536993, 7.196353469546523e1, -1.668103923e3],
    [1.345612883493354e-8, -8.763058573471110e-6, 1.876837790289664e-2, 2.517399633803461e-1,
     -1.046914743455169e1, 3.891238958e2],
    [-2.788074354782409e-8, 4.075376675622027e-6, -6.802995733503803e-4, -1.193013005057010e-2,
     1.693433461530087e-1, -1.929769495e2],
    [-9.9739231e-11, 7.1693540e-9, -3.8957702e-7, 3.6130013e-5, -5.2682542e-3, -2.0618513e-1, 9.982012300e2],
]

# thermo estimates (not data-backed) for these: values recalled from handbooks and
# supplier data sheets instead (kind memory); None leaves the cell empty (unknown), or, for a density, the
# published one of PUBLISHED_SG_25 is used.
# cas: (density_25C, visc_25C)
ESTIMATED_METHODS = {"MMSNM0", "LETSOU_STIEL", "COSTALD", "RACKETT", "YEN_WOODS_SAT", "TOWNSEND_HALES", "PRZEDZIECKI_SRIDHAR"}
MEMORY_LIQUID = {
    "102-76-1": (None, 17.4), "77-93-0": (None, 35.2), "25395-31-7": (1.17, None), "97-64-3": (1.030, None),
    "120-51-4": (1.118, None), "60-01-5": (1.032, None), "5989-27-5": (0.838, 0.92), "80-56-8": (0.854, 1.30),
    "96-47-9": (0.849, 0.46), "872-50-4": (1.028, 1.67), "108-32-7": (1.200, 2.5), "96-48-0": (1.125, 1.7),
    "108-21-4": (0.866, 0.52), "111-90-0": (0.985, 3.85), "123-92-2": (0.867, 0.79), "111-62-6": (0.867, 5.2),
    "106-65-0": (1.114, None),
}
# Liquid densities at 25 C from published specifications where thermo has only an estimate: specific gravity
# 25/25 C (midpoint of the monograph's range) and its source; density = SG x water at 25 C (oils_sg_to_density).
# The viscosity stays recalled (memory_liquid_viscosity) and the expansion is thermo's estimate
# (thermo_estimate_expansion).
PUBLISHED_SG_25 = {"102-76-1": (1.155, "liquids_usp_triacetin"), "77-93-0": (1.137, "liquids_chp_triethyl_citrate")}
# flash points (closed cup, C) missing from chemicals: from published sheets, with their source
PUBLISHED_FLASH = {"77-93-0": (151.0, "liquids_icsc_triethyl_citrate"), "74-98-6": (-104.0, "liquids_nies_propane"),
                   "616-38-6": (16.7, "liquids_dmc_safety_summary")}
# and, where none was found, recalled (kind memory)
MEMORY_FLASH = {"100-51-6": 93.0, "96-47-9": -11.0, "75-28-5": -83.0, "108-32-7": 132.0}
NONFLAMMABLE = {"7732-18-5", "75-09-2", "67-66-3", "124-38-9", "811-97-2"}

COLUMNS = [
    "name", "synonyms", "cas", "roles", "mw_g_mol", "dD_MPa05", "dP_MPa05", "dH_MPa05", "hsp_source",
    "vm_cm3_mol", "density_g_cm3", "bp_C", "mp_C", "flash_C", "flammable", "visc_mPa_s", "alpha_1_K", "props_source",
    "water_miscibility", "water_in_solvent_wt", "solvent_in_water_wt", "miscibility_source",
    "cost_class", "cost_source", "note",
]


def dataset_hsp(cas: str, key: str):
    import chemicals.solubility as s

    s._load_solubility_data()
    df = s.solubility_sources[key]
    if cas not in df.index:
        return None
    v = df.loc[cas]
    return tuple(round(float(v.iloc[i]) / 1000.0, 2) for i in range(3))


def r(x, nd):
    return "" if x is None else f"{round(float(x), nd):g}"


def oiml_density(p: float, t_C: float) -> float:
    """Density [kg/m3] of ethanol-water of ethanol mass fraction ``p`` at ``t_C`` (OIML R 22 formula)."""
    def poly(coeffs, v):
        acc = 0.0
        for c in coeffs:
            acc = acc * v + c
        return acc

    return poly([poly(row, t_C - 20.0) for row in OIML_R22], p)


def ethanol_mass_fraction(phi: float, t_ref_C: float = 20.0) -> float:
    """Mass fraction of ethanol of the strength ``phi`` (volume fraction at ``t_ref_C``, as alcoholometry
    defines it): phi = p * rho_mix(p, t_ref) / rho_ethanol(t_ref)."""
    from scipy.optimize import brentq

    rho_e = oiml_density(1.0, t_ref_C)
    return float(brentq(lambda p: p * oiml_density(p, t_ref_C) / rho_e - phi, 0.0, 1.0, xtol=1e-12))


def ethanol_water_row(phi: float, e: dict, w: dict) -> dict:
    """The values of an ethanol-water strength: density, expansion and molar volume at 25 C from OIML R 22,
    boiling point (NRTL bubble point at 101.325 kPa), freezing point and viscosity from the published tables
    the project holds (tables/ethanol_water.csv), closed-cup flash point by the model of Liaw et al. (2002)
    from ethanol's flash point; HSP by volume fractions of the pure liquids."""
    from solvsel.data.catalog import load_catalog
    from solvsel.science import extraction as ex

    cat = load_catalog()
    p = ethanol_mass_fraction(phi)
    rho = oiml_density(p, 25.0)
    alpha = -(oiml_density(p, 25.5) - oiml_density(p, 24.5)) / rho
    ne, nw = p / e["mw"], (1.0 - p) / w["mw"]
    x = ne / (ne + nw)
    mw = (p + (1.0 - p)) / (ne + nw)
    bp = ex.bubble_point_C(ex.pair_of(cat.solvent("ethanol"), cat.solvent("water")), x, 101.325)
    hsp = [phi * e[k] + (1 - phi) * w[k] for k in ("dD", "dP", "dH")]
    return dict(mw_g_mol=r(mw, 2), dD_MPa05=r(hsp[0], 2), dP_MPa05=r(hsp[1], 2), dH_MPa05=r(hsp[2], 2),
                hsp_source="derived_volume_mix;hsp_mr2022", density_g_cm3=r(rho / 1000.0, 4),
                vm_cm3_mol=r(mw / (rho / 1000.0), 1), bp_C=r(bp, 1),
                mp_C=r(float(ex.freezing_point_C(cat, 100.0 * phi)), 0), flash_C=r(ex.flash_point_C(p), 0),
                visc_mPa_s=r(ex.viscosity_mPa_s(cat, 100.0 * p, 25.0)[0], 2), alpha_1_K=r(alpha, 6),
                props_source=ETHANOL_WATER_SOURCES)


def oil_props(cas: str) -> tuple[float, float, str]:
    """Molar mass [g/mol], density at 25 C [g/cm3] and the property sources of an oil row (those of its
    flash point too)."""
    mw, dens = MIXTURE_PROPS[cas][:2]
    sources, recalled = [], []
    if cas in USP_DENSITY:
        dens, src = USP_DENSITY[cas]
        sources += [src, "oils_sg_to_density"]
    elif cas in RELATIVE_DENSITY_20:
        rd, src = RELATIVE_DENSITY_20[cas]
        dens = rd * WATER_20C_G_CM3 - 5.0 * OIL_DENSITY_SLOPE
        sources += [src, "oils_rd20_to_density"]
    else:
        recalled.append("memory_oil_props")
    if cas in SAPONIFICATION_VALUE:
        sv, src = SAPONIFICATION_VALUE[cas]
        mw = 3.0 * KOH_MG_MOL / sv
        sources += [src, "oils_sap_to_mw"]
    else:
        recalled.append("memory_oil_mw")
    if cas in OIL_FLASH:
        sources += [OIL_FLASH[cas][1], "memory_oil_mp"]
    else:
        recalled.insert(0, "memory_oil_props_other")
    sources += ["oils_density_slope"] + recalled
    return mw, dens, ";".join(dict.fromkeys(sources))


def oil_row(cas: str) -> dict:
    """The values of an oil row: HSP of triolein (vegetable oils) or interpolated between tributyrin and
    triolein at the mean chain length C8.8 (medium-chain triglycerides); the properties of :func:`oil_props`."""
    if cas in OILS:
        hsp, src = dataset_hsp(TRIOLEIN, "MANUEL_RUBEN_2022"), "hsp_mr2022"
    else:
        a, b = dataset_hsp(TRIBUTYRIN, "MANUEL_RUBEN_2022"), dataset_hsp(TRIOLEIN, "MANUEL_RUBEN_2022")
        t = (8.8 - 4.0) / (18.0 - 4.0)
        hsp = tuple(ai + t * (bi - ai) for ai, bi in zip(a, b))
        src = "derived_triglyceride_interpolation;hsp_mr2022"
    mw, dens, props = oil_props(cas)
    _, _, bp, mp, fl, mu = MIXTURE_PROPS[cas]
    fl = OIL_FLASH.get(cas, (fl,))[0]
    return dict(mw_g_mol=r(mw, 1), dD_MPa05=r(hsp[0], 2), dP_MPa05=r(hsp[1], 2), dH_MPa05=r(hsp[2], 2),
                hsp_source=src, density_g_cm3=r(dens, 4), vm_cm3_mol=r(mw / dens, 1), bp_C="", mp_C=r(mp, 0),
                flash_C=r(fl, 0), visc_mPa_s=r(mu, 1), alpha_1_K=r(OIL_DENSITY_SLOPE / dens, 6), props_source=props)


def liquid_props(cas: str, ch) -> tuple[float, float | None, str] | None:
    """Density at 25 C [g/cm3], viscosity [mPa s] and the property sources of a pure liquid: thermo's data-backed
    values; where thermo has only an estimate, a published specific gravity (:data:`PUBLISHED_SG_25`) or the
    recalled values of :data:`MEMORY_LIQUID`; None where neither is known."""
    dens, mu = ch.rhol / 1000.0, (ch.mul * 1000.0 if ch.mul else None)
    est_vol = ch.VolumeLiquid.method in ESTIMATED_METHODS
    est_mu = ch.ViscosityLiquid.method in ESTIMATED_METHODS
    sources = ["chemicals_lib", "thermo_lib"]
    if not (est_vol or est_mu):
        return dens, mu, ";".join(sources)
    if cas not in MEMORY_LIQUID:
        return None
    mdens, mmu = MEMORY_LIQUID[cas]
    mu = mmu if est_mu else mu
    if est_vol and cas in PUBLISHED_SG_25:
        sg, src = PUBLISHED_SG_25[cas]
        dens = sg * WATER_25C_G_CM3
        sources += [src, "oils_sg_to_density", "thermo_estimate_expansion"]
        sources += ["memory_liquid_viscosity"] if est_mu else []
    else:
        dens = mdens if est_vol else dens
        sources.append("memory_liquid_props")
    return dens, mu, ";".join(sources)


def flash_K(cas: str) -> tuple[float | None, str]:
    """Closed-cup flash point [K] and the source id to add: the chemicals library's, else a published one,
    else a recalled one (memory_flash)."""
    from chemicals.safety import T_flash

    tf = T_flash(cas)
    if tf is not None:
        return tf, ""
    if cas in PUBLISHED_FLASH:
        return PUBLISHED_FLASH[cas][0] + 273.15, PUBLISHED_FLASH[cas][1]
    if cas in MEMORY_FLASH:
        return MEMORY_FLASH[cas] + 273.15, "memory_flash"
    return None, ""


def main() -> int:
    from chemicals.identifiers import search_chemical
    from chemicals.phase_change import Tb, Tm
    from thermo import Chemical

    rows = list(csv.DictReader(CURATED.open(encoding="utf-8")))
    by_name = {}
    out = []
    for row in rows:
        cas = row["cas"]
        o = {k: row.get(k, "") for k in COLUMNS}
        o["miscibility_source"] = row["miscibility_source"] or ("" if row["water_miscibility"] == "" else (
            "memory_mutual_solubility" if (row["water_in_solvent_wt"] or row["solvent_in_water_wt"]) else "common_practice"
        ))
        o["cost_source"] = "memory_cost"
        if row["name"] in ETHANOL_WATER:
            o.update(ethanol_water_row(ETHANOL_WATER[row["name"]], by_name["ethanol"], by_name["water"]))
            out.append(o)
            continue
        if cas in MIXTURE_PROPS:
            o.update(oil_row(cas))
            out.append(o)
            continue
        key = HSP_CHOICE.get(cas, "MANUEL_RUBEN_2022")
        hsp = dataset_hsp(HSP_MODEL.get(cas, cas), key)
        if hsp is None:
            print(f"no HSP for {row['name']} {cas}", file=sys.stderr)
            return 1
        src = DATASETS[key] + (";derived_model_compound" if cas in HSP_MODEL else "")
        c = search_chemical(cas)
        ch = Chemical(cas, T=298.15, P=101325.0)
        if ch.rhol is None:
            print(f"no liquid density for {row['name']}", file=sys.stderr)
            return 1
        got = liquid_props(cas, ch)
        if got is None:
            print(f"{row['name']}: thermo estimate only; add a MEMORY_LIQUID entry", file=sys.stderr)
            return 1
        dens, mu, props = got
        alpha = ch.isobaric_expansion_l
        (tf, flash_src), tb, tm = flash_K(cas), Tb(cas), Tm(cas)
        props += f";{flash_src}" if flash_src else ""
        o.update(
            mw_g_mol=r(c.MW, 3), dD_MPa05=r(hsp[0], 2), dP_MPa05=r(hsp[1], 2), dH_MPa05=r(hsp[2], 2), hsp_source=src,
            density_g_cm3=r(dens, 4), vm_cm3_mol=r(c.MW / dens, 1), bp_C=r(tb - 273.15 if tb else None, 1),
            mp_C=r(tm - 273.15 if tm else None, 1), flash_C=r(tf - 273.15 if tf else None, 0),
            visc_mPa_s=r(mu, 3), alpha_1_K=r(alpha, 6), props_source=props,
        )
        by_name[row["name"]] = {"dD": hsp[0], "dP": hsp[1], "dH": hsp[2], "rho": dens, "mw": c.MW}
        out.append(o)
    for o in out:
        o["flammable"] = "no" if o["cas"] in NONFLAMMABLE else "yes"
    with OUT.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=COLUMNS, lineterminator="\n")
        w.writeheader()
        w.writerows(out)
    print(f"wrote {len(out)} rows to {OUT}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
