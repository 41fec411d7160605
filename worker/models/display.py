"""A finite model as plain text, in the native notation.

The domain first, then the constants (``e = 0``), the other functions
(unary ones as a row of values under a row of arguments, binary ones as an
operation table: rows the left argument, columns the right one; higher
arities as one line per entry), then the predicates (propositional ones as
true/false, unary ones as the set where they hold plus the truth row, binary
ones as a grid of T and F, higher arities as the tuples where they hold).

Domain elements are written ``0, 1, ...``; when the problem itself has
constants named by numerals (``0``, ``1`` are legal names), the elements are
written ``#0, #1, ...`` instead so that ``0 = #1`` cannot be misread.
"""

from __future__ import annotations

_INFIX = {"*", "+"}


def natural(name: str):
    """Sort key that puts b2 before b10 (runs of digits compared as numbers)."""
    import re
    return [(0, int(p), "") if p.isdigit() else (1, 0, p)
            for p in re.split(r"(\d+)", str(name)) if p]


def _table(tab):
    """{args tuple: value} from the JSON value list."""
    return {tuple(args): v for args, v in tab.get("values", ())}


def _grid(corner, rows, cols, cell, width, el):
    """An aligned table: header row, rule, one line per row."""
    w = max(width, len(corner))
    head = corner.ljust(w) + " | " + " ".join(el(c).rjust(width) for c in cols)
    lines = [head, "-" * (w + 1) + "+" + "-" * (len(head) - w - 2)]
    for r in rows:
        lines.append(el(r).ljust(w) + " | " + " ".join(cell(r, c).rjust(width) for c in cols))
    return lines


def _rows(dom, label, values, width, el):
    """Two aligned lines: the arguments, then the values under them."""
    w = max(width, len(label))
    return ["  " + "x".ljust(w) + " | " + " ".join(el(c).rjust(width) for c in dom),
            "  " + label.ljust(w) + " | " + " ".join(v.rjust(width) for v in values)]


def _fname(f, args, el):
    if f in _INFIX and len(args) == 2:
        return f"{el(args[0])} {f} {el(args[1])}"
    return f"{f}({', '.join(el(a) for a in args)})"


def format_model(model) -> str:
    n = model["size"]
    dom = list(range(n))
    funs = model.get("functions") or {}
    preds = model.get("predicates") or {}
    numeral_names = sorted(f for f in funs if f.isdigit())
    if numeral_names:
        def el(v):
            return "?" if v is None else f"#{v}"
    else:
        def el(v):
            return "?" if v is None else str(v)
    width = len(el(n - 1))
    out = [f"Domain: {{{', '.join(map(el, dom))}}} ({n} element{'s' if n != 1 else ''})"]
    if numeral_names:
        out.append(f"(elements are written #0, #1, ... because {', '.join(numeral_names)} "
                   f"{'is a constant' if len(numeral_names) == 1 else 'are constants'} "
                   f"of the problem)")

    consts = sorted((f for f, t in funs.items() if t["arity"] == 0), key=natural)
    if consts:
        out.append("")
        w = max(len(c) for c in consts)
        for c in consts:
            out.append(f"{c.ljust(w)} = {el(_table(funs[c]).get(()))}")

    for f in sorted((f for f, t in funs.items() if t["arity"] > 0), key=natural):
        tab, k = _table(funs[f]), funs[f]["arity"]
        out.append("")
        if k == 1:
            out.append(f"{f}(x):")
            out += _rows(dom, f"{f}(x)", [el(tab.get((c,))) for c in dom], width, el)
        elif k == 2:
            shown = f"x {f} y" if f in _INFIX else f"{f}(x, y)"
            out.append(f"{shown}  (row x, column y):")
            out += ["  " + line for line in _grid(
                f, dom, dom, lambda r, c: el(tab.get((r, c))), width, el)]
        else:
            out.append(f"{f}/{k}:")
            for args in sorted(tab):
                out.append(f"  {_fname(f, args, el)} = {el(tab[args])}")

    for p in sorted(preds, key=natural):
        tab, k = _table(preds[p]), preds[p]["arity"]
        out.append("")
        if k == 0:
            out.append(f"{p} is {'true' if tab.get((), False) else 'false'}")
        elif k == 1:
            where = [c for c in dom if tab.get((c,), False)]
            out.append(f"{p}(x) holds for x in {{{', '.join(map(el, where))}}}")
            out += _rows(dom, f"{p}(x)", ["T" if tab.get((c,), False) else "F" for c in dom],
                         width, el)
        elif k == 2:
            out.append(f"{p}(x, y)  (row x, column y; T where it holds):")
            out += ["  " + line for line in _grid(
                p, dom, dom, lambda r, c: "T" if tab.get((r, c), False) else "F", width, el)]
        else:
            where = [args for args in sorted(tab) if tab[args]]
            if len(where) * 2 <= len(tab):
                out.append(f"{p}/{k} holds for:" + ("" if where else " nothing"))
                shown = where
            else:
                shown = [args for args in sorted(tab) if not tab[args]]
                out.append(f"{p}/{k} holds everywhere" + (" except:" if shown else ""))
            for args in shown:
                out.append(f"  {_fname(p, args, el)}")
    return "\n".join(out)
