"""Fill the molar volume of every solute (tables/solutes.csv ``vm_cm3_mol``, ``vm_basis``, ``vm_source``)
from a measured density, never from estimated critical constants.

In order of preference, per solute:

1. a substance also in the solvents table takes that table's molar volume (one value per substance);
2. a liquid at 25 C with a data-backed liquid density in ``thermo`` (not an estimating method) at 25 C;
3. the density of CAS Common Chemistry as bundled in ``chemicals`` (``common_chemistry_data``: the
   liquid's or, for a solid at room temperature, the solid's);
4. a published density written below with its source;
5. Fedors' group contributions from the structure (an estimate; the group values are recalled);
6. nothing (the row stays empty).

Run:  .venv/bin/python tools/molar_volumes.py            (rewrites the three columns in place)
"""

from __future__ import annotations

import csv
import sys
import warnings
from pathlib import Path

warnings.filterwarnings("ignore")
ROOT = Path(__file__).resolve().parents[1]
SOLUTES = ROOT / "tables" / "solutes.csv"
SOLVENTS = ROOT / "tables" / "solvents.csv"

#: thermo's liquid-density methods that are estimates (not data-backed)
ESTIMATED = {"MMSNM0", "MMSNM0FIT", "LETSOU_STIEL", "COSTALD", "HTCOSTALD", "HTCOSTALDFIT", "RACKETT", "RACKETTFIT",
             "YEN_WOODS_SAT", "TOWNSEND_HALES", "BHIRUD_NORMAL", "YAMADA_GUNN", "CAMPBELL_THODOS", "EOS",
             "PRZEDZIECKI_SRIDHAR", "COSTALD_COMPRESSED", "COSTALD_MIXTURE"}

#: published densities [g/cm3] of solutes the library has none for: (density, basis text, source id)
PUBLISHED = {
    "13956-29-1": (0.980, "published density of the melt, 0.980 g/cm3 at 45 C (highest of 945-980 kg/m3 measured over "
                   "318-403 K)", "vm_cbd_jced2023"),
}

BASIS = {
    "solvents": "as in the solvents table (one value per substance)",
    "thermo": "liquid density at 25 C (reference library, data-backed correlation)",
    "cc": "density of CAS Common Chemistry (reference library data)",
    "fedors": ("Fedors group contributions from the structure: an estimate (group values recalled; against the 21 "
               "solutes with a library density here: mean error 9.5 %, up to 33 %)"),
}


def library_vm(cas: str, liquid_at_25: bool) -> tuple[float | None, str]:
    """(molar volume [cm3/mol], 'thermo' or 'cc') from the reference library's data, or (None, '')."""
    from chemicals import miscdata
    from thermo import Chemical

    if liquid_at_25:
        try:
            vl = Chemical(cas, T=298.15).VolumeLiquid
            for m in vl.all_methods:
                if m not in ESTIMATED and vl.test_method_validity(298.15, m):
                    return vl.calculate(298.15, m) * 1e6, "thermo"
        except (ValueError, TypeError, KeyError):
            pass
    df = miscdata.common_chemistry_data
    key = int(cas.replace("-", ""))
    if key in df.index:
        row = df.loc[key]
        for col in ("Vml", "Vms"):
            v = row.get(col)
            if v == v and v:  # not NaN
                return float(v) * 1e6, "cc"
    return None, ""


def molar_volume(row: dict, solvents: dict) -> tuple[str, str, str]:
    """(vm_cm3_mol, vm_basis, vm_source) of one solutes row, as text."""
    from solvsel.errors import SolvselError
    from solvsel.science.structure import fedors_volume

    cas, mw = row["cas"], float(row["mw_g_mol"] or "nan")
    if cas in solvents:
        s = solvents[cas]
        return s["vm_cm3_mol"], BASIS["solvents"], s["props_source"]
    mp = float(row["mp_C"]) if row["mp_C"] else None
    vm, kind = library_vm(cas, liquid_at_25=mp is None or mp < 25)
    if vm is not None:
        return f"{vm:.1f}", BASIS[kind], {"thermo": "thermo_lib", "cc": "vm_common_chemistry"}[kind]
    if cas in PUBLISHED and mw == mw:
        rho, text, src = PUBLISHED[cas]
        return f"{mw / rho:.1f}", text, src
    if row["smiles"]:
        try:
            vm = fedors_volume(row["smiles"])[0]
        except SolvselError:  # a structure the group method does not cover (an ionic species)
            vm = None
        if vm:
            return f"{vm:.1f}", BASIS["fedors"], "fedors1974_memory"
    return "", "", ""


def main() -> int:
    solvents = {r["cas"]: r for r in csv.DictReader(SOLVENTS.open(encoding="utf-8")) if r["cas"]}
    rows = list(csv.DictReader(SOLUTES.open(encoding="utf-8")))
    header = list(rows[0])
    for col in ("vm_basis", "vm_source"):
        if col not in header:
            header.insert(header.index("vm_cm3_mol") + 1 + (col == "vm_source"), col)
    for r in rows:
        r["vm_cm3_mol"], r["vm_basis"], r["vm_source"] = molar_volume(r, solvents)
        r["props_source"] = ";".join(s for s in r["props_source"].split(";") if s != "derived_costald")
    with SOLUTES.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=header, lineterminator="\n")
        w.writeheader()
        w.writerows(rows)
    print(f"molar volumes of {len(rows)} solutes written to {SOLUTES}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
