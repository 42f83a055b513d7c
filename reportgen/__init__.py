"""reportgen: monthly fat-loss phase reports for nutrition coaches and clinics."""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("reportgen")
except PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0.0.0+source"

__all__ = ["__version__"]
