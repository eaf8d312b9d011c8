"""Rebuild tables/solutes.csv from tools/solutes_curated.csv.

HSP from the named published data set bundled with `chemicals` (or the value
written in the curated file, marked from memory); molar mass and SMILES from
`chemicals` identifiers; melting point from its measured sources (CRC,
Common Chemistry, Web Book, Wikidata; never the Joback estimate); enthalpy of
fusion only where the library has the CRC value (the Joback estimate is not
used); molar volume of the (subcooled) liquid at 25 C by COSTALD from the
library's critical constants where it has them.

Superseded: tables/solutes.csv is now kept in place. Its molar volumes come from measured
densities (tools/molar_volumes.py fills ``vm_cm3_mol``, ``vm_basis``, ``vm_source``), and published
fusion data (cannabidiol) and the Joback enthalpy of fusion of cetyl palmitate were written into
the table with their sources; this script reproduces neither, so it refuses to run unless asked
with ``--rebuild-from-curated`` (then run tools/molar_volumes.py and re-enter those values).

Run:  .venv/bin/python tools/build_solutes.py --rebuild-from-curated
"""

from __future__ import annotations

import csv
import sys
import warnings
from pathlib import Path

warnings.filterwarnings("ignore")
ROOT = Path(__file__).resolve().parents[1]
CURATED = ROOT / "tools" / "solutes_curated.csv"
OUT = ROOT / "tables" / "solutes.csv"
DATASETS = {"MANUEL_RUBEN_2022": "hsp_mr2022", "ALSHERI_HANSEN": "hsp_alshehri2022", "WDR_SCHRIER": "hsp_schrier2020"}
COLUMNS = [
    "name", "synonyms", "cas", "category", "dD_MPa05", "dP_MPa05", "dH_MPa05", "r0_MPa05", "hsp_basis", "hsp_method",
    "hsp_source", "mw_g_mol", "mp_C", "dHfus_kJ_mol", "vm_cm3_mol", "smiles", "props_source", "note",
]
MEASURED_TM = ("OPEN_NTBKM", "CRC_ORG", "COMMON_CHEMISTRY", "WEBBOOK", "WIKIDATA")


def f(x, nd):
    return "" if x is None else f"{round(float(x), nd):g}"


def main() -> int:
    if "--rebuild-from-curated" not in sys.argv[1:]:
        print("tables/solutes.csv is kept in place now (see this script's docstring); a rebuild from "
              "tools/solutes_curated.csv would lose the measured-density molar volumes and the published "
              "fusion data. Give --rebuild-from-curated to rebuild anyway.", file=sys.stderr)
        return 1
    import chemicals.solubility as s
    from chemicals import acentric, critical
    from chemicals.identifiers import search_chemical
    from chemicals.phase_change import Hfus, Tm, Tm_methods, Hfus_methods
    from chemicals.volume import COSTALD

    s._load_solubility_data()
    out = []
    for row in csv.DictReader(CURATED.open(encoding="utf-8")):
        cas = row["cas"]
        o = {k: row.get(k, "") for k in COLUMNS}
        spec = row["hsp"]
        props = ["chemicals_lib"]
        if spec in DATASETS or spec.startswith("model:"):
            key, ref = (spec, cas) if spec in DATASETS else ("MANUEL_RUBEN_2022", spec.split(":", 1)[1])
            v = s.solubility_sources[key].loc[ref]
            hsp = [float(v.iloc[i]) / 1000 for i in range(3)]
            o["hsp_source"] = DATASETS[key] + ("" if spec in DATASETS else ";derived_model_compound")
        else:
            hsp = [float(x) for x in spec.split(",")]
            o["hsp_source"] = "memory_solute_hsp"
        o["dD_MPa05"], o["dP_MPa05"], o["dH_MPa05"] = (f(x, 2) for x in hsp)
        try:
            meta = search_chemical(cas)
            o["mw_g_mol"], o["smiles"] = f(meta.MW, 3), meta.smiles or ""
        except Exception:
            meta = None
        if row["mp_C"] == "-":  # no melting point (amorphous)
            o["mp_C"] = ""
        elif not row["mp_C"]:
            tm = Tm(cas, method=next((m for m in Tm_methods(cas) if m in MEASURED_TM), None)) if any(
                m in MEASURED_TM for m in Tm_methods(cas)) else None
            o["mp_C"] = f(tm - 273.15, 1) if tm else ""
        else:
            props.append("memory_fusion")
        if not row["dHfus_kJ_mol"]:
            hf = Hfus(cas, method="CRC") if "CRC" in Hfus_methods(cas) else None
            o["dHfus_kJ_mol"] = f(hf / 1000, 2) if hf else ""
        elif "memory_fusion" not in props:
            props.append("memory_fusion")
        vm = None
        try:
            tc, vc, om = critical.Tc(cas), critical.Vc(cas), acentric.omega(cas)
            if tc and vc and om is not None and tc > 298.15:
                vm = COSTALD(298.15, tc, vc, om) * 1e6
        except Exception:
            vm = None
        if vm:
            o["vm_cm3_mol"] = f(vm, 1)
            props.append("derived_costald")
        o["props_source"] = ";".join(props)
        out.append(o)
    with OUT.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=COLUMNS, lineterminator="\n")
        w.writeheader()
        w.writerows(out)
    print(f"wrote {len(out)} rows to {OUT}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
