"""The Knuth-Bendix ordering (Knuth and Bendix 1970) on terms, lifted to
literals and clauses by the multiset extension.

Weights: every symbol has a weight >= 1 and every variable weight 1, except
that one unary symbol may have weight 0 when it is the greatest in the
precedence (the admissibility condition of the ordering).  The precedence is
a total order on symbols given as ranks (a higher rank is greater).

``s > t`` holds when ``vars(t)`` is a sub-multiset of ``vars(s)`` and
``w(s) > w(t)``, or the weights are equal and either the head of ``s`` is
greater in the precedence, or the heads are equal and the first differing
arguments compare ``s_i > t_i``; a term is greater than each variable it
properly contains.

Literals are compared as multisets of terms: ``s = t`` is ``{s, t}``,
``s != t`` is ``{s, s, t, t}``; a non-equational atom ``A`` stands for the
equation ``A = TRUE`` with ``TRUE`` the least constant.
"""

from __future__ import annotations

from collections import Counter

from worker.syntax.terms import EQ

TRUE = "$true"  # the least constant, used to encode predicate atoms

GT, LT, EQUAL, INCOMPARABLE = ">", "<", "=", None


def symbol_counts(lit_lists) -> Counter:
    """How often each symbol occurs in a collection of clauses (literal tuples)."""
    c: Counter = Counter()
    for lits in lit_lists:
        for _sign, atom in lits:
            stack = [atom]
            while stack:
                x = stack.pop()
                tx = type(x)
                if tx is str:
                    c[x] += 1
                elif tx is tuple:
                    if x[0] != EQ:
                        c[x[0]] += 1
                    stack.extend(x[1:])
    return c


class KBO:
    """A Knuth-Bendix ordering with given symbol weights and precedence ranks.
    Unknown symbols get weight 1 and rank 0 (then compared by name, so the
    precedence stays total)."""

    __slots__ = ("weights", "rank")

    def __init__(self, weights: dict | None = None, rank: dict | None = None):
        self.weights = dict(weights or {})
        self.rank = dict(rank or {})
        self.rank.setdefault(TRUE, -10**9)

    # ------------------------------------------------------------ helpers
    def weight(self, t) -> int:
        w = self.weights
        n = 0
        stack = [t]
        while stack:
            x = stack.pop()
            tx = type(x)
            if tx is int:
                n += 1
            elif tx is str:
                n += w.get(x, 1)
            else:
                n += w.get(x[0], 1)
                stack.extend(x[1:])
        return n

    def _prec_gt(self, f: str, g: str) -> bool:
        rf = self.rank.get(f, 0)
        rg = self.rank.get(g, 0)
        if rf != rg:
            return rf > rg
        return f > g

    # ------------------------------------------------------------ terms
    def gt(self, s, t) -> bool:
        """``s > t`` in the ordering."""
        ts = type(s)
        tt = type(t)
        if tt is int:
            if ts is int:
                return False
            stack = [s]           # s > x iff x occurs properly in s
            while stack:
                x = stack.pop()
                tx = type(x)
                if tx is int:
                    if x == t:
                        return True
                elif tx is tuple:
                    stack.extend(x[1:])
            return False
        if ts is int:
            return False
        if s == t:
            return False
        # weight and variable balance in one pass
        w = self.weights
        bal: dict = {}
        ws = 0
        stack = [s]
        while stack:
            x = stack.pop()
            tx = type(x)
            if tx is int:
                ws += 1
                bal[x] = bal.get(x, 0) + 1
            elif tx is str:
                ws += w.get(x, 1)
            else:
                ws += w.get(x[0], 1)
                stack.extend(x[1:])
        wt = 0
        stack = [t]
        while stack:
            x = stack.pop()
            tx = type(x)
            if tx is int:
                wt += 1
                k = bal.get(x, 0) - 1
                if k < 0:
                    return False
                bal[x] = k
            elif tx is str:
                wt += w.get(x, 1)
            else:
                wt += w.get(x[0], 1)
                stack.extend(x[1:])
        if ws > wt:
            return True
        if ws < wt:
            return False
        return self._lex_gt(s, t, ts, tt)

    def _lex_gt(self, s, t, ts, tt) -> bool:
        """The rest of ``s > t`` once the weights are equal and the variables
        balance: the heads by precedence, then the first differing arguments."""
        f = s if ts is str else s[0]
        g = t if tt is str else t[0]
        if f != g:
            return self._prec_gt(f, g)
        if ts is str:
            return False
        for a, b in zip(s[1:], t[1:]):
            if a != b:
                return self.gt(a, b)
        return False

    def gt_balanced(self, s, t) -> bool:
        """``s > t`` for terms known to have the same weight and the same
        variable multiset (instances of the two sides of a permutative
        equation): the weight pass is skipped, the rest is :meth:`gt`."""
        ts = type(s)
        tt = type(t)
        if ts is int or tt is int or s == t:
            return self.gt(s, t)
        return self._lex_gt(s, t, ts, tt)

    def compare(self, s, t):
        """GT, LT, EQUAL or INCOMPARABLE."""
        if s == t:
            return EQUAL
        if self.gt(s, t):
            return GT
        if self.gt(t, s):
            return LT
        return INCOMPARABLE

    # ------------------------------------------------------------ literals
    @staticmethod
    def literal_terms(lit) -> list:
        sign, atom = lit
        if type(atom) is tuple and atom[0] == EQ:
            m = [atom[1], atom[2]]
        else:
            m = [atom, TRUE]
        return m if sign else m + m

    def multiset_gt(self, m: list, n: list) -> bool:
        """The multiset extension: ``m > n``."""
        m = list(m)
        rest = []
        for x in n:
            try:
                m.remove(x)
            except ValueError:
                rest.append(x)
        if not m:
            return False
        gt = self.gt
        return all(any(gt(a, b) for a in m) for b in rest)

    def literal_gt(self, l1, l2) -> bool:
        return self.multiset_gt(self.literal_terms(l1), self.literal_terms(l2))

    def maximal_literals(self, lits) -> list[int]:
        """Indexes of the literals no other literal is greater than."""
        terms = [self.literal_terms(l) for l in lits]
        out = []
        for i in range(len(lits)):
            if not any(j != i and self.multiset_gt(terms[j], terms[i])
                       for j in range(len(lits))):
                out.append(i)
        return out


def make_kbo(lit_lists, signature_arities: dict, mode: str = "arity",
             unary_zero: bool = False, symbol_order: tuple = (),
             symbol_weights: tuple = ()) -> KBO:
    """Choose weights and precedence by the documented heuristic.

    ``mode``:
    * ``"arity"`` (default): higher arity is greater; among equal arity the
      less frequent symbol is greater; constants least; predicates above all
      functions.
    * ``"frequency"``: the less frequent symbol is greater, arity ignored.
    * ``"order"``: symbols seen later in the input are greater.

    ``unary_zero``: give the most frequent unary function weight 0 and the
    top rank among functions (admissible), which orients ``f(g(x)) = g(f(x))``
    like laws and inverse laws the classical way.

    Overrides (strategy options): ``symbol_order`` lists symbols from least to
    greatest; they rank above every unlisted symbol of their kind (function
    or predicate), in that order.  ``symbol_weights`` is a tuple of ``(symbol,
    weight)`` with weights >= 1 (smaller ones are ignored: they could make
    the ordering ill-founded).
    """
    counts = symbol_counts(lit_lists)
    order: dict = {}
    for lits in lit_lists:
        for _s, atom in lits:
            stack = [atom]
            while stack:
                x = stack.pop()
                if type(x) is str:
                    order.setdefault(x, len(order))
                elif type(x) is tuple:
                    order.setdefault(x[0], len(order))
                    stack.extend(reversed(x[1:]))
    preds = set()
    for lits in lit_lists:
        for _s, atom in lits:
            h = atom if type(atom) is str else atom[0]
            if h != EQ:
                preds.add(h)
    syms = set(order) | set(signature_arities)
    syms.discard(EQ)
    ar = dict(signature_arities)

    def key(f):
        a = ar.get(f, 0)
        c = counts.get(f, 0)
        p = 1 if f in preds else 0
        if mode == "frequency":
            return (p, -c, f)
        if mode == "order":
            return (p, order.get(f, -1), f)
        return (p, a, -c, f)

    ranked = sorted(syms, key=key)
    rank = {f: i for i, f in enumerate(ranked)}
    for i, f in enumerate(symbol_order):
        rank[f] = (2 * len(syms) if f in preds else len(syms)) + i + 1
    user_weights = {f: w for f, w in symbol_weights if isinstance(w, int) and w >= 1}
    weights: dict = dict(user_weights)
    if unary_zero and not user_weights and not symbol_order:
        unary = [f for f in syms if ar.get(f) == 1 and f not in preds]
        if unary:
            u = max(unary, key=lambda f: (counts.get(f, 0), f))
            weights[u] = 0
            top = max((rank[f] for f in syms if f not in preds), default=0)
            rank[u] = top + 0.5
    return KBO(weights, rank)
