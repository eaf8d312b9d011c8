"""Optional parts of solvsel and the packages they need.

The core (tables, Hansen arithmetic, blends, sphere fits, HLB, emulsions, legal limits, the command
line) needs numpy, scipy, pandas, networkx and chemicals. These parts are extras:

=============  ==========================  ==========================================
extra          packages                    what needs them
=============  ==========================  ==========================================
``ui``         textual                     the terminal UI
``structure``  rdkit, scikit-learn         HSP estimates from a structure (SMILES),
                                           the structure model's refit
``figures``    matplotlib                  figures in reports (``solvsel report``)
``parquet``    pyarrow                     batch screening read from / written to Parquet
``cluster``    dask[distributed]           batch screening on a Dask cluster
=============  ==========================  ==========================================

``pip install 'solvsel[all]'`` installs the UI, structure and figures extras.
"""

from __future__ import annotations

import importlib
import importlib.util
from types import ModuleType

from .errors import MissingExtraError

__all__ = ["need", "has"]


def need(module: str, extra: str, what: str) -> ModuleType:
    """Import ``module`` or raise :class:`~solvsel.errors.MissingExtraError` naming the extra to install.

    >>> need("numpy", "core", "arrays").__name__
    'numpy'
    """
    try:
        return importlib.import_module(module)
    except ModuleNotFoundError as exc:
        if exc.name and (exc.name == module or module.startswith(exc.name + ".")):
            raise MissingExtraError(extra, what, module.split(".")[0]) from None
        raise


def has(module: str) -> bool:
    """True when ``module`` can be imported (an installed extra)."""
    return importlib.util.find_spec(module) is not None
