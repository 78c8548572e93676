"""The package version, in its own module so that output code need not import the package root."""

__version__ = "0.1.0"
