"""solvsel: solvent, carrier-blend and emulsifier selection for foods and drinks.

The engines (hansen, structure, sphere, miscibility, blends, hlb, emulsion,
compliance) take plain numbers or catalog records and return frozen
dataclasses; :mod:`solvsel.data.catalog` loads the sourced tables; the command line
(:mod:`solvsel.cli`) and the terminal UI (:mod:`solvsel.tui`) are thin layers
over them.  Heavy libraries (RDKit, scikit-learn, Textual, chemicals) are
imported only where they are needed.
"""

__version__ = "0.1.0"
