"""numpy on whole arrays of known shape: building (``concatenate``, ``stack``, ``eye``, ``diag``), shaping
(``transpose``, ``.T``, ``shape``), reducing (``norm``, ``.sum()``, ``outer``), slice assignment, and the
floating-point constants ``np.finfo(T).eps`` as named positive numbers.

Each function returns None when it does not apply (the caller then says what is not supported).
"""
from __future__ import annotations

from fractions import Fraction

from verifier.claims.execute.arithmetic import MAX_REPEAT, Arithmetic, as_array, transpose
from verifier.claims.execute.values import ARRAY, TUPLE, Seq, Unknown, Value, as_expr, int_of
from verifier.model import ir
from verifier.model.expr import Call, Num, Var

# keyword arguments that do not change a real value: dtype of a real floating type, copy, order
FLOAT_TYPES = frozenset({"float", "float64", "double", "float_", "longdouble", "float128"})
HARMLESS = {"array": ("dtype", "copy", "order"), "asarray": ("dtype", "order"), "asfarray": ("dtype",),
            "copy": ("order",), "zeros": ("dtype",), "ones": ("dtype",), "eye": ("dtype",),
            "identity": ("dtype",), "zeros_like": ("dtype",), "ones_like": ("dtype",), "full": ("dtype",),
            "sum": ("dtype",)}
ROUTED = {"numpy.linalg.norm": "norm", "functools.reduce": "reduce", "numpy.linalg.multi_dot": "multi_dot"}
FINFO_FIELDS = frozenset({"eps", "tiny", "smallest_normal", "max", "resolution", "epsneg"})


def _type_name(node: ir.Expr) -> str | None:
    if isinstance(node, ir.Name):
        return node.name
    if isinstance(node, ir.Field) and isinstance(node.base, ir.Name):
        return node.name
    return None


def harmless_keywords(name: str, node: ir.Invoke) -> frozenset[str]:
    """The keywords of ``np.name(...)`` that leave the real value as it is (``dtype=np.float64``)."""
    allowed = HARMLESS.get(name, ())
    dropped: set[str] = set()
    for arg in node.arguments:
        if arg.keyword is None or arg.keyword not in allowed:
            continue
        if arg.keyword == "dtype" and _type_name(arg.value) not in FLOAT_TYPES:
            continue  # dtype=int truncates, complex changes the field
        dropped.add(arg.keyword)
    return frozenset(dropped)


def finfo_constant(node: ir.Field) -> tuple[Var, str] | None:
    """``np.finfo(np.float64).eps`` as the variable ``finfo(float64).eps`` (a positive constant), with the
    type it names; None when ``node`` is not such a read."""
    base = node.base
    if not (isinstance(base, ir.Invoke) and base.spelling.split(".")[-1] == "finfo"
            and node.name in FINFO_FIELDS and len(base.arguments) == 1):
        return None
    type_name = _type_name(base.arguments[0].value)
    if type_name not in FLOAT_TYPES | {"float32", "float16", "single", "half"}:
        return None
    return Var(f"finfo({type_name}).{node.name}"), type_name


def _shape(value: Value) -> tuple[int, ...]:
    if not isinstance(value, Seq):
        return ()
    return (len(value.items),) + (_shape(value.items[0]) if value.items else ())


def _array(items: tuple[Value, ...], host: Arithmetic) -> Seq:
    return Seq(tuple(as_array(i) for i in items), ARRAY, host.new_ident(), 0)


def _parts(args: list[Value]) -> list[Seq] | None:
    """The arrays of ``np.concatenate((a, b))``: one sequence argument holding sequences or scalars
    (``[w]``)."""
    if len(args) != 1 or not isinstance(args[0], Seq):
        return None
    parts = [p for p in args[0].items if isinstance(p, Seq)]
    return parts if len(parts) == len(args[0].items) else None


def array_function(host: Arithmetic, name: str, args: list[Value], line: int) -> Value | None:
    """The numpy functions of this module; None when ``name`` or its arguments do not fit."""
    first = args[0] if args else None
    if name in ("concatenate", "hstack", "vstack", "stack", "column_stack", "r_"):
        parts = _parts(args)
        if parts is None:
            return None
        if name in ("vstack", "stack"):
            rows = tuple(parts) if name == "stack" else tuple(
                r for p in parts for r in (p.items if p.items and isinstance(p.items[0], Seq) else (p,)))
            if len({_shape(r) for r in rows}) != 1:
                return Unknown(f"np.{name} of arrays of different shapes at line {line}")
            return _array(rows, host)
        if name == "column_stack":
            if any(isinstance(i, Seq) for p in parts for i in p.items):
                return None  # columns of matrices: not followed
            columns = tuple(parts)
            table = transpose(Seq(columns)) if columns else None
            return None if table is None else _array(table, host)
        if any(p.items and isinstance(p.items[0], Seq) for p in parts):
            return None  # joining matrices along an axis: not followed
        return _array(tuple(i for p in parts for i in p.items), host)
    if name in ("transpose",) and len(args) == 1 and isinstance(first, Seq):
        table = transpose(first) if first.items else None
        return first if table is None and not any(isinstance(i, Seq) for i in first.items) else (
            None if table is None else _array(table, host))
    if name == "outer" and len(args) == 2 and all(isinstance(a, Seq) for a in args):
        left, right = args[0], args[1]
        assert isinstance(left, Seq) and isinstance(right, Seq)
        return _array(tuple(Seq(tuple(host.binary("*", a, b, line) for b in right.items), ARRAY)
                            for a in left.items), host)
    if name in ("eye", "identity") and len(args) == 1:
        n = int_of(args[0])
        if n is None or not 0 < n <= MAX_REPEAT:
            return None
        return _array(tuple(Seq(tuple(Num(Fraction(int(i == j))) for j in range(n)), ARRAY) for i in range(n)),
                      host)
    if name == "diag" and len(args) == 1 and isinstance(first, Seq):
        if first.items and all(isinstance(r, Seq) for r in first.items):
            return _array(tuple(r.items[k] for k, r in enumerate(first.items)
                                if isinstance(r, Seq) and k < len(r.items)), host)
        n = len(first.items)
        zero = Num(Fraction(0))
        return _array(tuple(Seq(tuple(first.items[i] if i == j else zero for j in range(n)), ARRAY)
                            for i in range(n)), host)
    if name in ("zeros", "ones") and len(args) == 1 and isinstance(first, Seq):
        dims = [int_of(d) for d in first.items]
        if not dims or any(d is None or not 0 <= d <= MAX_REPEAT for d in dims):
            return None
        fill: Value = Num(Fraction(0 if name == "zeros" else 1))
        for d in reversed([d for d in dims if d is not None]):
            fill = Seq((fill,) * d, ARRAY)
        return as_array(fill, host)
    if name in ("zeros_like", "ones_like") and len(args) == 1 and isinstance(first, Seq):
        constant = Num(Fraction(0 if name == "zeros_like" else 1))
        return as_array(_filled(first, constant), host)
    if name in ("copy", "asfarray", "ravel", "flatten") and len(args) == 1 and isinstance(first, Seq):
        return as_array(_flat(first) if name in ("ravel", "flatten") else first, host)
    if name == "shape" and len(args) == 1 and isinstance(first, Seq):
        return Seq(tuple(Num(Fraction(n)) for n in _shape(first)), TUPLE)
    if name == "size" and len(args) == 1 and isinstance(first, Seq):
        return Num(Fraction(len(_flat(first).items)))
    if name in ("norm",) and len(args) == 1 and isinstance(first, Seq):
        total: Value = Num(Fraction(0))
        for item in _flat(first).items:
            total = host.binary("+", total, host.binary("**", item, Num(Fraction(2)), line), line)
        expr = as_expr(total)
        return None if expr is None else Call("sqrt", (expr,))
    if name == "trace" and len(args) == 1 and isinstance(first, Seq):
        diagonal = array_function(host, "diag", args, line)
        return None if not isinstance(diagonal, Seq) else _sum(host, diagonal, line)
    if name == "sum" and len(args) == 1 and isinstance(first, Seq):
        return _sum(host, _flat(first), line)
    if name == "multi_dot" and len(args) == 1 and isinstance(first, Seq) and len(first.items) >= 2:
        product = first.items[0]
        for factor in first.items[1:]:
            product = host.matmul(as_array(product), as_array(factor), line)
        return product
    return None


def _sum(host: Arithmetic, seq: Seq, line: int) -> Value:
    total: Value = Num(Fraction(0))
    for item in seq.items:
        total = host.binary("+", total, item, line)
    return total


def _flat(value: Seq) -> Seq:
    items: list[Value] = []
    for item in value.items:
        items.extend(_flat(item).items if isinstance(item, Seq) else (item,))
    return Seq(tuple(items), ARRAY)


def _filled(value: Seq, constant: Value) -> Seq:
    return Seq(tuple(_filled(i, constant) if isinstance(i, Seq) else constant for i in value.items), ARRAY)


# methods and attributes of arrays: `v.sum()`, `a.dot(b)`, `m.T`, `v.shape`
METHODS = {"sum": "sum", "dot": "dot", "copy": "copy", "transpose": "transpose", "flatten": "flatten",
           "ravel": "ravel", "trace": "trace"}  # not tolist: a list adds by joining
ATTRIBUTES = {"T": "transpose", "shape": "shape", "size": "size"}


def array_method(name: str, receiver: Seq, keywords: dict[str, Value]) -> str | None:
    """The numpy function that ``receiver.name(...)`` is (``v.sum()`` is ``np.sum(v)``), or None."""
    if receiver.kind is not ARRAY or keywords:
        return None
    return METHODS.get(name)


def slice_positions(length: int, bounds: list[int | None]) -> list[int] | None:
    """The positions ``v[lower:upper:step] = ...`` writes (None for step 0)."""
    if bounds[2] == 0:
        return None
    return list(range(length))[slice(*bounds)]


def replaced_slice(current: Seq, positions: list[int], value: Value, line: int) -> Seq | Unknown:
    """``current`` with ``value`` written at ``positions``: a sequence of the same length, or a scalar
    broadcast (numpy); a list slice may change its length, arrays may not."""
    items = list(current.items)
    if isinstance(value, Seq):
        if len(value.items) != len(positions):
            if current.kind is ARRAY or sorted(positions) != positions or len(positions) == 0:
                return Unknown(f"assigning {len(value.items)} values to a slice of {len(positions)} at line {line}")
            step = positions[1] - positions[0] if len(positions) > 1 else 1
            if step != 1:
                return Unknown(f"assigning {len(value.items)} values to an extended slice at line {line}")
            items[positions[0]:positions[-1] + 1] = list(value.items)
            return Seq(tuple(items), current.kind, current.ident, current.owner)
        for position, item in zip(positions, value.items):
            items[position] = item
    else:
        if current.kind is not ARRAY:
            return Unknown(f"assigning a single value to a slice of a list at line {line}")
        for position in positions:
            items[position] = value
    return Seq(tuple(items), current.kind, current.ident, current.owner)
