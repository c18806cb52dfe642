"""optogen: carriers in a semiconductor absorber, in the dark and under light."""
from importlib.metadata import PackageNotFoundError, version as _version

try:
    __version__ = _version("optogen")
except PackageNotFoundError:  # running from a source tree
    __version__ = "0.0.0+src"
