"""Command-line options that say what the target is, shared by ``rank`` and ``blend``.

``--solute NAME`` (a solute of the tables or of ``--own-solutes``, where a
sphere fitted from bench results can be saved), ``--hsp dD,dP,dH[,R0]`` or
``--smiles SMILES``; exactly one of them.
"""

from __future__ import annotations

from ..errors import InputError

__all__ = ["add_target_arguments", "target_from_args"]


def add_target_arguments(parser, required: bool = True):
    """Add the mutually exclusive target options to ``parser``; returns the group.

    Other options that define a target can be added to the returned group.
    """
    group = parser.add_argument_group("target (give one)")
    ex = group.add_mutually_exclusive_group(required=False)
    ex.add_argument("--solute", metavar="NAME", help="a solute of the table (or of --own-solutes), by name, synonym or CAS")
    ex.add_argument("--hsp", metavar="dD,dP,dH[,R0]", help="typed Hansen parameters in MPa^0.5, optionally with the radius R0")
    ex.add_argument("--smiles", metavar="SMILES", help="a structure; its HSP are estimated by group contribution")
    parser.set_defaults(_target_required=required)
    return ex


def target_from_args(args, cat):
    """The :class:`~solvsel.science.target.Target` the options name.

    Raises :class:`~solvsel.errors.InputError` when none is given (and the
    command needs one) or when the value is malformed.
    """
    from ..science.target import target_from_hsp, target_from_smiles, target_from_solute
    from ..jobs.parse import parse_hsp

    if getattr(args, "solute", None):
        return target_from_solute(cat, args.solute)
    if getattr(args, "hsp", None):
        return target_from_hsp(parse_hsp(args.hsp, "hsp", allow_r0=True))
    if getattr(args, "smiles", None):
        return target_from_smiles(args.smiles)
    if getattr(args, "_target_required", True):
        raise InputError("no target: give --solute NAME, --hsp dD,dP,dH[,R0] or --smiles SMILES")
    return None
