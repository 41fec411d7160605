"""Term indexes: retrieval of candidate terms that may unify with a query,
be a generalization of it (the indexed term matches onto the query), or be an
instance of it.

:class:`FingerprintIndex` keys every term by its *fingerprint*: the symbol
found at a few fixed positions (the root, its arguments 1..3 and their first
two arguments) or one of three markers: ``VAR`` (a variable stands there),
``BELOW`` (the position does not exist because a variable stands above it)
and ``NONE`` (the position does not exist and no variable is above it).  The
fingerprints form a trie; a retrieval walks only the branches whose feature is
compatible with the query's feature in the chosen mode.  The result is a
superset of the real answers: the caller runs the exact unification or
matching on each candidate.

:class:`LinearIndex` has the same interface and returns everything (the naive
mode used for the benchmark comparison).

Entries are ``(term, value)`` where ``value`` is a tuple whose first element
is a clause.  Deletion is lazy: a clause that leaves the active set clears its
``alive`` flag, retrieval skips its entries and they are purged when they pile
up.
"""

from __future__ import annotations

VAR, BELOW, NONE = 1, 2, 3

POSITIONS = ((), (1,), (2,), (3,), (1, 1), (1, 2), (2, 1), (2, 2))
SHALLOW = ((), (1,), (2,), (3,))     # for small indexes (demodulators): a shorter walk
# for atoms (the root is a predicate, so look one level deeper)
DEEP = POSITIONS + ((1, 1, 1), (1, 1, 2), (1, 2, 1), (1, 2, 2))


def fingerprint(t, positions=POSITIONS) -> tuple:
    out = []
    for pos in positions:
        cur = t
        feat = None
        for i in pos:
            tc = type(cur)
            if tc is int:
                feat = BELOW
                break
            if tc is str or i >= len(cur):
                feat = NONE
                break
            cur = cur[i]
        if feat is None:
            tc = type(cur)
            feat = VAR if tc is int else (cur if tc is str else cur[0])
        out.append(feat)
    return tuple(out)


def _unify_ok(q, e) -> bool:
    if type(q) is str:
        return e == q or e == VAR or e == BELOW
    if q == VAR:
        return e != NONE
    if q == BELOW:
        return True
    return e == NONE or e == BELOW       # q is NONE


def _gen_ok(q, e) -> bool:
    """Indexed feature ``e`` can belong to a generalization of the query."""
    if type(q) is str:
        return e == q or e == VAR or e == BELOW
    if q == VAR:
        return e == VAR or e == BELOW
    if q == BELOW:
        return e == BELOW
    return e == NONE or e == BELOW


def _inst_ok(q, e) -> bool:
    """Indexed feature ``e`` can belong to an instance of the query."""
    if type(q) is str:
        return e == q
    if q == VAR:
        return type(e) is str or e == VAR
    if q == BELOW:
        return True
    return e == NONE


_OK = {"unify": _unify_ok, "gen": _gen_ok, "inst": _inst_ok}


def _direct(q, mode):
    """The child keys compatible with query feature ``q``, when they can be
    listed without scanning (None: scan the children with the filter)."""
    if type(q) is str:
        return (q,) if mode == "inst" else (q, VAR, BELOW)
    if mode == "gen":
        return (VAR, BELOW) if q == VAR else (BELOW,) if q == BELOW else (NONE, BELOW)
    if mode == "unify":
        return (NONE, BELOW) if q == NONE else None
    return (NONE,) if q == NONE else None


# _direct for the three markers, looked up instead of computed (symbols are
# handled inline by the retrieval)
_DIRECT = {m: {q: _direct(q, m) for q in (VAR, BELOW, NONE)} for m in ("unify", "gen", "inst")}


def fingerprint_deep(t) -> tuple:
    """:func:`fingerprint` at the positions ``DEEP``."""
    base = fingerprint8(t)
    a = t[1] if type(t) is tuple else None
    if type(a) is not tuple:
        f = BELOW if (type(a) is int or type(t) is int) else NONE
        return base + (f, f, f, f)
    extra = []
    for k in (1, 2):
        if k < len(a):
            b = a[k]
            tb = type(b)
            if tb is tuple:
                for m in (1, 2):
                    if m < len(b):
                        x = b[m]
                        tx = type(x)
                        extra.append(VAR if tx is int else x if tx is str else x[0])
                    else:
                        extra.append(NONE)
            else:
                f = BELOW if tb is int else NONE
                extra.append(f)
                extra.append(f)
        else:
            extra.append(NONE)
            extra.append(NONE)
    return base + tuple(extra)


def fingerprint4(t) -> tuple:
    """:func:`fingerprint` at the positions ``SHALLOW``, unrolled."""
    tt = type(t)
    if tt is int:
        return (VAR, BELOW, BELOW, BELOW)
    if tt is str:
        return (t, NONE, NONE, NONE)
    n = len(t)
    out = [t[0]]
    for i in (1, 2, 3):
        if i < n:
            a = t[i]
            ta = type(a)
            out.append(VAR if ta is int else a if ta is str else a[0])
        else:
            out.append(NONE)
    return tuple(out)


def fingerprint8(t) -> tuple:
    """:func:`fingerprint` at the default positions, unrolled."""
    tt = type(t)
    if tt is int:
        return (VAR, BELOW, BELOW, BELOW, BELOW, BELOW, BELOW, BELOW)
    if tt is str:
        return (t, NONE, NONE, NONE, NONE, NONE, NONE, NONE)
    n = len(t)
    out = [t[0]]
    sub = []
    for i in (1, 2, 3):
        if i < n:
            a = t[i]
            ta = type(a)
            if ta is int:
                out.append(VAR)
                if i < 3:
                    sub.append(BELOW)
                    sub.append(BELOW)
            elif ta is str:
                out.append(a)
                if i < 3:
                    sub.append(NONE)
                    sub.append(NONE)
            else:
                out.append(a[0])
                if i < 3:
                    for k in (1, 2):
                        if k < len(a):
                            b = a[k]
                            tb = type(b)
                            sub.append(VAR if tb is int else b if tb is str else b[0])
                        else:
                            sub.append(NONE)
        else:
            out.append(NONE)
            if i < 3:
                sub.append(NONE)
                sub.append(NONE)
    return tuple(out + sub)


class FingerprintIndex:
    __slots__ = ("root", "size", "dead", "positions", "_fp")

    def __init__(self, positions=POSITIONS):
        self.root: dict = {}
        self.size = 0
        self.dead = 0
        self.positions = positions
        if positions is POSITIONS:
            self._fp = fingerprint8
        elif positions is SHALLOW:
            self._fp = fingerprint4
        elif positions is DEEP:
            self._fp = fingerprint_deep
        else:
            self._fp = lambda t: fingerprint(t, positions)

    def insert(self, term, value) -> None:
        node = self.root
        fp = self._fp(term)
        for f in fp[:-1]:
            nxt = node.get(f)
            if nxt is None:
                nxt = node[f] = {}
            node = nxt
        leaf = node.get(fp[-1])
        if leaf is None:
            leaf = node[fp[-1]] = []
        leaf.append((term, value))
        self.size += 1

    def _retrieve(self, query, mode):
        # level by level: the frontier of trie nodes compatible with the
        # query's features so far (cheaper in Python than a stack of pairs)
        fp = self._fp(query)
        nodes = [self.root]
        direct = _DIRECT[mode]
        for q in fp:
            keys = direct.get(q) if type(q) is not str else (
                (q,) if mode == "inst" else (q, VAR, BELOW))
            nxt = []
            if keys is None:
                ok = _OK[mode]
                for node in nodes:
                    for e, c in node.items():
                        if ok(q, e):
                            nxt.append(c)
            elif len(keys) == 1:
                k = keys[0]
                for node in nodes:
                    c = node.get(k)
                    if c is not None:
                        nxt.append(c)
            else:
                for node in nodes:
                    for k in keys:
                        c = node.get(k)
                        if c is not None:
                            nxt.append(c)
            if not nxt:
                return nxt
            nodes = nxt
        return [entry for leaf in nodes for entry in leaf if entry[1][0].alive]

    def unifiable(self, query):
        return self._retrieve(query, "unify")

    def generalizations(self, query):
        return self._retrieve(query, "gen")

    def instances(self, query):
        return self._retrieve(query, "inst")

    def note_dead(self, n: int = 1) -> None:
        """Tell the index that ``n`` entries died; purge when they dominate."""
        self.dead += n
        if self.dead > 1000 and self.dead * 2 > self.size:
            self.purge()

    def purge(self) -> None:
        def walk(node, depth):
            for k in list(node):
                child = node[k]
                if type(child) is list:
                    child[:] = [e for e in child if e[1][0].alive]
                    if not child:
                        del node[k]
                else:
                    walk(child, depth + 1)
                    if not child:
                        del node[k]
        walk(self.root, 0)
        self.size = sum(1 for _ in self._all())
        self.dead = 0

    def _all(self):
        stack = [self.root]
        while stack:
            node = stack.pop()
            for child in node.values():
                if type(child) is list:
                    yield from child
                else:
                    stack.append(child)


class LinearIndex:
    """The naive mode: a list, every entry is a candidate."""
    __slots__ = ("entries", "size", "dead")

    def __init__(self, positions=None):
        self.entries: list = []
        self.size = 0
        self.dead = 0

    def insert(self, term, value) -> None:
        self.entries.append((term, value))
        self.size += 1

    def _scan(self, query):
        for entry in self.entries:
            if entry[1][0].alive:
                yield entry

    unifiable = generalizations = instances = _scan

    def note_dead(self, n: int = 1) -> None:
        self.dead += n
        if self.dead > 1000 and self.dead * 2 > self.size:
            self.entries = [e for e in self.entries if e[1][0].alive]
            self.size = len(self.entries)
            self.dead = 0
