"""The Python front end: libcst trees lowered to the kernel IR, and the scope that resolves Python names."""
