"""The one version number of solvsel (pyproject.toml reads it from here when the package is built).

A literal, not read from the installed package's metadata: importing ``importlib.metadata`` costs about
25 ms of every command's start.
"""

__version__ = "0.2.0"
