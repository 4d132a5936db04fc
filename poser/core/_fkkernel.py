"""A straight-line batched forward-kinematics kernel, generated once per chain.

The tool pose ``head @ M_1 @ G_1 @ M_2 @ ... @ M_n @ tail`` is carried as nine
rotation entries and three position entries.  While an entry is still a
constant it stays a Python float; once it depends on a joint it is one row of
a buffer shaped (buffers, chunk).  Multiplying by the constant link
transforms then costs only the non-zero, non-unit entries of each DH matrix,
signs are carried symbolically (a −1 costs nothing), and every numpy call
writes into a preallocated buffer.  This is what makes the batched FK run
close to the cost of the joint sines and cosines alone.

:func:`build_kernel` returns the function and its source, which is kept on
the chain (``fk.kernel_source(chain)``) so the generated code can be read.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

__all__ = ["build_kernel", "build_scalar_kernel", "build_loop_source", "SINCOS_SOURCE"]


@dataclass(frozen=True)
class Const:
    value: float


@dataclass(frozen=True)
class Var:
    name: str
    sign: float = 1.0


class _Emitter:
    def __init__(self):
        self.lines: list[str] = []
        self.free: list[str] = []
        self.nbuf = 0
        self.refs: dict[str, int] = {}

    def new(self) -> str:
        if self.free:
            name = self.free.pop()
        else:
            name = f"b[{self.nbuf}]"
            self.nbuf += 1
        self.refs[name] = 0
        return name

    def hold(self, v):
        if isinstance(v, Var) and v.name in self.refs:
            self.refs[v.name] += 1
        return v

    def drop(self, v):
        if isinstance(v, Var) and v.name in self.refs:
            self.refs[v.name] -= 1
            if self.refs[v.name] == 0:
                del self.refs[v.name]
                self.free.append(v.name)

    def op(self, name: str, a, b, out: str):
        """Record ``out = a <name> b``; ``a`` and ``b`` are buffer names or floats."""
        self.lines.append((name, a, b, out))

    def render(self, scalar: bool) -> list[str]:
        sym = {"mul": "*", "add": "+", "sub": "-"}
        lines = []
        for name, a, b, o in self.lines:
            a, b = (repr(v) if isinstance(v, float) else v for v in (a, b))
            if scalar:
                lines.append(f"    {o} = {a} {sym[name]} {b}")
            else:
                lines.append(f"    {name}({a}, {b}, out={o})")
        return lines

    def combine(self, terms):
        """Emit ``sum(coef * x * y)`` for terms ``(coef, x, y)``; ``y`` may be None.

        Returns a Const or a Var (not yet held).
        """
        K = 0.0
        lin = []  # (e, name)
        prod = []  # (e, name_x, name_y)
        for coef, x, y in terms:
            if coef == 0.0:
                continue
            if y is None:
                if isinstance(x, Const):
                    K += coef * x.value
                elif coef * x.sign != 0.0:
                    lin.append((coef * x.sign, x.name))
            else:
                if isinstance(x, Const) and isinstance(y, Const):
                    K += coef * x.value * y.value
                elif isinstance(x, Const):
                    if x.value != 0.0:
                        lin.append((coef * x.value * y.sign, y.name))
                elif isinstance(y, Const):
                    if y.value != 0.0:
                        lin.append((coef * y.value * x.sign, x.name))
                else:
                    prod.append((coef * x.sign * y.sign, x.name, y.name))
        if not lin and not prod:
            return Const(K)
        if not prod and len(lin) == 1 and K == 0.0 and abs(lin[0][0]) == 1.0:
            return Var(lin[0][1], lin[0][0])
        # Pick the output's sign so that most coefficients become +1.
        # Products first: when none is positive, flip the output's sign (free).
        if prod:
            sigma = -1.0 if all(e < 0 for e, *_ in prod) else 1.0
        else:
            sigma = -1.0 if sum(1 for e, _ in lin if e < 0) > len(lin) / 2 else 1.0
        prod.sort(key=lambda t: t[0] * sigma < 0)
        lin = [(e * sigma, n) for e, n in lin]
        prod = [(e * sigma, a, b) for e, a, b in prod]
        K *= sigma
        o = self.new()
        started = False
        for e, a, b in prod:
            if not started:
                self.op("mul", a, b, o)
                if e != 1.0:
                    self.op("mul", o, e, o)
                started = True
            else:
                t = self.new()
                self.op("mul", a, b, t)
                if abs(e) == 1.0:
                    self.op("add" if e > 0 else "sub", o, t, o)
                else:
                    self.op("mul", t, e, t)
                    self.op("add", o, t, o)
                self.free.append(t)
                del self.refs[t]
        lin.sort(key=lambda en: (en[0] != 1.0, abs(en[0]) != 1.0))
        for e, n in lin:
            if not started:
                if e == -1.0 and len(lin) > 1:
                    e2, n2 = lin[1]  # -x + e2 y: start from the other term, then subtract
                    if e2 == 1.0:
                        self.op("sub", n2, n, o)
                    else:
                        self.op("mul", n2, e2, o)
                        self.op("sub", o, n, o)
                    lin = lin[2:]
                    started = True
                    break
                if e == 1.0 and len(lin) > 1:
                    e2, n2 = lin[1]
                    if abs(e2) == 1.0:
                        self.op("add" if e2 > 0 else "sub", n, n2, o)
                    else:
                        self.op("mul", n2, e2, o)
                        self.op("add", o, n, o)
                    lin = lin[2:]
                    started = True
                    break
                self.op("mul", n, e, o)
                lin = lin[1:]
                started = True
                break
        for e, n in lin:
            if abs(e) == 1.0:
                self.op("add" if e > 0 else "sub", o, n, o)
            else:
                t = self.new()
                self.op("mul", n, e, t)
                self.op("add", o, t, o)
                self.free.append(t)
                del self.refs[t]
        if K != 0.0:
            self.op("add", o, K, o)
        return Var(o, sigma)


def _plan(head, links, tail, revolute):
    """Record the operations of ``head @ M_1 @ links[0] @ ... @ M_n @ tail``."""
    em = _Emitter()
    n = len(revolute)
    rev_idx = [k for k in range(n) if revolute[k]]
    r = [[Const(float(head[i, j])) for j in range(3)] for i in range(3)]
    p = [Const(float(head[i, 3])) for i in range(3)]
    consts = list(links) + [tail]

    def replace(old_entries, new_entries):
        for v in new_entries:
            em.hold(v)
        for v in old_entries:
            em.drop(v)

    for k in range(n):
        if revolute[k]:
            row = rev_idx.index(k)
            c, s = Var(f"C[{row}]"), Var(f"S[{row}]")
            new_r = [row_[:] for row_ in r]
            for i in range(3):
                a, b = r[i][0], r[i][1]
                new_r[i][0] = em.combine([(1.0, a, c), (1.0, b, s)])
                em.hold(new_r[i][0])
                new_r[i][1] = em.combine([(1.0, b, c), (-1.0, a, s)])
                em.hold(new_r[i][1])
            for i in range(3):
                em.drop(r[i][0])
                em.drop(r[i][1])
            r = new_r
        else:
            qv = Var(f"qT[{k}]")
            new_p = []
            for i in range(3):
                v = em.combine([(1.0, p[i], None), (1.0, r[i][2], qv)])
                em.hold(v)
                new_p.append(v)
            for v in p:
                em.drop(v)
            p = new_p
        G = consts[k]
        new_r = [[None] * 3 for _ in range(3)]
        for i in range(3):
            for j in range(3):
                v = em.combine([(float(G[kk, j]), r[i][kk], None) for kk in range(3)])
                em.hold(v)
                new_r[i][j] = v
        new_p = []
        for i in range(3):
            v = em.combine([(1.0, p[i], None)] + [(float(G[kk, 3]), r[i][kk], None) for kk in range(3)])
            em.hold(v)
            new_p.append(v)
        replace([v for row_ in r for v in row_] + p, [])
        r, p = new_r, new_p

    return em, r, p, rev_idx


def _scalar_name(v: str) -> str:
    return re.sub(r"(\w+)\[(\d+)\]", lambda m: {"b": "b", "C": "c", "S": "s", "qT": "q"}[m.group(1)] + m.group(2), v)


def _redirect_last_write(ops, name, dst) -> bool:
    """Make the last operation that writes buffer ``name`` write ``dst`` instead, when
    nothing reads the buffer afterwards; saves one copy pass per output entry."""
    for k in range(len(ops) - 1, -1, -1):
        op, a, b, o = ops[k]
        if o == name:
            ops[k] = (op, a, b, dst)
            return True
        if name in (a, b):
            return False
    return False


def build_kernel(head, links, tail, revolute):
    """Generate the batched kernel for a chain.

    Parameters
    ----------
    head, tail : ndarray, shape (4, 4)
    links : sequence of ndarray, shape (4, 4), length n - 1
    revolute : sequence of bool, length n

    Returns
    -------
    kernel : callable ``kernel(qT, out, b, C, S)``
        ``qT`` shaped (n, m) contiguous joint values (internal units),
        ``out`` shaped (m, 4, 4) receives the poses; ``b`` (nbuf, m),
        ``C`` and ``S`` (number of revolute joints, m) are scratch arrays the
        caller keeps between calls (a fresh allocation per chunk would cost
        page faults).  ``kernel.nbuf`` and ``kernel.nrev`` give their sizes.
    source : str
    """
    em, r, p, rev_idx = _plan(head, links, tail, revolute)
    n = len(revolute)
    finals = [((i, j), r[i][j] if j < 3 else p[i]) for i in range(3) for j in range(4)]
    uses = {}
    for _, v in finals:
        if isinstance(v, Var):
            uses[v.name] = uses.get(v.name, 0) + 1
    body = []
    for (i, j), v in finals:
        dst = f"out[:, {i}, {j}]"
        if isinstance(v, Const):
            body.append(f"    {dst} = {v.value!r}")
        elif v.sign > 0 and uses[v.name] == 1 and _redirect_last_write(em.lines, v.name, dst):
            pass  # the last operation on this entry now writes straight into ``out``
        elif v.sign > 0:
            body.append(f"    copyto({dst}, {v.name})")
        else:
            body.append(f"    neg({v.name}, out={dst})")
    head_lines = [
        "def kernel(qT, out, b, C, S):",
    ]
    if rev_idx:
        head_lines += [
            f"    qr = qT[{rev_idx!r}]" if len(rev_idx) < n else "    qr = qT",
            "    cos(qr, out=C)",
            "    sin(qr, out=S)",
        ]
    body += ["    out[:, 3, :3] = 0.0", "    out[:, 3, 3] = 1.0"]
    source = "\n".join(head_lines + em.render(scalar=False) + body) + "\n"
    namespace = {
        "empty": np.empty,
        "cos": np.cos,
        "sin": np.sin,
        "mul": np.multiply,
        "add": np.add,
        "sub": np.subtract,
        "neg": np.negative,
        "copyto": np.copyto,
    }
    exec(compile(source, "<poser fk kernel>", "exec"), namespace)
    kernel = namespace["kernel"]
    kernel.nbuf = max(em.nbuf, 1)
    kernel.nrev = max(len(rev_idx), 1)
    return kernel, source


def _scalar_parts(head, links, tail, revolute):
    """The plan in plain names: ``(rev_idx, lines, entries)`` — the revolute joints' indices (row r of
    the sines and cosines ``s{r}``, ``c{r}`` is joint ``rev_idx[r]``), the straight-line assignments on
    ``q{k}``, ``s{r}``, ``c{r}`` and ``b{k}``, and the 3 × 4 upper part of the tool pose as expressions."""
    em, r, p, rev_idx = _plan(head, links, tail, revolute)
    lines = [_scalar_name(line).strip() for line in em.render(scalar=True)]

    def val(v):
        if isinstance(v, Const):
            return repr(v.value)
        return _scalar_name(v.name) if v.sign > 0 else "-" + _scalar_name(v.name)

    entries = [[val(r[i][j]) for j in range(3)] + [val(p[i])] for i in range(3)]
    return rev_idx, lines, entries


def build_scalar_kernel(head, links, tail, revolute):
    """Generate the one-configuration kernel: the same plan as :func:`build_kernel`
    in plain Python floats, returning the 3x4 upper part of the tool pose as a
    tuple of rows.  ``kernel(q)`` takes a sequence of n floats (internal units).

    Returns
    -------
    kernel : callable
    source : str
    """
    n = len(revolute)
    rev_idx, body, entries = _scalar_parts(head, links, tail, revolute)
    lines = ["def kernel(q):"]
    lines.append("    " + ", ".join(f"q{k}" for k in range(n)) + (", = q" if n == 1 else " = q"))
    for row, k in enumerate(rev_idx):
        lines.append(f"    c{row} = cos(q{k}); s{row} = sin(q{k})")
    lines += ["    " + line for line in body]
    rows = ", ".join("(" + ", ".join(e) + ")" for e in entries)
    lines.append(f"    return ({rows})")
    source = "\n".join(lines) + "\n"
    namespace = {"cos": math.cos, "sin": math.sin}
    exec(compile(source, "<poser fk scalar kernel>", "exec"), namespace)
    return namespace["kernel"], source


SINCOS_SOURCE = '''
# sin and cos together, written so that a loop over many values vectorises (no calls, no branches):
# x = k·π/2 + r with π/2 in three parts (Cody & Waite), |r| ≤ π/4, then the minimax polynomials of
# fdlibm's __kernel_sin and __kernel_cos (Sun Microsystems, 1993; coefficients from memory, checked
# against numpy to 1.2e-16 in tests/core/test_fk.py), the quadrant choosing which is which and the signs.
PIO2_1 = 1.57079632673412561417e+00
PIO2_2 = 6.07710050630396597660e-11
PIO2_3 = 2.02226624871116645580e-21
INVPIO2 = 6.36619772367581382433e-01
S1 = -1.66666666666666324348e-01
S2 = 8.33333333332248946124e-03
S3 = -1.98412698298579493134e-04
S4 = 2.75573137070700676789e-06
S5 = -2.50507602534068634195e-08
S6 = 1.58969099521155010221e-10
C1 = 4.16666666666666019037e-02
C2 = -1.38888888888741095749e-03
C3 = 2.48015872894767294178e-05
C4 = -2.75573143513906633035e-07
C5 = 2.08757232129817482790e-09
C6 = -1.13596475577881948265e-11


@numba.njit(inline="always")
def sincos(x):
    k = np.floor(x * INVPIO2 + 0.5)
    r = ((x - k * PIO2_1) - k * PIO2_2) - k * PIO2_3
    z = r * r
    s = r + r * z * (S1 + z * (S2 + z * (S3 + z * (S4 + z * (S5 + z * S6)))))
    hz = 0.5 * z
    w = 1.0 - hz
    c = w + (((1.0 - w) - hz) + z * z * (C1 + z * (C2 + z * (C3 + z * (C4 + z * (C5 + z * C6))))))
    n = np.int64(k) & 3
    odd = (n & 1) == 1
    a = c if odd else s
    b = s if odd else c
    sa = -1.0 if (n & 2) == 2 else 1.0
    sb = -1.0 if ((n + 1) & 2) == 2 else 1.0
    return a * sa, b * sb
'''


def build_loop_source(head, links, tail, revolute) -> str:
    """The same plan as a compiled loop over poses (numba; see :mod:`poser.core._compiled`): a module
    whose ``kernel(Q, out)`` writes the tool poses of joint values ``Q`` (m, n) into ``out`` (m, 4, 4).

    The loop body is :func:`build_scalar_kernel`'s, with :data:`SINCOS_SOURCE`'s ``sincos`` for the
    sines and cosines, so the compiler vectorises the loop across poses."""
    n = len(revolute)
    rev_idx, body, entries = _scalar_parts(head, links, tail, revolute)
    lines = ['"""Generated by poser.core._fkkernel.build_loop_source: forward kinematics of one arm."""',
             "import numba", "import numpy as np", SINCOS_SOURCE, "",
             "@numba.njit(fastmath={\"contract\"}, nogil=True, cache=True)", "def kernel(Q, out):",
             "    for i in range(Q.shape[0]):"]
    lines += [f"        q{k} = Q[i, {k}]" for k in range(n)]
    lines += [f"        s{row}, c{row} = sincos(q{k})" for row, k in enumerate(rev_idx)]
    lines += ["        " + line for line in body]
    lines += [f"        out[i, {i}, {j}] = {entries[i][j]}" for i in range(3) for j in range(4)]
    lines += ["        out[i, 3, 0] = 0.0", "        out[i, 3, 1] = 0.0", "        out[i, 3, 2] = 0.0",
              "        out[i, 3, 3] = 1.0"]
    return "\n".join(lines) + "\n"
