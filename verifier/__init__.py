"""idealcheck: exact verification of the algebraic identities annotated in scientific code."""

__version__ = "0.1.0"
