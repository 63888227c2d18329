"""The version of mastplan, as its outputs record it."""

__version__ = "0.1.0"

__all__ = ["__version__"]
