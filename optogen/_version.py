"""The installed version of optogen (one place; nothing else is imported here)."""
from importlib.metadata import PackageNotFoundError, version as _version

try:
    __version__ = _version("optogen")
except PackageNotFoundError:  # running from a source tree without an install
    __version__ = "0.0.0+src"
