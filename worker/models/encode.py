"""Grounding and SAT encoding of flat clauses over the domain {0..n-1}.

Propositional variables (numbered once for the largest size ``N`` so the
numbering does not change when the domain grows):

* ``f(a1..ak) = v``: ``base_f + idx(a)*N + v + 1`` with
  ``idx(a) = sum a_i * N^(k-1-i)`` (constants are functions of arity 0);
* ``p(a1..ak)``: ``base_p + idx(a) + 1``;
* one selector per size, which switches on the totality clauses of that size;
* ladder variables of the symmetry breaking (below).

The encoding grows with the domain: at size ``n`` only what is new is added
(ground instances in which some variable takes the value ``n-1``; the
at-most-one pairs with value ``n-1``; the symmetry clauses of the new cells
and the new value).  Everything added at a smaller size stays true at a larger
one, except the totality clauses ("every cell has one of the values 0..n-1"),
which are guarded by the selector of their size: a size is solved under the
assumption of its selector and switched off with a unit clause once it is
excluded.

Symmetry breaking (least-number style, over cells).  The cells are ordered:
constants first, then the cells ``f(a...)`` of the functions of arity >= 1 by
the largest argument ``m`` (then by function name and arguments).  Writing
``M_i`` for the largest value of cells ``1..i``, the constraint is
``value(cell_i) <= max(m_i, M_{i-1}) + 1`` (with ``m = -1`` for constants).
It keeps at least one model of each isomorphism class: label the elements
greedily in cell order, giving each value not labelled yet the next free
label, and the label ``m`` to a fresh element when a group with largest
argument ``m`` starts and ``m`` has no element yet; the relabelled model meets
every constraint.  The encoding uses ladder variables ``z(i, w)`` meaning
"every cell ``1..i`` has a value below ``w``", defined in both directions.
"""

from __future__ import annotations


def _lit_terms(lit, N, bases):
    """(sign, constant, {var: coefficient}) of a fun/pred literal's SAT id."""
    kind = lit[0]
    if kind == "fun":
        _, sign, f, xs, y = lit
        k = len(xs)
        coeffs = {}
        for i, x in enumerate(xs):
            coeffs[x] = coeffs.get(x, 0) + N ** (k - i)
        coeffs[y] = coeffs.get(y, 0) + 1
        return sign, bases[("f", f)] + 1, coeffs
    _, sign, p, xs = lit
    k = len(xs)
    coeffs = {}
    for i, x in enumerate(xs):
        coeffs[x] = coeffs.get(x, 0) + N ** (k - 1 - i)
    return sign, bases[("p", p)] + 1, coeffs


def compile_grounder(fc, N, bases):
    """``(source, constants)``: the Python source of a factory
    ``make(K0, K1, ...)`` and the literal base numbers to call it with.  The
    factory returns a function that adds the new ground instances of one
    flat clause at size ``n`` (those where some variable is ``n-1``), from
    the values ``start = (x0, x1)`` of the two outermost variables on; it
    returns the pair to resume from when ``past_deadline()`` says so (asked
    once per value of the second variable), else None.

    The source depends only on the clause's shape (its variables, signs,
    arities and equations), not on which symbols it uses, so clauses of one
    shape share one compiled code object (:meth:`Encoding.grounders`): a
    problem of 100,000 unit clauses compiles one function, not 100,000."""
    k = fc.nvars
    consts = []         # the base numbers, passed to the factory as K0, K1, ...
    lits = []           # (level, expr) for SAT literals
    eqs = {}            # level -> list of (a, b) positive var equations
    for lit in fc.lits:
        if lit[0] == "eq":
            _, a, b = lit
            eqs.setdefault(max(a, b), []).append((a, b))
            continue
        sign, const, coeffs = _lit_terms(lit, N, bases)
        parts = [f"K{len(consts)}"] + [f"{c}*x{v}" if c != 1 else f"x{v}"
                                for v, c in sorted(coeffs.items())]
        expr = " + ".join(parts)
        if not sign:
            expr = f"-({expr})"
        consts.append(const)
        level = max(coeffs) if coeffs else -1
        lits.append((level, expr))
    params = ", ".join(f"K{i}" for i in range(len(consts)))
    defaults = "".join(f", K{i}=K{i}" for i in range(len(consts)))
    L = []
    L.append(f"def make({params}):")
    L.append(f"  def ground(n, add, past_deadline, start{defaults}):")
    if k == 0:
        L.append("    if n != 1:\n        return None")
        body = ", ".join(e for _l, e in lits)
        L.append(f"    add([{body}])")
        L.append("    return None")
        L.append("  return ground")
        return "\n".join(L), consts
    L.append("    R = range(n); top = n - 1; T = (top,)")
    for i, (level, expr) in enumerate(lits):
        if level == -1:
            L.append(f"    l{i} = {expr}")
    ind = "    "
    for v in range(k):
        if v == 0:
            if k == 1:
                L.append(f"{ind}if start[0] > top:\n{ind}    return None")
                L.append(f"{ind}x0 = top")
                L.append(f"{ind}if True:")
            else:
                L.append(f"{ind}for x0 in range(start[0], n):")
                ind += "    "
                if k == 2:
                    L.append(f"{ind}if past_deadline():\n{ind}    return (x0, 0)")
                L.append(f"{ind}h0 = x0 == top")
                ind = ind[:-4]
        elif v == k - 1:
            L.append(f"{ind}for x{v} in (R if h{v-1} else T):")
        elif v == 1:
            L.append(f"{ind}for x1 in (range(start[1], n) if x0 == start[0] else R):")
            L.append(f"{ind}    if past_deadline():\n{ind}        return (x0, x1)")
        else:
            L.append(f"{ind}for x{v} in R:")
        ind += "    "
        if 0 < v < k - 1:
            L.append(f"{ind}h{v} = h{v-1} or x{v} == top")
        for a, b in eqs.get(v, ()):
            L.append(f"{ind}if x{a} == x{b}:\n{ind}    continue")
        for i, (level, expr) in enumerate(lits):
            if level == v:
                L.append(f"{ind}l{i} = {expr}")
    body = ", ".join(f"l{i}" for i in range(len(lits)))
    L.append(f"{ind}add([{body}])")
    L.append("    return None")
    L.append("  return ground")
    return "\n".join(L), consts


def new_instances(fc, n):
    """How many ground instances of ``fc`` are new at size ``n``."""
    k = fc.nvars
    if k == 0:
        return 1 if n == 1 else 0
    return n ** k - (n - 1) ** k


class Encoding:
    """The growing SAT encoding of one clause set (see the module docstring)."""

    def __init__(self, flat, functions: dict, predicates: dict, max_size: int):
        self.flat = flat
        self.N = N = max_size
        self.functions = dict(sorted(functions.items()))    # name -> arity
        self.predicates = dict(sorted(predicates.items()))
        self.bases = {}
        top = 0
        for f, k in self.functions.items():
            self.bases[("f", f)] = top
            top += N ** k * N
        for p, k in self.predicates.items():
            self.bases[("p", p)] = top
            top += N ** k
        self.nvars = top
        self.selectors = {}
        self.ladder = {}
        self._grounders = None
        # cells in symmetry-breaking order: (function, args, idx, largest arg)
        self.order = [(f, (), 0, -1) for f, k in self.functions.items() if k == 0]

    # ------------------------------------------------------------ variables
    def fvar(self, f, idx, v):
        return self.bases[("f", f)] + idx * self.N + v + 1

    def pvar(self, p, idx):
        return self.bases[("p", p)] + idx + 1

    def fresh(self):
        self.nvars += 1
        return self.nvars

    def selector(self, n):
        s = self.selectors.get(n)
        if s is None:
            s = self.selectors[n] = self.fresh()
        return s

    def z(self, i, w):
        key = (i, w)
        x = self.ladder.get(key)
        if x is None:
            x = self.ladder[key] = self.fresh()
        return x

    def idx(self, args):
        i = 0
        for a in args:
            i = i * self.N + a
        return i

    # ------------------------------------------------------------ cells
    def cells_with_largest(self, m):
        """Cells of functions of arity >= 1 whose largest argument is m."""
        out = []
        for f, k in self.functions.items():
            if k == 0:
                continue
            for args in _tuples_with_max(k, m):
                out.append((f, args, self.idx(args), m))
        return out

    # ------------------------------------------------------------ grounding
    def grounder(self, i):
        """The grounding function of flat clause ``i``, made on first use
        (so that a search with a short slice does not first compile every
        clause of a huge problem)."""
        if self._grounders is None:
            self._grounders = [None] * len(self.flat)
            self._factories = {}    # source -> make(K0, ...): one compile per shape
        g = self._grounders[i]
        if g is None:
            src, consts = compile_grounder(self.flat[i], self.N, self.bases)
            make = self._factories.get(src)
            if make is None:
                ns = {}
                exec(compile(src, "<ground>", "exec"), ns)
                make = self._factories[src] = ns["make"]
            g = self._grounders[i] = make(*consts)
        return g

    def grounders(self):
        """Every clause's grounding function, in clause order."""
        return [self.grounder(i) for i in range(len(self.flat))]

    def estimate(self, n) -> int:
        """Clauses added when the domain grows to n (an upper bound)."""
        g = sum(new_instances(fc, n) for fc in self.flat)
        ncells = sum(n ** k for k in self.functions.values())
        newcells = sum(n ** k - (n - 1) ** k for k in self.functions.values() if k) \
            + (len(self.order) if n == 1 else 0)
        amo = ncells * (n - 1) + newcells * n * n // 2
        sym = (ncells + newcells * n) * (n + 3)
        return g + ncells + amo + sym

    def size_clauses(self, n):
        """The non-ground clauses for growing to size n (called for
        n = 1, 2, ... in turn): totality (guarded by the selector of n),
        at-most-one, symmetry breaking.  The cell order grows by the cells
        whose largest argument is n-1."""
        out = []
        N = self.N
        top = n - 1
        cell_list = self.order
        first_new = 0 if n == 1 else len(cell_list)
        cell_list.extend(self.cells_with_largest(top))
        sel = self.selector(n)
        # totality and at-most-one, for every cell of every function
        for f, k in self.functions.items():
            base = self.bases[("f", f)]
            for args in _all_tuples(k, n):
                cell = base + self.idx(args) * N + 1
                out.append([-sel] + [cell + v for v in range(n)])
                if max(args, default=-1) == top and k:
                    for v in range(n):
                        for u in range(v):
                            out.append([-(cell + u), -(cell + v)])
                else:
                    for u in range(top):
                        out.append([-(cell + u), -(cell + top)])
        # the symmetry-breaking ladder; at n == 1 the constants are new too
        z = self.z
        if n == 1:
            for w in range(1, N):
                out.append([z(0, w)])
        for i in range(1, len(cell_list) + 1):
            f, args, idx, m = cell_list[i - 1]
            t = self.fvar(f, idx, 0) - 0            # t + v is "cell_i = v"
            new = i - 1 >= first_new
            for w in range(1, n):
                if not (new or w == top):
                    continue
                for u in range(w):
                    out.append([-z(i - 1, w), -(t + u), z(i, w)])
                out.append([-z(i, w), z(i - 1, w)])
                out.append([-z(i, w)] + [t + u for u in range(w)])
            for v in range(max(m + 2, 1), n):
                if not (new or v == top):
                    continue
                if v - 1 == 0:
                    if i == 1:
                        out.append([-(t + v)])
                    continue
                out.append([-(t + v), -z(i - 1, v - 1)])
        return out


def _all_tuples(k, n):
    if k == 0:
        return [()]
    out = [()]
    for _ in range(k):
        out = [t + (a,) for t in out for a in range(n)]
    return out


def _tuples_with_max(k, m):
    return [t for t in _all_tuples(k, m + 1) if max(t) == m]
