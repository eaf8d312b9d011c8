"""The one version number of solvsel, read from the installed package's metadata (pyproject.toml)."""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("solvsel")
except PackageNotFoundError:  # a checkout used without installing it
    __version__ = "0+unknown"
