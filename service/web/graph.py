"""The derivation graph of a proof as SVG geometry (the console's proof page).

Layers: a derived step sits one layer below its deepest parent; a step
without parents (an input) sits just above the first step that uses it, so
inputs do not all pile up in the top row.  An edge between adjacent layers
is one curve; an edge that skips layers runs through a *passage*: a slot of
its own in every layer it crosses, where no node is (the passages of one
parent are shared by all its long edges, so they read as one wire that
branches).  Within a layer, nodes and passages are ordered by the mean
position of what they connect to (down, up, down again: fewer crossings).

Every path is built so that it cannot touch a circle it does not connect:
inside a layer's band (the circles' height plus a margin) a path is a
vertical line at its own slot, at least ``GAP_NODE`` from any other slot's
centre; between bands, where no circle reaches, it is a cubic curve with
vertical tangents (its height grows monotonically, so it stays there).

A parent used twice by one step (a clause superposed into itself) is one
edge, marked with how many times.

Large proofs are not drawn whole: above ``MAX_DRAWN_STEPS`` steps, or when
the whole drawing would be wider than ``MAX_WIDTH`` pixels, the graph shows
the steps nearest the contradiction (breadth first from the last step, the
most that fit), and nodes with parents left out are marked ``cut``.
"""

from __future__ import annotations

from collections import deque

R = 13              # node radius
DY = 66             # distance between layers
PAD = 24            # margin around the drawing
BAND = R + 5        # half the height of a layer's band (the circles plus a margin)
GAP_NODE = 40       # centre to centre, two nodes in one layer
GAP_MIXED = 26      # a node and a passage (a wire 13 px clear of the circle)
GAP_WIRE = 14       # two passages
WIRE_PULL = 6.0     # how much harder a passage keeps in line than a node
HELD = 1000.0       # the weight of what stays put while the inputs are placed

MAX_DRAWN_STEPS = 300
MAX_WIDTH = 2400
NEAR_STEPS = (200, 120, 60, 30)


def _ordered_fit(want: list, weight: list) -> list:
    """The non-decreasing sequence nearest ``want`` (weighted least squares:
    adjacent values pooled while out of order)."""
    blocks: list = []          # [weight sum, weighted sum, count]
    for w, v in zip(weight, want):
        blocks.append([w, w * v, 1])
        while len(blocks) > 1 and blocks[-2][1] / blocks[-2][0] > blocks[-1][1] / blocks[-1][0]:
            w2, s2, n2 = blocks.pop()
            blocks[-1][0] += w2
            blocks[-1][1] += s2
            blocks[-1][2] += n2
    out = []
    for w, sv, n in blocks:
        out += [sv / w] * n
    return out


def _parents(st, known) -> list:
    """The step's parents that are drawn (steps before it: a proof lists
    parents first), each once, in order."""
    seen, out = set(), []
    for p in st.get("parents") or []:
        if p in known and p not in seen:
            seen.add(p)
            out.append(p)
    return out


def _layout(steps: list[dict]) -> dict:
    ids = [st["id"] for st in steps]
    known: set = set()
    parents, times = {}, {}
    for st in steps:
        parents[st["id"]] = _parents(st, known)
        for p in st.get("parents") or []:
            if p in known:
                key = (p, st["id"])
                times[key] = times.get(key, 0) + 1
        known.add(st["id"])
    children: dict = {i: [] for i in ids}
    for c in ids:
        for p in parents[c]:
            children[p].append(c)

    # layers: longest path from the top, then inputs moved down to just
    # above their first use; empty layers squeezed out
    depth: dict = {}
    for i in ids:      # dependency order: parents come first
        ps = [p for p in parents[i] if p in depth]
        depth[i] = 1 + max(depth[p] for p in ps) if ps else 0
    for i in ids:
        if not parents[i] and children[i]:
            depth[i] = min(depth[c] for c in children[i]) - 1
    levels = {d: k for k, d in enumerate(sorted(set(depth.values())))}
    depth = {i: levels[d] for i, d in depth.items()}
    nlayers = len(levels)

    # items: ("n", id) for a node, ("w", id, layer) for a passage of id's wire
    layers: list[list] = [[] for _ in range(nlayers)]
    for i in ids:
        layers[depth[i]].append(("n", i))
    for p in ids:
        far = max((depth[c] for c in children[p]), default=0)
        for k in range(depth[p] + 1, far):
            layers[k].append(("w", p, k))

    def item_at(p, k):
        """What carries p's edges at layer k (k > depth[p])."""
        return ("n", p) if k == depth[p] else ("w", p, k)

    ups: dict = {}
    downs: dict = {}
    for layer in layers:
        for it in layer:
            ups[it], downs[it] = [], []
    for layer in layers:
        for it in layer:
            if it[0] == "w":
                above = item_at(it[1], it[2] - 1)
                ups[it].append(above)
                downs[above].append(it)
            else:
                c = it[1]
                for p in parents[c]:
                    above = item_at(p, depth[c] - 1)
                    ups[it].append(above)
                    downs[above].append(it)

    pos: dict = {}

    def tie(it):
        return (it[1], 0 if it[0] == "n" else 1)

    for k, layer in enumerate(layers):
        if k == 0:
            layer.sort(key=tie)
        for n, it in enumerate(layer):
            pos[it] = n

    def sweep(order, links):
        for k in order:
            layer = layers[k]

            def key(it):
                ns = [pos[x] for x in links[it]]
                return (sum(ns) / len(ns) if ns else pos[it], tie(it))
            layer.sort(key=key)
            for n, it in enumerate(layer):
                pos[it] = n

    down_order = range(1, nlayers)
    up_order = range(nlayers - 2, -1, -1)
    sweep(down_order, ups)
    sweep(up_order, downs)
    sweep(down_order, ups)

    # x: each layer packed (minimum gaps), centred; then, down, up and down
    # again, every item pulled towards the items it connects to (passages
    # pulled hardest, so that wires run straight), the layer's order and
    # gaps kept
    def gap(a, b):
        if a[0] == "n" and b[0] == "n":
            return GAP_NODE
        if a[0] == "n" or b[0] == "n":
            return GAP_MIXED
        return GAP_WIRE

    offs = []
    for layer in layers:
        xs, x = [], 0.0
        for n, it in enumerate(layer):
            if n:
                x += gap(layer[n - 1], it)
            xs.append(x)
        offs.append(xs)
    xat: dict = {}
    for layer, xs in zip(layers, offs):
        mid = xs[-1] / 2 if xs else 0.0
        for it, x in zip(layer, xs):
            xat[it] = x - mid

    def derived(it):
        """A derived node, or a passage of one's edges (an input, and the
        passages of its edges, follow the step that uses it instead of
        pulling it sideways: a long chain of steps, each using one more
        input, would drift)."""
        return bool(parents[it[1]])

    def place(k, links, inputs_only=False):
        layer, xs = layers[k], offs[k]
        want, weight = [], []
        for it in layer:
            if inputs_only and (it[0] == "w" or derived(it)):
                want.append(xat[it])
                weight.append(HELD)
                continue
            ns = [x for x in links[it] if derived(x)] if links is ups else []
            ns = [xat[x] for x in (ns or links[it])]
            want.append(sum(ns) / len(ns) if ns else xat[it])
            weight.append(WIRE_PULL if it[0] == "w" else 1.0)
        ys = _ordered_fit([w - o for w, o in zip(want, xs)], weight)
        for it, y, o in zip(layer, ys, xs):
            xat[it] = y + o

    for order, links in ((down_order, ups), (up_order, downs), (down_order, ups)):
        for k in order:
            place(k, links)
    for k in range(nlayers):        # at last each input beside the step using it
        place(k, downs, inputs_only=True)
    left = min(xat.values(), default=0.0)
    width = max(xat.values(), default=0.0) - left + 2 * (PAD + R)
    where = {}
    for k, layer in enumerate(layers):
        for it in layer:
            where[it] = (round(xat[it] - left + PAD + R, 1), PAD + R + k * DY)

    nodes = []
    for st in steps:
        x, y = where[("n", st["id"])]
        nodes.append({"id": st["id"], "x": x, "y": y, "kind": st.get("_kind", "derived"),
                      "title": f"{st['id']}. {st.get('_text', '')}  [{st.get('rule', '')}]"})

    edges = []
    for c in ids:
        for p in parents[c]:
            chain = [("n", p)] + [("w", p, k) for k in range(depth[p] + 1, depth[c])] + [("n", c)]
            x0, y0 = where[chain[0]]
            d = [f"M{x0},{y0 + R}", f"L{x0},{y0 + BAND}"]
            for it in chain[1:]:
                x1, y1 = where[it]
                top, mid = y1 - BAND, y1 - DY / 2
                d.append(f"C{x0},{mid} {x1},{mid} {x1},{top}")
                d.append(f"L{x1},{y1 - R}" if it[0] == "n" else f"L{x1},{y1 + BAND}")
                x0 = x1
            n = times[(p, c)]
            xc, yc = where[("n", c)]
            edges.append({"from": p, "to": c, "d": " ".join(d), "times": n,
                          "label_x": round(xc + R + 3, 1), "label_y": yc - R - 3})
    height = 2 * (PAD + R) + (nlayers - 1) * DY if nlayers else 2 * (PAD + R)
    return {"nodes": nodes, "edges": edges, "width": round(width, 1), "height": height,
            "r": R}


def nearest(steps: list[dict], n: int) -> list[dict]:
    """The n steps nearest the last one (the contradiction), breadth first
    through the parents, in the proof's order."""
    by_id = {st["id"]: st for st in steps}
    if not steps:
        return []
    seen = {steps[-1]["id"]}
    queue = deque([steps[-1]["id"]])
    while queue and len(seen) < n:
        for p in by_id[queue.popleft()].get("parents") or []:
            if p in by_id and p not in seen and len(seen) < n:
                seen.add(p)
                queue.append(p)
    return [st for st in steps if st["id"] in seen]


def graph_layout(steps: list[dict]) -> dict:
    """The drawing of a proof's derivation graph: nodes (id, x, y, kind,
    title, cut: the parents not drawn), edges (from, to, d: an SVG path,
    times), width, height, r; and shown / total (the steps drawn and the
    proof's steps), partial (not every step drawn) with why ("steps": more
    than MAX_DRAWN_STEPS, "width": wider than MAX_WIDTH)."""
    total = len(steps)
    why = None
    if total <= MAX_DRAWN_STEPS:
        g = _layout(steps)
        if g["width"] <= MAX_WIDTH:
            for nd in g["nodes"]:
                nd["cut"] = []
            g.update(shown=total, total=total, partial=False, why=None)
            return g
        why = "width"
    else:
        why = "steps"
    g = None
    for n in [n for n in NEAR_STEPS if n < total] or [total]:
        g = _layout(nearest(steps, n))
        if g["width"] <= MAX_WIDTH:
            break
    drawn = {nd["id"] for nd in g["nodes"]}
    by_id = {st["id"]: st for st in steps}
    for nd in g["nodes"]:
        missing = [p for p in dict.fromkeys(by_id[nd["id"]].get("parents") or [])
                   if p not in drawn]
        nd["cut"] = missing
        if missing:
            nd["title"] += "  (also from " + ", ".join(map(str, missing)) + ", not drawn)"
    g.update(shown=len(g["nodes"]), total=total, partial=True, why=why)
    return g
