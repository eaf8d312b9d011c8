"""Command-line options that say what the target is, shared by ``rank`` and ``blend``.

``--solute NAME`` (a solute of the tables or of ``--own-solutes``, where a
sphere fitted from bench results can be saved), ``--hsp dD,dP,dH[,R0]`` or
``--smiles SMILES``; exactly one of them.  They fill the request fields
``solute``, ``hsp`` and ``smiles``; the job resolves the target.
"""

from __future__ import annotations

__all__ = ["add_target_arguments", "target_fields"]


def add_target_arguments(parser):
    """Add the mutually exclusive target options to ``parser``; returns the group.

    Other options that define a target can be added to the returned group.
    """
    group = parser.add_argument_group("target (give one)")
    ex = group.add_mutually_exclusive_group(required=False)
    ex.add_argument("--solute", metavar="NAME", help="a solute of the table (or of --own-solutes), by name, synonym or CAS")
    ex.add_argument("--hsp", metavar="dD,dP,dH[,R0]", help="typed Hansen parameters in MPa^0.5, optionally with the radius R0")
    ex.add_argument("--smiles", metavar="SMILES", help="a structure; its HSP are estimated by group contribution")
    return ex


def target_fields(args) -> dict:
    """The request fields ``solute``, ``hsp`` (parsed numbers) and ``smiles`` the options give."""
    from ..jobs.parse import parse_hsp

    return {
        "solute": getattr(args, "solute", None) or None,
        "hsp": parse_hsp(args.hsp, "hsp", allow_r0=True) if getattr(args, "hsp", None) else None,
        "smiles": getattr(args, "smiles", None) or None,
    }

