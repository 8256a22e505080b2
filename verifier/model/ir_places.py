"""Places of the kernel IR: structs, fixed-size arrays and pointers of C, C++, CUDA, Fortran, Julia and Rust.

A place is a local or parameter (``root``) and a path of steps into it: field names (``q.w``, ``q->w``,
``q%w``) and index expressions (``v[i]``, Fortran ``v(i)``, Rust ``t.0``), each index in the language's
own base (0, or 1 in Fortran and Julia: the executor's value knows its base).  ``Load`` reads a place,
``Store`` is the assignment target that writes one, ``AddressOf`` passes one by reference, ``Aggregate``
builds a struct or array value.

Pointers are references to places (there is no pointer arithmetic): a front end lowers a pointer
parameter ``T *p`` (also C++ ``T&``, Rust ``&T``/``&mut T``, Fortran dummy arguments, C array
parameters) to a parameter whose value is what it points to, so ``*p``, ``p->w``, ``(*p).w`` and ``p[i]``
are the places ``p``, ``p.w``, ``p.w`` and ``p[i]``.  A call passes ``&x`` (or ``x`` to a reference, or
an array that decays to a pointer) as ``AddressOf(Place("x"))``: the callee's parameter starts with the
place's value and, when the call returns, the place takes the value the parameter was left with
(``OUT``/``INOUT`` parameters of ``verifier.model.ir``).  That is the meaning of passing by reference
as long as no two places of one call overlap, which the front end must ensure (it refuses the call
otherwise).  A place's indices are read when the call returns; the front end passes only places whose
indices the call cannot change.

Values of places (``verifier.claims.execute.values.Compound``): a parameter's struct or array whose
components were not written read as the variables the claim language spells ``q.w``, ``v[1]``,
``q.pos.x``; a local declared without a value has no components yet (reading one is inconclusive).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Union

if TYPE_CHECKING:
    from verifier.model.ir import Expr

Step = Union[str, "Expr"]  # a field name, or an index expression


@dataclass(frozen=True)
class Place:
    """``root`` followed by ``steps`` (``p->pos.x`` is ``Place("p", ("pos", "x"))``)."""

    root: str
    steps: tuple[Step, ...] = ()
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Load:
    """The value held at ``place``.  ``whole``: the value may be a struct or an array (copied into a local,
    passed by value, returned); otherwise it must be a number and a struct or array gives an unknown."""

    place: Place
    whole: bool = False
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class AddressOf:
    """``place`` passed by reference to a call (see the module docstring); anywhere else, its value."""

    place: Place
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Store:
    """The assignment target that writes ``place`` (a component of a struct or array, or the root itself).

    An index must be an integer constant; out of an array's declared range the path stops."""

    place: Place
    line: int = 0
    column: int = 0


@dataclass(frozen=True)
class Aggregate:
    """A struct or array value: ``{a, b}``, ``[a, b]``, ``make_float3(a, b, c)``, a declared local.

    ``fields``: a struct's field names in order (the items are the first fields' values); otherwise an
    array of ``size`` elements indexed from ``base``, the first of them the items.  Components without an
    item are not set yet (``double v[3];`` has ``size=3`` and no items; ``lk_quat p;`` the fields only)."""

    items: tuple["Expr", ...] = ()
    fields: tuple[str, ...] = ()
    size: int = 0
    base: int = 0
    line: int = 0
    column: int = 0


__all__ = ["Step", "Place", "Load", "AddressOf", "Store", "Aggregate"]
