"""Term representations compared on the engine's most frequent operations.

    .venv/bin/python benchmarks/terms_bench.py [--terms N] [--repeat R]

Representations:

* ``tuple``     the project's choice (worker/syntax/terms.py): variables are
                ints, constants interned strs, applications tuples
                ``(f, t1, ..., tn)``;
* ``slots``     one ``__slots__`` class per kind (``Var``, ``App``) with
                structural ``__eq__``/``__hash__`` written in Python;
* ``hashcons``  ``__slots__`` classes built through a table so that equal
                terms are the same object: equality is identity, the hash is
                cached at construction;
* ``namedtuple`` applications as ``App(f, args)`` namedtuples (``args`` a
                tuple), variables ints.

Operations (each on the same N random terms, built from one seed):

* build       construct the terms from a neutral nested-list description;
* subst       apply a substitution binding a third of the variables;
* eq          compare each term with an equal copy built separately, and
              with its neighbour (mostly unequal);
* hash        put every term in a set, then look each copy up;
* walk        visit every subterm (position-free pre-order).

Prints the median time of R runs per operation and representation, and the
ratio to ``tuple`` (above 1 means slower than the project's choice).  Times
are CPU time of this process (``time.process_time``), so other work on a
shared machine disturbs them less.  The hash-consing table is filled by the
first run and kept, as it would be in an engine, so later ``build`` runs
mostly look terms up.
"""

from __future__ import annotations

import argparse
import random
import statistics
import sys
import time
from collections import namedtuple

sys.setrecursionlimit(10_000)

FUNCS = [("f", 1), ("g", 2), ("h", 3), ("m", 2), ("i", 1)]
CONSTS = ["a", "b", "c", "e"]


def random_spec(rng, depth):
    """A term as nested lists: ['f', [...], ...], 'a', or an int variable."""
    if depth == 0 or rng.random() < 0.3:
        return rng.randrange(6) if rng.random() < 0.5 else rng.choice(CONSTS)
    f, n = rng.choice(FUNCS)
    return [f] + [random_spec(rng, depth - 1) for _ in range(n)]


# ---------------------------------------------------------------- tuples

class TupleRep:
    name = "tuple"

    @staticmethod
    def build(s):
        if type(s) is list:
            return (sys.intern(s[0]), *[TupleRep.build(a) for a in s[1:]])
        return s if type(s) is int else sys.intern(s)

    @staticmethod
    def subst(t, env):
        tt = type(t)
        if tt is int:
            return env.get(t, t)
        if tt is str:
            return t
        return (t[0], *[TupleRep.subst(a, env) for a in t[1:]])

    @staticmethod
    def walk(t):
        n = 0
        stack = [t]
        while stack:
            x = stack.pop()
            n += 1
            if type(x) is tuple:
                stack.extend(x[1:])
        return n

    @staticmethod
    def var(v):
        return v


# ---------------------------------------------------------------- slots

class SVar:
    __slots__ = ("n",)

    def __init__(self, n):
        self.n = n

    def __eq__(self, other):
        return type(other) is SVar and other.n == self.n

    def __hash__(self):
        return hash(self.n)


class SApp:
    __slots__ = ("f", "args")

    def __init__(self, f, args):
        self.f = f
        self.args = args

    def __eq__(self, other):
        return (type(other) is SApp and other.f is self.f
                and other.args == self.args)

    def __hash__(self):
        return hash((self.f, self.args))


class SlotsRep:
    name = "slots"

    @staticmethod
    def build(s):
        if type(s) is list:
            return SApp(sys.intern(s[0]),
                        tuple(SlotsRep.build(a) for a in s[1:]))
        return SVar(s) if type(s) is int else SApp(sys.intern(s), ())

    @staticmethod
    def subst(t, env):
        if type(t) is SVar:
            return env.get(t.n, t)
        if not t.args:
            return t
        return SApp(t.f, tuple(SlotsRep.subst(a, env) for a in t.args))

    @staticmethod
    def walk(t):
        n = 0
        stack = [t]
        while stack:
            x = stack.pop()
            n += 1
            if type(x) is SApp:
                stack.extend(x.args)
        return n

    @staticmethod
    def var(v):
        return SVar(v)


# ---------------------------------------------------------------- hash-consed

class HVar:
    __slots__ = ("n", "h")


class HApp:
    __slots__ = ("f", "args", "h")

    def __hash__(self):
        return self.h


HVar.__hash__ = lambda self: self.h

_TABLE: dict = {}


def hvar(n):
    key = n
    t = _TABLE.get(key)
    if t is None:
        t = HVar()
        t.n = n
        t.h = hash(("var", n))
        _TABLE[key] = t
    return t


def happ(f, args):
    key = (f, *map(id, args))
    t = _TABLE.get(key)
    if t is None:
        t = HApp()
        t.f = f
        t.args = args
        t.h = hash(key)
        _TABLE[key] = t
    return t


class HashConsRep:
    name = "hashcons"

    @staticmethod
    def build(s):
        if type(s) is list:
            return happ(sys.intern(s[0]),
                        tuple(HashConsRep.build(a) for a in s[1:]))
        return hvar(s) if type(s) is int else happ(sys.intern(s), ())

    @staticmethod
    def subst(t, env):
        if type(t) is HVar:
            return env.get(t.n, t)
        if not t.args:
            return t
        return happ(t.f, tuple(HashConsRep.subst(a, env) for a in t.args))

    @staticmethod
    def walk(t):
        n = 0
        stack = [t]
        while stack:
            x = stack.pop()
            n += 1
            if type(x) is HApp:
                stack.extend(x.args)
        return n

    @staticmethod
    def var(v):
        return hvar(v)


# ---------------------------------------------------------------- namedtuple

NApp = namedtuple("NApp", "f args")


class NamedTupleRep:
    name = "namedtuple"

    @staticmethod
    def build(s):
        if type(s) is list:
            return NApp(sys.intern(s[0]),
                        tuple(NamedTupleRep.build(a) for a in s[1:]))
        return s if type(s) is int else NApp(sys.intern(s), ())

    @staticmethod
    def subst(t, env):
        if type(t) is int:
            return env.get(t, t)
        if not t.args:
            return t
        return NApp(t.f, tuple(NamedTupleRep.subst(a, env) for a in t.args))

    @staticmethod
    def walk(t):
        n = 0
        stack = [t]
        while stack:
            x = stack.pop()
            n += 1
            if type(x) is not int:
                stack.extend(x.args)
        return n

    @staticmethod
    def var(v):
        return v


REPS = [TupleRep, SlotsRep, HashConsRep, NamedTupleRep]


# ---------------------------------------------------------------- driver

def measure(rep, specs, repeat):
    build = rep.build
    results = {}

    def run(fn):
        times = []
        for _ in range(repeat):
            t = time.process_time()
            fn()
            times.append(time.process_time() - t)
        return statistics.median(times)

    results["build"] = run(lambda: [build(s) for s in specs])
    terms = [build(s) for s in specs]
    copies = [build(s) for s in specs]
    env_raw = {0: ["g", "a", 1], 2: "b"}
    env = {v: build(s) for v, s in env_raw.items()}
    subst = rep.subst
    results["subst"] = run(lambda: [subst(t, env) for t in terms])
    shifted = terms[1:] + terms[:1]

    def eq():
        n = 0
        for a, b, c in zip(terms, copies, shifted):
            if a == b:
                n += 1
            if a == c:
                n += 1
        return n

    results["eq"] = run(eq)

    def hashing():
        s = set(terms)
        return sum(1 for c in copies if c in s)

    results["hash"] = run(hashing)
    walk = rep.walk
    results["walk"] = run(lambda: sum(walk(t) for t in terms))
    # sanity: every representation sees the same terms
    sizes = sum(walk(t) for t in terms)
    return results, sizes, eq(), hashing()


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--terms", type=int, default=5_000)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--depth", type=int, default=6)
    args = ap.parse_args(argv)
    rng = random.Random(2024)
    specs = [random_spec(rng, args.depth) for _ in range(args.terms)]

    table = {}
    checks = set()
    for rep in REPS:
        _TABLE.clear()
        res, sizes, neq, nhash = measure(rep, specs, args.repeat)
        table[rep.name] = res
        checks.add((sizes, neq, nhash))
    assert len(checks) == 1, f"representations disagree: {checks}"
    sizes = checks.pop()[0]

    ops = ["build", "subst", "eq", "hash", "walk"]
    print(f"{args.terms} terms, {sizes} subterm occurrences, depth <= "
          f"{args.depth}; median of {args.repeat} runs, milliseconds "
          f"(ratio to tuple)")
    print(f"{'':12}" + "".join(f"{op:>18}" for op in ops))
    base = table["tuple"]
    for rep in REPS:
        row = table[rep.name]
        cells = "".join(f"{row[op] * 1000:10.2f} ({row[op] / base[op]:4.2f})"
                        for op in ops)
        print(f"{rep.name:12}{cells}")


if __name__ == "__main__":
    main()
