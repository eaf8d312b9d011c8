"""The bundled tables, frozen and checked against outside references.

- physical properties against the reference library `chemicals` (and its
  companion `thermo` for liquid density), within the stated tolerances;
- HSP against the three published data sets that `chemicals` bundles;
- 15+ solvents against Hansen's handbook (Hansen 2007, Appendix A);
- the total parameter against the Hildebrand parameter from the enthalpy of
  vaporisation and molar volume (`thermo`).
"""

from __future__ import annotations

import csv
import math
import warnings

import numpy as np
import pytest

from solvsel.data.catalog import TABLES_DIR, load_catalog

warnings.filterwarnings("ignore")

DATASET_OF_SOURCE = {
    "hsp_mr2022": "MANUEL_RUBEN_2022",
    "hsp_alshehri2022": "ALSHERI_HANSEN",
    "hsp_schrier2020": "WDR_SCHRIER",
}


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


@pytest.fixture(scope="module")
def pure(cat):
    """Rows of the solvents table that are pure compounds with a CAS number (their properties from the
    reference library; the oils' from their standards and the published charts)."""
    return [s for s in cat.solvent_records() if s.cas and "chemicals_lib" in s.props_source.split(";")]


# ---------------------------------------------------------------- frozen shape


def test_table_sizes(cat):
    # issue 2: at least 70 liquids and 30 solutes
    assert len(cat.solvents) >= 70
    assert len(cat.solutes) >= 30


def test_required_liquids_present(cat):
    # the liquids named in issue 2, by any of their names
    for name in [
        "ethanol", "propylene glycol", "glycerol", "triacetin", "triethyl citrate", "benzyl alcohol",
        "1,3-propanediol", "1,3-butanediol", "ethyl lactate", "medium-chain triglycerides", "d-limonene",
        "ethyl acetate", "isopropanol", "hexane", "heptane", "n-butane", "isobutane", "propane", "acetone",
        "methyl acetate", "dichloromethane", "dimethyl ether", "carbon dioxide", "2-methyltetrahydrofuran",
        "ethanol 70% v/v", "water", "methanol", "1-butanol", "toluene", "cyclohexane", "THF", "DMSO",
        "acetonitrile", "chloroform", "MEK", "diethyl ether", "acetic acid", "NMP", "DMF",
        "olive oil", "sunflower oil", "rapeseed oil",
    ]:
        cat.solvent(name, library=False)


def test_required_solutes_present(cat):
    for name in [
        "limonene", "linalool", "citral", "menthol", "vanillin", "eugenol", "cinnamaldehyde", "thymol",
        "carvacrol", "capsaicin", "curcumin", "beta-carotene", "lycopene", "alpha-tocopherol", "caffeine",
        "cannabidiol", "delta-9-tetrahydrocannabinol", "triolein", "chlorophyll a", "cetyl palmitate",
        "sucrose", "phosphatidylcholine",
    ]:
        cat.solute(name, library=False)


def test_every_table_file_is_declared_and_valid(cat):
    files = {p.stem for p in TABLES_DIR.glob("*.csv")} - {"schema", "sources"}
    assert files == set(cat.table_names)
    for name in cat.table_names:
        cat.table(name)  # validates types, ranges, duplicates and source ids


def test_every_source_is_cited_and_used(cat):
    used = set()
    for name in cat.table_names:
        df = cat.table(name)
        from solvsel.data.catalog import _load_schema

        for spec in _load_schema(TABLES_DIR)[name]:
            if spec.type == "sources":
                for cell in df[spec.column]:
                    used.update(v for v in str(cell).split(";") if v)
    ids = set(cat.sources["id"])
    assert used <= ids
    assert (cat.sources["citation"].str.len() > 20).all()


def test_no_stray_whitespace_or_crlf_in_tables():
    for path in TABLES_DIR.glob("*.csv"):
        raw = path.read_bytes()
        assert b"\r" not in raw, path.name
        for i, row in enumerate(csv.reader(raw.decode("utf-8").splitlines()), start=1):
            for cell in row:
                assert cell == cell.strip(), f"{path.name} row {i}: '{cell}'"


def test_units_in_numeric_column_names():
    from solvsel.data.catalog import _load_schema

    unitless_ok = {"cost_class"}  # a class, not a quantity
    for table, specs in _load_schema(TABLES_DIR).items():
        cols = {s.column for s in specs}
        for s in specs:
            has_unit_column = "unit" in cols or f"{s.column}_unit" in cols  # e.g. legal limits in mixed units
            if s.type == "number" and s.column not in unitless_ok and "hlb" not in s.column.lower() and not has_unit_column:
                assert "_" in s.column, f"{table}.{s.column}: numeric column without a unit suffix"


def test_memory_rows_are_marked(cat):
    """Values recalled from memory carry a source of kind memory (listed in the note of issue 2)."""
    kinds = dict(zip(cat.sources["id"], cat.sources["kind"]))
    for s in cat.solute_records():
        if "from memory" in s.hsp_method:
            assert any(kinds[i] == "memory" for i in s.hsp_source.split(";")), s.name


# ---------------------------------------------------------------- against chemicals


def test_molar_mass_boiling_point_flash_against_chemicals(pure):
    """chemicals 1.5 (CRC, NIST Web Book, DIPPR data): MW 0.5 %, Tb 3 C, flash 5 C."""
    from chemicals.identifiers import search_chemical
    from chemicals.phase_change import Tb
    from chemicals.safety import T_flash

    unchecked = []
    for s in pure:
        meta = search_chemical(s.cas)
        assert s.mw_g_mol == pytest.approx(meta.MW, rel=0.005), s.name
        tb = Tb(s.cas)
        if tb is not None and s.bp_C is not None:
            assert s.bp_C == pytest.approx(tb - 273.15, abs=3.0), s.name
        else:
            unchecked.append((s.name, "bp"))
        tf = T_flash(s.cas)
        if tf is not None and s.flash_C is not None:
            assert s.flash_C == pytest.approx(tf - 273.15, abs=5.0), s.name
        else:
            unchecked.append((s.name, "flash"))
    print("\nnot checked against chemicals (no value there or none here):", unchecked)


# thermo's liquid-density methods that rest on measured data; the others
# (e.g. MMSNM0, COSTALD, RACKETT) are estimates and are not used as a check.
DATA_BACKED_DENSITY = {"HEOS_FIT", "DIPPR_PERRY_8E", "VDI_PPDS", "CRC_INORG_L", "VDI_TABULAR", "COOLPROP"}


def test_density_against_thermo(pure):
    """thermo 0.6 liquid density at 25 C (saturated liquid for gases), where data-backed: 3 %."""
    from thermo import Chemical

    skipped = []
    for s in pure:
        ch = Chemical(s.cas, T=298.15, P=101325.0)
        if ch.VolumeLiquid.method not in DATA_BACKED_DENSITY:
            skipped.append((s.name, ch.VolumeLiquid.method))
            continue
        assert s.density_g_cm3 == pytest.approx(ch.rhol / 1000, rel=0.03), s.name
        assert s.vm_cm3_mol == pytest.approx(s.mw_g_mol / s.density_g_cm3, rel=0.01), s.name
    print("\ndensity not checked (thermo has only an estimate):", skipped)
    assert len(skipped) < len(pure) / 3


# ---------------------------------------------------------------- HSP against the data sets


def _dataset_hsp(cas, key):
    import chemicals.solubility as s

    s._load_solubility_data()
    df = s.solubility_sources[key]
    if cas not in df.index:
        return None
    return np.array([float(v) / 1000 for v in df.loc[cas].iloc[:3]])


def test_hsp_against_published_datasets(cat):
    """Each liquid against MANUEL_RUBEN_2022, ALSHERI_HANSEN and WDR_SCHRIER (as bundled in chemicals):
    within 0.1 where the table cites the data set; disagreements over 1.0 with the others are explained in
    the row's note (which names the other data set) or come from a mixture row."""
    disagreements = []
    for s in cat.solvent_records():
        if not s.cas or "derived" in s.hsp_source:
            continue
        for sid, key in DATASET_OF_SOURCE.items():
            ref = _dataset_hsp(s.cas, key)
            if ref is None:
                continue
            diff = np.abs(s.hsp - ref)
            if sid in s.hsp_source.split(";"):
                assert diff.max() <= 0.1, (s.name, key, ref)
            elif diff.max() > 1.0:
                disagreements.append((s.name, key, tuple(ref)))
                assert key in s.note, f"{s.name}: disagrees with {key} by {diff.max():.1f} and the note does not say why"
    print("\ndisagreements over 1.0 MPa^0.5, explained in the notes:", disagreements)


# Hansen, C. M., Hansen Solubility Parameters: A User's Handbook, 2nd ed. (2007), Appendix A,
# Table A.1; typed from memory of the table, each also agreeing with MANUEL_RUBEN_2022
# (which compiles the handbook values).  dD, dP, dH in MPa^0.5.
HANDBOOK = {
    "ethanol": (15.8, 8.8, 19.4),
    "water": (15.5, 16.0, 42.3),
    "acetone": (15.5, 10.4, 7.0),
    "ethyl acetate": (15.8, 5.3, 7.2),
    "n-hexane": (14.9, 0.0, 0.0),
    "n-heptane": (15.3, 0.0, 0.0),
    "toluene": (18.0, 1.4, 2.0),
    "cyclohexane": (16.8, 0.0, 0.2),
    "isopropanol": (15.8, 6.1, 16.4),
    "1-butanol": (16.0, 5.7, 15.8),
    "tetrahydrofuran": (16.8, 5.7, 8.0),
    "dimethyl sulfoxide": (18.4, 16.4, 10.2),
    "acetonitrile": (15.3, 18.0, 6.1),
    "chloroform": (17.8, 3.1, 5.7),
    "N,N-dimethylformamide": (17.4, 13.7, 11.3),
    "N-methyl-2-pyrrolidone": (18.0, 12.3, 7.2),
    "methyl ethyl ketone": (16.0, 9.0, 5.1),
    "benzyl alcohol": (18.4, 6.3, 13.7),
    "acetic acid": (14.5, 8.0, 13.5),
    "glycerol": (17.4, 12.1, 29.3),
}


@pytest.mark.parametrize("name", sorted(HANDBOOK))
def test_hsp_against_handbook(cat, name):
    s = cat.solvent(name, library=False)
    assert np.allclose(s.hsp, HANDBOOK[name], atol=0.3), (name, s.hsp)


# ---------------------------------------------------------------- Hildebrand consistency

NON_ASSOCIATING = {
    "n-hexane", "n-heptane", "n-pentane", "cyclohexane", "toluene", "p-xylene", "d-limonene", "alpha-pinene",
    "ethyl acetate", "methyl acetate", "isopropyl acetate", "butyl acetate", "isoamyl acetate", "ethyl butyrate",
    "acetone", "methyl ethyl ketone", "methyl isobutyl ketone", "diethyl ether", "tetrahydrofuran",
    "2-methyltetrahydrofuran", "1,4-dioxane", "anisole", "dichloromethane", "chloroform", "dimethyl carbonate",
    "triacetin", "triethyl citrate", "benzyl benzoate", "tributyrin", "ethyl oleate", "dimethyl succinate",
}
# Liquefied gases: the published HSP refer to the liquid near its boiling point, while the
# table's density is the saturated liquid at 25 C, so the two need not agree (reported only).
LIQUEFIED_GASES = {"n-butane", "isobutane", "propane", "dimethyl ether"}
# thermo's enthalpy of vaporisation for these is a group-contribution estimate (Morgan-Kobayashi),
# not data: named exceptions, reported but not asserted (issue 2 allows it for heavy esters).
HVAP_ESTIMATED = {"MORGAN_KOBAYASHI", "CLAPEYRON", "SIVARAMAN_MAGEE_KOBAYASHI", "PITZER", "SMK"}


def test_total_parameter_against_hildebrand(pure):
    """delta_t = sqrt(dD^2 + dP^2 + dH^2) vs sqrt((Hvap - RT)/Vm) at 298.15 K from thermo:
    within 10 % for non-associating liquids whose Hvap is data-backed."""
    from thermo import Chemical

    report = []
    for s in pure:
        if s.name in ("carbon dioxide", "1,1,1,2-tetrafluoroethane"):
            continue  # liquid reference states far above their boiling points (and near the critical point)
        ch = Chemical(s.cas, T=298.15)
        hv = ch.EnthalpyVaporization(298.15)
        if hv is None:
            continue
        vm = s.mw_g_mol / s.density_g_cm3 * 1e-6
        hildebrand = math.sqrt(max(hv - 8.314462618 * 298.15, 0.0) / vm) / 1e3  # MPa^0.5
        total = float(np.linalg.norm(s.hsp))
        rel = (total - hildebrand) / hildebrand
        estimated = ch.EnthalpyVaporization.method in HVAP_ESTIMATED
        report.append((s.name, round(total, 1), round(hildebrand, 1), round(rel * 100), estimated))
        if s.name in NON_ASSOCIATING and not estimated and "derived" not in s.hsp_source:
            assert abs(rel) <= 0.10, (s.name, total, hildebrand)
    print("\nname, delta_t, Hildebrand, % difference, Hvap estimated:")
    for r in report:
        if r[0] in LIQUEFIED_GASES:
            note = "(liquefied gas: not asserted)"
        elif r[0] not in NON_ASSOCIATING:
            note = "(associating: not asserted)"
        else:
            note = "(Hvap is an estimate in thermo: named exception, not asserted)" if r[4] else ""
        print("  ", r, note)


def test_every_table_has_a_source_column_filled_on_every_row(cat):
    """Every row that holds a number carries at least one source id (issue 2: a source on every row)."""
    from solvsel.data.catalog import _load_schema

    schema = _load_schema(TABLES_DIR)
    for name in cat.table_names:
        cols = [s.column for s in schema[name] if s.type == "sources"]
        nums = [s.column for s in schema[name] if s.type in ("number", "integer")]
        assert cols, f"table {name} has no source column"
        df = cat.table(name)
        has_value = df[nums].notna().any(axis=1) if nums else df.index == df.index
        empty = df[(df[cols] == "").all(axis=1) & has_value]
        assert empty.empty, f"{name}: rows without any source: {list(empty.index + 2)}"
