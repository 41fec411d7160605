"""Every model of one domain size, optionally one per isomorphism class.

``enumerate_models(cp, size)`` finds a model, forbids exactly that model
with a blocking clause, and asks again until none is left.  The symmetry
breaking of the encoding already removes many isomorphic copies; the rest are
merged by a canonical form (:func:`canonical_form`): the lexicographically
least table over every relabelling that the least-number order allows.

The canonical form follows the cell order of the encoding (constants, then
the cells of the other functions by largest argument).  Walking the cells in
that order, an element gets the next free label the first time it appears as
a value; when the cells with largest argument ``m`` begin and label ``m`` is
still free, every unlabelled element is tried for it (a branch).  Two
isomorphic models have the same set of relabelled tables, so the least one
is an invariant, and two models with the same least table are isomorphic.
Without constants and functions every permutation is a branch (n! of them):
this mode is meant for algebraic signatures.
"""

from __future__ import annotations

from .search import ModelSearch


def _cell_order(funs: dict, n: int) -> list:
    """(function, args) in the encoding's order, arguments as labels."""
    order = [(f, ()) for f in sorted(funs) if funs[f] == 0]
    for m in range(n):
        for f in sorted(funs):
            k = funs[f]
            if k == 0:
                continue
            for args in _tuples(k, m + 1):
                if max(args) == m:
                    order.append((f, args))
    return order


def _tuples(k, n):
    out = [()]
    for _ in range(k):
        out = [t + (a,) for t in out for a in range(n)]
    return out


def canonical_form(model, symbols=None) -> tuple:
    """A tuple equal for two models exactly when they are isomorphic
    (over ``symbols``, default every symbol of the model)."""
    n = model["size"]
    fun_tabs = {f: {tuple(a): v for a, v in t["values"]}
                for f, t in model["functions"].items() if symbols is None or f in symbols}
    pred_tabs = {p: {tuple(a): v for a, v in t["values"]}
                 for p, t in model["predicates"].items() if symbols is None or p in symbols}
    funs = {f: model["functions"][f]["arity"] for f in fun_tabs}
    order = _cell_order(funs, n)
    starts = {}                      # index in order where the group of m begins
    consts = sum(1 for f in funs if funs[f] == 0)
    i = consts
    for m in range(n):
        starts.setdefault(i, []).append(m)
        i += sum(1 for f in funs if funs[f] > 0 for args in _tuples(funs[f], m + 1) if max(args) == m)
    best = [None]

    def finish(perm, inv):
        vals = []
        for f, args in order:
            vals.append(perm[fun_tabs[f][tuple(inv[a] for a in args)]])
        for p in sorted(pred_tabs):
            k = model["predicates"][p]["arity"]
            for args in _tuples(k, n):
                vals.append(pred_tabs[p][tuple(inv[a] for a in args)])
        form = tuple(vals)
        if best[0] is None or form < best[0]:
            best[0] = form

    def assign(x, perm, inv):
        perm[x] = len(inv)
        inv.append(x)

    def unassign(x, perm, inv):
        inv.pop()
        del perm[x]

    def go(p, perm, inv):
        for m in starts.get(p, ()):
            if m >= len(inv):                    # label m still free: branch
                for x in range(n):
                    if x not in perm:
                        assign(x, perm, inv)
                        go(p, perm, inv)
                        unassign(x, perm, inv)
                return
        if p == len(order):
            if len(inv) < n:                     # elements no cell reaches
                for x in range(n):
                    if x not in perm:
                        assign(x, perm, inv)
                        go(p, perm, inv)
                        unassign(x, perm, inv)
                return
            finish(perm, inv)
            return
        f, args = order[p]
        v = fun_tabs[f][tuple(inv[a] for a in args)]
        if v in perm:
            go(p + 1, perm, inv)
        else:
            assign(v, perm, inv)
            go(p + 1, perm, inv)
            unassign(v, perm, inv)

    go(0, {}, [])
    return best[0]


def enumerate_models(cp, size: int, deadline: float | None = None,
                     up_to_isomorphism: bool = True, limit: int = 100_000):
    """All models of domain size ``size`` (one per isomorphism class when
    asked), as a list; None when the deadline came first."""
    s = ModelSearch(cp, min_size=size, max_size=size)
    first = s.run(deadline)
    if first is None:
        return [] if s.done else None
    sat, enc = s._sat, s._enc
    sel = enc.selector(size)
    user = set(first["functions"]) | set(first["predicates"])
    seen, out = set(), []
    model = first
    for _ in range(limit):
        key = canonical_form(model) if up_to_isomorphism else None
        if not up_to_isomorphism or key not in seen:
            seen.add(key)
            out.append(model)
        block = []
        for f, t in model["functions"].items():
            for args, v in t["values"]:
                block.append(-enc.fvar(f, enc.idx(args), v))
        for p, t in model["predicates"].items():
            for args, v in t["values"]:
                x = enc.pvar(p, enc.idx(args))
                block.append(-x if v else x)
        sat.add(block)
        r = sat.solve([sel], deadline if deadline is not None else float("inf"))
        if r is None:
            s._release()
            return None
        if not r:
            break
        model = s._extract(size)
    s._release()
    return out
