"""One closed-form description, generated into two kernels: plain floats and numpy arrays.

The stages (:mod:`.stages`) are written against a backend ``xp``.  Run once
with the tracing backend :data:`TRACE`, they record every operation on the
target's numbers as a graph, while everything that depends only on the
chain's geometry is computed right away (constants fold: a zero component of
an axis costs nothing, a product with 1 is no product).  Equal operations
are recorded once (so two branches that share their first joint share its
work).  The graph is then written out as Python source twice: with ``math``
on floats for one target (the live path), and with numpy on arrays for many
targets — the same operations in the same order, as the forward kinematics
kernel does it (:mod:`poser.core._fkkernel`).

``kernel_source(chain)`` (in :mod:`poser.core.ik.closed`) shows the code.
"""

from __future__ import annotations

import math

import numpy as np

from poser.core.ik.closed.ops import Backend

__all__ = ["Graph", "Sym", "TRACE", "build"]


class Graph:
    """The recorded operations: node ``i`` is ``(op, args)``; inputs are ``("in", (name,))``.

    Besides the nodes the graph knows which values are never negative (squares, sums of them,
    square roots) and which node is the square root of which, so ``sqrt0`` of a sum of squares
    needs no test and a square root squared is the value itself.
    """

    def __init__(self):
        self.nodes: list[tuple] = []
        self.index: dict = {}
        self.nonneg: set = set()
        self.sqrt_of: dict = {}

    def add(self, op, *args):
        """The node for ``op(args)`` (args: node indices as Syms with no sign, or constants)."""
        key = (op, *(("s", a.i) if isinstance(a, Sym) else ("c", a) for a in args))
        i = self.index.get(key)
        if i is None:
            i = self.index[key] = len(self.nodes)
            self.nodes.append((op, args))
        return Sym(self, i)

    def input(self, name):
        return self.add("in", name)


def _const(x):
    return not isinstance(x, Sym)


_FOLD = {
    "add": lambda a, b: a + b,
    "sub": lambda a, b: a - b,
    "mul": lambda a, b: a * b,
    "div": lambda a, b: a / b,
    "le": lambda a, b: a <= b,
    "lt": lambda a, b: a < b,
    "ge": lambda a, b: a >= b,
    "gt": lambda a, b: a > b,
    "ne": lambda a, b: a != b,
}
_FLIP = {"le": "ge", "lt": "gt", "ge": "le", "gt": "lt", "ne": "ne"}


class Sym:
    """A traced value: ``±`` node ``i`` of graph ``g`` (a sign is carried, not computed: negations are free)."""

    __slots__ = ("g", "i", "neg")

    def __init__(self, g, i, neg=False):
        self.g = g
        self.i = i
        self.neg = neg

    @property
    def plain(self):
        """The node without its sign (a Sym with ``neg`` False)."""
        return self if not self.neg else Sym(self.g, self.i)

    def value(self):
        """This value as a node of its own (a negation written out where the sign is carried)."""
        return self if not self.neg else self.g.add("neg", self.plain)

    def _nonneg(self):
        return not self.neg and self.i in self.g.nonneg

    @staticmethod
    def _add(a, b):
        """a + b for Syms or constants, signs folded."""
        if _const(a) and _const(b):
            return a + b
        if _const(a):
            a, b = b, a
        g = a.g
        if _const(b):
            if b == 0.0:
                return a
            if a.neg:  # -A + c = -(A - c)
                r = g.add("sub", a.plain, b)
                return Sym(g, r.i, True)
            r = g.add("add", a.plain, b)
            if a._nonneg() and b > 0.0:
                g.nonneg.add(r.i)
            return r
        if a.i == b.i:
            if a.neg != b.neg:
                return 0.0
        if not a.neg and not b.neg:
            r = g.add("add", a, b)
            if a._nonneg() and b._nonneg():
                g.nonneg.add(r.i)
            return r
        if not a.neg and b.neg:
            return g.add("sub", a, b.plain)
        if a.neg and not b.neg:
            return g.add("sub", b, a.plain)
        r = g.add("add", a.plain, b.plain)
        return Sym(g, r.i, True)

    @staticmethod
    def _mul(a, b):
        if _const(a) and _const(b):
            return a * b
        if _const(a):
            a, b = b, a
        g = a.g
        if _const(b):
            if b == 0.0:
                return 0.0
            if b == 1.0:
                return a
            if b == -1.0:
                return -a
            c = -b if a.neg else b
            return g.add("mul", a.plain, c)
        neg = a.neg != b.neg
        A, B = a.plain, b.plain
        if A.i == B.i:
            root = g.sqrt_of.get(A.i)
            if root is not None:  # √x · √x = x for x >= 0
                return root if not neg else -root
            r = g.add("mul", A, A)
            g.nonneg.add(r.i)
            return Sym(g, r.i, neg)
        r = g.add("mul", A, B) if A.i <= B.i else g.add("mul", B, A)
        return Sym(g, r.i, neg)

    @staticmethod
    def _div(a, b):
        if _const(a) and _const(b):
            return a / b
        if _const(a) and a == 0.0:
            return 0.0
        if _const(b):
            if b == 1.0:
                return a
            r = a.g.add("div", a.plain, -b if a.neg else b)
            return r
        g = b.g
        neg = (a.neg if isinstance(a, Sym) else False) != b.neg
        A = a.plain if isinstance(a, Sym) else a
        r = g.add("div", A, b.plain)
        return Sym(g, r.i, neg)

    def _cmp(self, op, a, b):
        if _const(a) and _const(b):
            return _FOLD[op](a, b)
        if _const(a):  # c op B  ⇔  B flip(op) c
            return self._cmp(_FLIP[op], b, a)
        g = a.g
        if _const(b):
            if a.neg:  # -A op c  ⇔  A flip(op) -c
                return g.add(_FLIP[op], a.plain, -b)
            if a._nonneg() and op in ("le", "lt") and b < 0.0:
                return False
            return g.add(op, a, b)
        return g.add(op, a.value(), b.value())

    def __add__(self, o):
        return Sym._add(self, o)

    __radd__ = __add__

    def __sub__(self, o):
        return Sym._add(self, -o)

    def __rsub__(self, o):
        return Sym._add(o, -self)

    def __mul__(self, o):
        return Sym._mul(self, o)

    __rmul__ = __mul__

    def __truediv__(self, o):
        return Sym._div(self, o)

    def __rtruediv__(self, o):
        return Sym._div(o, self)

    def __neg__(self):
        return Sym(self.g, self.i, not self.neg)

    def __le__(self, o):
        return self._cmp("le", self, o)

    def __lt__(self, o):
        return self._cmp("lt", self, o)

    def __ge__(self, o):
        return self._cmp("ge", self, o)

    def __gt__(self, o):
        return self._cmp("gt", self, o)

    def __ne__(self, o):
        return self._cmp("ne", self, o)

    def __eq__(self, o):  # identity (keeps Syms usable as dict keys and in `is` checks)
        return self is o

    __hash__ = object.__hash__

    def __bool__(self):
        raise TypeError("a traced value has no truth value: use xp.where / xp.and_ in closed-form steps")


def _sqrt0(x):
    return math.sqrt(x) if x > 0.0 else 0.0


def _acos1(x):
    return math.acos(-1.0 if x < -1.0 else 1.0 if x > 1.0 else x)


def _unary(op, fold, odd=False, even=False):
    """A traced function: folds constants; an odd function keeps the sign outside, an even one drops it."""

    def f(x):
        if _const(x):
            return fold(x)
        if x.neg and (odd or even):
            r = x.g.add(op, x.plain)
            return Sym(x.g, r.i, odd)
        return x.g.add(op, x.value())

    return staticmethod(f)


def _tr_sqrt0(x):
    if _const(x):
        return _sqrt0(x)
    g = x.g
    known = x._nonneg()
    r = g.add("sqrt" if known else "sqrt0", x.value())
    g.nonneg.add(r.i)
    if known:
        g.sqrt_of[r.i] = x
    return r


def _tr_abs(x):
    if _const(x):
        return abs(x)
    if x._nonneg():
        return x
    r = x.g.add("abs", x.plain)
    x.g.nonneg.add(r.i)
    return r


class _Trace(Backend):
    name = "trace"
    sin = _unary("sin", math.sin, odd=True)
    cos = _unary("cos", math.cos, even=True)
    acos1 = _unary("acos1", _acos1)
    safe = _unary("safe", lambda x: x if x != 0.0 else 1.0)
    not_ = _unary("not", lambda x: not x)
    sqrt0 = staticmethod(_tr_sqrt0)
    abs = staticmethod(_tr_abs)

    @staticmethod
    def atan2(y, x):
        if _const(y) and _const(x):
            return math.atan2(y, x)
        g = y.g if isinstance(y, Sym) else x.g
        if isinstance(y, Sym) and y.neg:  # atan2(-y, x) = -atan2(y, x)
            r = g.add("atan2", y.plain, x.value() if isinstance(x, Sym) else x)
            return Sym(g, r.i, True)
        return g.add("atan2", y.value() if isinstance(y, Sym) else y, x.value() if isinstance(x, Sym) else x)

    @staticmethod
    def hypot(a, b):
        if _const(a) and _const(b):
            return math.hypot(a, b)
        g = a.g if isinstance(a, Sym) else b.g
        a = a.plain if isinstance(a, Sym) else abs(a)
        b = b.plain if isinstance(b, Sym) else abs(b)
        r = g.add("hypot", a, b)
        g.nonneg.add(r.i)
        return r

    @staticmethod
    def where(c, a, b):
        if _const(c):
            return a if c else b
        if _const(a) and _const(b) and a == b and type(a) is type(b):
            return a
        if isinstance(a, Sym) and isinstance(b, Sym) and a.neg and b.neg:
            r = c.g.add("where", c.value(), a.plain, b.plain)
            return Sym(c.g, r.i, True)
        a = a.value() if isinstance(a, Sym) else a
        b = b.value() if isinstance(b, Sym) else b
        return c.g.add("where", c.value(), a, b)

    @staticmethod
    def and_(a, b):
        if _const(a):
            return b if a else False
        if _const(b):
            return a if b else False
        return a.g.add("and", a, b)

    @staticmethod
    def or_(a, b):
        if _const(a):
            return True if a else b
        if _const(b):
            return True if b else a
        return a.g.add("or", a, b)


TRACE = _Trace()

_BIN = {"add": "+", "sub": "-", "mul": "*", "div": "/", "le": "<=", "lt": "<", "ge": ">=", "gt": ">", "ne": "!="}


def _arg(a, names):
    if isinstance(a, Sym):
        return names[a.i]
    if isinstance(a, (bool, np.bool_)):
        return "True" if a else "False"
    return repr(float(a))


def _expr(op, args, names, vector):
    a = [_arg(x, names) for x in args]
    if op in _BIN:
        return f"{a[0]} {_BIN[op]} {a[1]}"
    if op == "neg":
        return f"-{a[0]}"
    if vector:
        simple = {"sin": "np.sin", "cos": "np.cos", "abs": "np.abs", "atan2": "np.arctan2", "hypot": "np.hypot",
                  "not": "np.logical_not", "and": "np.logical_and", "or": "np.logical_or", "where": "np.where"}
        if op in simple:
            return f"{simple[op]}({', '.join(a)})"
        if op == "sqrt0":
            return f"np.sqrt(np.maximum({a[0]}, 0.0))"
        if op == "sqrt":
            return f"np.sqrt({a[0]})"
        if op == "acos1":
            return f"np.arccos(np.clip({a[0]}, -1.0, 1.0))"
        if op == "safe":
            return f"np.where({a[0]} != 0.0, {a[0]}, 1.0)"
    else:
        simple = {"sin": "sin", "cos": "cos", "abs": "abs", "atan2": "atan2", "hypot": "hypot"}
        if op in simple:
            return f"{simple[op]}({', '.join(a)})"
        if op == "sqrt0":
            return f"(sqrt({a[0]}) if {a[0]} > 0.0 else 0.0)"
        if op == "sqrt":
            return f"sqrt({a[0]})"
        if op == "acos1":
            return f"acos(-1.0 if {a[0]} < -1.0 else (1.0 if {a[0]} > 1.0 else {a[0]}))"
        if op == "safe":
            return f"({a[0]} if {a[0]} != 0.0 else 1.0)"
        if op == "not":
            return f"(not {a[0]})"
        if op == "and":
            return f"({a[0]} and {a[1]})"
        if op == "or":
            return f"({a[0]} or {a[1]})"
        if op == "where":
            return f"({a[1]} if {a[0]} else {a[2]})"
    raise ValueError(f"cannot write operation {op!r}")


_UFUNC = {"add": "np.add", "sub": "np.subtract", "mul": "np.multiply", "div": "np.divide", "le": "np.less_equal",
          "lt": "np.less", "ge": "np.greater_equal", "gt": "np.greater", "ne": "np.not_equal", "neg": "np.negative",
          "sin": "np.sin", "cos": "np.cos", "abs": "np.abs", "atan2": "np.arctan2", "hypot": "np.hypot",
          "not": "np.logical_not", "and": "np.logical_and", "or": "np.logical_or", "sqrt": "np.sqrt"}
_BOOL_OPS = {"le", "lt", "ge", "gt", "ne", "not", "and", "or"}


def _is_bool(x, types):
    if isinstance(x, Sym):
        return types.get(x.i, False)
    return isinstance(x, (bool, np.bool_))


def _buffered(g, need, outputs_idx, inputs):
    """Numpy statements writing every operation into preallocated rows (float rows ``f``, bool rows ``b``),
    each row reused once its value is no longer needed.  Returns (lines, names, float rows, bool rows)."""
    order = [i for i in range(len(g.nodes)) if i in need]
    last = {}
    for i in order:
        for a in g.nodes[i][1]:
            if isinstance(a, Sym):
                last[a.i] = i
    for i in outputs_idx:
        last[i] = len(g.nodes) + 1  # outputs stay until the end
    types = {}
    names = {}
    free_f, free_b, nf, nb = [], [], 0, 0
    lines = []
    for i in order:
        op, args = g.nodes[i]
        if op == "in":
            names[i] = args[0]
            continue
        if op == "where":
            is_b = _is_bool(args[1], types) and _is_bool(args[2], types)
        else:
            is_b = op in _BOOL_OPS
        types[i] = is_b
        if is_b:
            if free_b:
                slot = free_b.pop()
            else:
                slot, nb = nb, nb + 1
            names[i] = f"b{slot}"
        else:
            if free_f:
                slot = free_f.pop()
            else:
                slot, nf = nf, nf + 1
            names[i] = f"f{slot}"
        out = names[i]
        a = [_arg(x, names) for x in args]
        if op in _UFUNC:
            lines.append(f"    {_UFUNC[op]}({', '.join(a)}, out={out})")
        elif op == "sqrt0":
            lines.append(f"    np.maximum({a[0]}, 0.0, out={out})")
            lines.append(f"    np.sqrt({out}, out={out})")
        elif op == "acos1":
            lines.append(f"    np.clip({a[0]}, -1.0, 1.0, out={out})")
            lines.append(f"    np.arccos({out}, out={out})")
        elif op == "safe":  # x, or 1 where x is exactly 0
            lines.append(f"    np.equal({a[0]}, 0.0, out={out})")
            lines.append(f"    np.add({a[0]}, {out}, out={out})")
        elif op == "where":
            lines.append(f"    np.copyto({out}, {a[2]})")
            lines.append(f"    np.copyto({out}, {a[1]}, where={a[0]})")
        else:
            raise ValueError(f"cannot write operation {op!r}")
        # operands whose last use this was give their rows back (after the output took its own row)
        done = set()
        for x in args:
            if isinstance(x, Sym) and x.i not in done and last.get(x.i) == i and g.nodes[x.i][0] != "in":
                done.add(x.i)  # (an operand used twice in one operation is given back once)
                (free_b if types.get(x.i) else free_f).append(int(names[x.i][1:]))
    return lines, names, nf, nb


def build(g: Graph, inputs: list[str], outputs, name: str, vector: bool):
    """Python source and function for ``outputs`` of traced graph ``g``.

    ``outputs`` is a nested structure of tuples and lists whose leaves are Syms or constants; the
    function takes the inputs by name, in order, and returns the same structure (as tuples).
    """

    def materialise(x):
        if isinstance(x, (tuple, list)):
            return tuple(materialise(v) for v in x)
        return x.value() if isinstance(x, Sym) else x

    outputs = materialise(outputs)
    need = set()

    def collect(x):
        if isinstance(x, tuple):
            for v in x:
                collect(v)
        elif isinstance(x, Sym):
            stack.append(x.i)

    stack: list = []
    collect(outputs)
    while stack:
        i = stack.pop()
        if i in need:
            continue
        need.add(i)
        for a in g.nodes[i][1]:
            if isinstance(a, Sym):
                stack.append(a.i)
    names = {}
    lines = [f"def {name}({', '.join(inputs)}):"]
    if vector:
        out_idx = set()

        def outs(x):
            if isinstance(x, tuple):
                for v in x:
                    outs(v)
            elif isinstance(x, Sym):
                out_idx.add(x.i)

        outs(outputs)
        body, names, nf, nb = _buffered(g, need, out_idx, inputs)
        lines.append(f"    N = {inputs[0]}.shape[0]")
        if nf:
            lines.append(f"    {', '.join(f'f{k}' for k in range(nf))}{',' if nf == 1 else ''} = np.empty(({nf}, N))")
        if nb:
            lines.append(f"    {', '.join(f'b{k}' for k in range(nb))}{',' if nb == 1 else ''} = "
                         f"np.empty(({nb}, N), dtype=bool)")
        lines += body
    for i, (op, args) in enumerate(g.nodes):
        if vector or i not in need:
            continue
        if op == "in":
            names[i] = args[0]
            continue
        names[i] = f"t{i}"
        lines.append(f"    t{i} = {_expr(op, args, names, vector)}")

    def render(x):
        if isinstance(x, tuple):
            return "(" + ", ".join(render(v) for v in x) + ("," if len(x) == 1 else "") + ")"
        return _arg(x, names)

    lines.append(f"    return {render(outputs)}")
    src = "\n".join(lines) + "\n"
    env = {"np": np, "sin": math.sin, "cos": math.cos, "atan2": math.atan2, "hypot": math.hypot, "sqrt": math.sqrt,
           "acos": math.acos}
    exec(compile(src, f"<poser closed form {name}>", "exec"), env)  # noqa: S102 - our own generated code
    return env[name], src
