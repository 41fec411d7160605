"""A finite model as plain text, in the native notation.

The domain first, then the constants (``e = 0``), the other functions
(unary ones as a row of values under a row of arguments, binary ones as an
operation table: rows the left argument, columns the right one; higher
arities as one line per entry), then the predicates (propositional ones as
true/false, unary ones as the set where they hold plus the truth row, binary
ones as a grid of T and F, higher arities as the tuples where they hold).
"""

from __future__ import annotations

_INFIX = {"*", "+"}


def _table(tab, n):
    """{args tuple: value} from the JSON value list."""
    return {tuple(args): v for args, v in tab.get("values", ())}


def _grid(corner, rows, cols, cell, width):
    """An aligned table: header row, rule, one line per row."""
    w = max(width, len(corner))
    head = corner.ljust(w) + " | " + " ".join(str(c).rjust(width) for c in cols)
    lines = [head, "-" * (w + 1) + "+" + "-" * (len(head) - w - 2)]
    for r in rows:
        lines.append(str(r).ljust(w) + " | " + " ".join(cell(r, c).rjust(width) for c in cols))
    return lines


def _rows(dom, label, values, width):
    """Two aligned lines: the arguments, then the values under them."""
    w = max(width, len(label))
    return ["  " + "x".ljust(w) + " | " + " ".join(str(c).rjust(width) for c in dom),
            "  " + label.ljust(w) + " | " + " ".join(v.rjust(width) for v in values)]


def _fname(f, args):
    if f in _INFIX and len(args) == 2:
        return f"{args[0]} {f} {args[1]}"
    return f"{f}({', '.join(str(a) for a in args)})"


def format_model(model) -> str:
    n = model["size"]
    dom = list(range(n))
    width = len(str(n - 1))
    out = [f"Domain: {{{', '.join(map(str, dom))}}} ({n} element{'s' if n != 1 else ''})"]
    funs = model.get("functions") or {}
    preds = model.get("predicates") or {}

    consts = sorted(f for f, t in funs.items() if t["arity"] == 0)
    if consts:
        out.append("")
        w = max(len(c) for c in consts)
        for c in consts:
            out.append(f"{c.ljust(w)} = {_table(funs[c], n).get((), '?')}")

    for f in sorted(f for f, t in funs.items() if t["arity"] > 0):
        tab, k = _table(funs[f], n), funs[f]["arity"]
        out.append("")
        if k == 1:
            out.append(f"{f}(x):")
            out += _rows(dom, f"{f}(x)", [str(tab.get((c,), "?")) for c in dom], width)
        elif k == 2:
            shown = "x * y".replace("*", f) if f in _INFIX else f"{f}(x, y)"
            out.append(f"{shown}  (row x, column y):")
            out += ["  " + line for line in _grid(
                f, dom, dom, lambda r, c: str(tab.get((r, c), "?")), width)]
        else:
            out.append(f"{f}/{k}:")
            for args in sorted(tab):
                out.append(f"  {_fname(f, args)} = {tab[args]}")

    for p in sorted(preds):
        tab, k = _table(preds[p], n), preds[p]["arity"]
        out.append("")
        if k == 0:
            out.append(f"{p} is {'true' if tab.get((), False) else 'false'}")
        elif k == 1:
            where = [c for c in dom if tab.get((c,), False)]
            out.append(f"{p}(x) holds for x in {{{', '.join(map(str, where))}}}")
            out += _rows(dom, f"{p}(x)", ["T" if tab.get((c,), False) else "F" for c in dom], width)
        elif k == 2:
            out.append(f"{p}(x, y)  (row x, column y; T where it holds):")
            out += ["  " + line for line in _grid(
                p, dom, dom, lambda r, c: "T" if tab.get((r, c), False) else "F", width)]
        else:
            where = [args for args in sorted(tab) if tab[args]]
            if len(where) * 2 <= len(tab):
                out.append(f"{p}/{k} holds for:" + ("" if where else " nothing"))
                shown = where
            else:
                shown = [args for args in sorted(tab) if not tab[args]]
                out.append(f"{p}/{k} holds everywhere" + (" except:" if shown else ""))
            for args in shown:
                out.append(f"  {_fname(p, args)}")
    return "\n".join(out)
