"""siteharvest: will a wireless sensor node at this spot run all year on harvested energy?"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("siteharvest")
except PackageNotFoundError:  # pragma: no cover - running from a source tree
    __version__ = "0.0.0"

__all__ = ["__version__"]
