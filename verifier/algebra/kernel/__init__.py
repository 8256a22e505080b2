"""The trusted kernel: the only code that must be right for ``proved`` to be right.

Everything else in ``verifier/algebra`` searches (Groebner bases, normal forms, sign arguments, witness
search) and may be wrong without harm, because no result is ``proved`` until the kernel accepts its
certificate.  The kernel imports only ``verifier/model``, the standard library and sympy's polynomial
ring (for expansion), and is meant to be read line by line:

- ``polynomial.py``  reading ``PolyData`` strictly into exact polynomials over QQ, and writing it back;
- ``checkers.py``    one checker per certificate class (expansion and exact rational arithmetic only),
                     and ``check``, which dispatches on the class and never raises;
- ``tie.py``         ``certificate_fits``: the certificate re-checks *and* speaks about this claim (its
                     ring, difference and equations, and only sign facts the claim has);
- ``codec.py``       the strict JSON form of certificates, witnesses and obligation results.

Adding a proof method touches three places and nothing else:
1. its certificate class in ``verifier/model/certificate.py`` (a frozen dataclass with ``kind``,
   ``symbols``, ``target`` and ``generators`` and its own evidence, fields of str / bool / int / tuples of
   these) and its name in the ``Certificate`` union there - the codec then reads and writes it by itself;
2. its checker in ``checkers.py``: a function that raises ``Rejected`` unless the evidence proves
   ``target == 0`` and returns the ``Premises`` it used, entered in ``CHECKERS``;
3. its finder in the untrusted part (``decide.py`` or a module beside it), which builds the certificate
   and hands it to ``decide._accept``.
"""
