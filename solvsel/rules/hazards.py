"""GHS physical-hazard classes of liquids and liquefied gases from flash point and boiling point.

References
----------
.. [1] United Nations. *Globally Harmonized System of Classification and
   Labelling of Chemicals (GHS)*, Rev. 10, 2023, chapter 2.6 (flammable
   liquids) and chapters 2.2 / 2.5 (flammable gases, gases under pressure).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any


__all__ = ["Hazard", "hazard_class"]



@dataclass(frozen=True)
class Hazard:
    """A GHS physical-hazard class derived from flash point and boiling point.

    ``kind`` is "flammable liquid", "flammable gas" or "gas under pressure";
    ``category`` the GHS category (1-4 for flammable liquids, 1 for flammable
    gases, None for gases under pressure).
    """

    kind: str
    category: int | None
    hazard_statement: str
    signal_word: str
    label: str
    basis: str

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)


_FL_LIQ = {
    1: ("H224", "Danger", "Extremely flammable liquid and vapour"),
    2: ("H225", "Danger", "Highly flammable liquid and vapour"),
    3: ("H226", "Warning", "Flammable liquid and vapour"),
    4: ("H227", "Warning", "Combustible liquid"),
}


def hazard_class(flash_C: float | None, bp_C: float | None, flammable: bool | None = None, gas: bool | None = None) -> Hazard | None:
    """GHS class of a liquid from its closed-cup flash point and initial boiling point.

    Flammable liquids (GHS chapter 2.6) [1]_:

    ====  ===========================================  ==========
    cat.  criteria                                      statement
    ====  ===========================================  ==========
    1     flash point < 23 C and initial bp <= 35 C     H224
    2     flash point < 23 C and initial bp > 35 C      H225
    3     23 C <= flash point <= 60 C                   H226
    4     60 C < flash point <= 93 C                    H227
    ====  ===========================================  ==========

    Category 4 exists in the GHS but not in the EU CLP Regulation or in
    transport rules.  A substance that boils at or below 20 C at 101.3 kPa is
    a gas, not a liquid (GHS chapter 1.2): it is a flammable gas (category 1,
    H220) when it burns, and in every case a gas under pressure (H280; H281
    when refrigerated).

    Parameters
    ----------
    flash_C : float or None
        Closed-cup flash point [C]; None when not flammable or not on record.
    bp_C : float or None
        Initial (normal) boiling point [C].
    flammable : bool, optional
        Whether the substance burns, where the table says so (needed for
        gases with no flash point on record, e.g. propane vs carbon dioxide).
    gas : bool, optional
        Force the gas classification (e.g. carbon dioxide, which sublimes and
        has no normal boiling point).

    Returns
    -------
    Hazard or None
        None when not flammable and not a gas.  A flammable liquid whose flash
        point is not on record gets category None and says so.

    Examples
    --------
    Ethanol (flash point 12-13 C, bp 78 C) is category 2, H225, as in its
    harmonised EU classification (from memory); diethyl ether (flash point
    -45 C, bp 34.6 C) is category 1, H224.

    >>> hazard_class(13.0, 78.4).hazard_statement
    'H225'
    >>> hazard_class(-45.0, 34.6).category
    1
    >>> hazard_class(99.0, 187.3) is None   # propylene glycol
    True
    """
    if flash_C is not None and not math.isfinite(float(flash_C)):
        flash_C = None
    if bp_C is not None and not math.isfinite(float(bp_C)):
        bp_C = None
    is_gas = bool(gas) or (bp_C is not None and bp_C <= 20.0)
    if is_gas:
        burns = flammable if flammable is not None else flash_C is not None
        if burns:
            return Hazard(
                "flammable gas", 1, "H220; H280", "Danger",
                "flammable gas (GHS category 1, H220 extremely flammable gas) and gas under pressure (H280)",
                "boils at or below 20 C: a gas (GHS 1.2); burns",
            )
        return Hazard(
            "gas under pressure", None, "H280", "Warning",
            "gas under pressure (GHS H280; H281 refrigerated liquefied gas); not flammable; asphyxiant in closed rooms",
            "a gas at 20 C and 101.3 kPa (GHS 1.2); does not burn",
        )
    if flash_C is None:
        if flammable:
            return Hazard(
                "flammable liquid", None, "", "Danger",
                "flammable liquid (flash point not on record: class not determined; treat as highly flammable)",
                "the table says it burns but gives no flash point",
            )
        return None
    fp = float(flash_C)
    if fp < 23.0:
        if bp_C is None:
            cat_ = 1
            basis = f"flash point {fp:g} C < 23 C; boiling point not on record, so the stricter category 1 is given"
        else:
            cat_ = 1 if bp_C <= 35.0 else 2
            basis = f"flash point {fp:g} C < 23 C and initial boiling point {bp_C:g} C {'<=' if cat_ == 1 else '>'} 35 C"
    elif fp <= 60.0:
        cat_, basis = 3, f"23 C <= flash point {fp:g} C <= 60 C"
    elif fp <= 93.0:
        cat_, basis = 4, f"60 C < flash point {fp:g} C <= 93 C (GHS only; not a class in EU CLP or transport rules)"
    else:
        return None
    h, word, text = _FL_LIQ[cat_]
    return Hazard("flammable liquid", cat_, h, word, f"flammable liquid, GHS category {cat_} ({h} {text.lower()})", basis)


