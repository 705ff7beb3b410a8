"""The package version: one definition, read by the package root, the CLI and file writers."""

__all__ = ["VERSION"]

VERSION = "0.1.0"
"""steradian's version (also ``steradian.__version__``); written into every weight file."""
