"""The proof page's derivation graph, checked as geometry on the page.

An edge that skips layers must not run through the circle of a step it does
not connect (drawn straight, 2 -> 6 read as 2 -> 4 -> 5 -> 6), a parent used
twice is one edge, and a long proof shows a part of its graph that can be
read, while its steps table stays complete.  Real engine proofs of corpus
problems, submitted through the API and worked off in-process (fakeredis,
Flask test client), plus a constructed proof of the shape QA reported."""

from __future__ import annotations

import html
import math
import re
from pathlib import Path

import pytest

from service.web.graph import MAX_DRAWN_STEPS, MAX_WIDTH, graph_layout
from tests.test_web_pages import env  # noqa: F401  (the console over fakeredis)
from worker.syntax import collect_bundle

ROOT = Path(__file__).resolve().parent.parent
CORPUS = ROOT / "corpus" / "checks"

# ------------------------------------------------------------ the SVG, read back

SVG_RE = re.compile(r'<svg id="proof-graph".*?</svg>', re.S)
NODE_RE = re.compile(r'<a href="#step-(\d+)" class="node[^"]*" data-step="(\d+)"[^>]*>'
                     r'<title>.*?</title><circle cx="([\d.]+)" cy="([\d.]+)" r="([\d.]+)"', re.S)
PATH_RE = re.compile(r'<path class="edge" data-from="(\d+)" data-to="(\d+)" d="([^"]+)"')
LINE_RE = re.compile(r'<line class="edge" data-from="(\d+)" data-to="(\d+)" '
                     r'x1="([\d.]+)" y1="([\d.]+)" x2="([\d.]+)" y2="([\d.]+)"')


def read_graph(page: str):
    """(nodes {id: (x, y, r)}, edges [(from, to, [points along it])]) from
    the page's SVG: paths (M, L, C commands) sampled densely, and straight
    <line> edges (what the page drew before) as well."""
    svg = SVG_RE.search(page)
    assert svg, "no derivation graph on the page"
    svg = svg.group(0)
    nodes = {}
    for href, sid, cx, cy, r in NODE_RE.findall(svg):
        assert href == sid
        nodes[int(sid)] = (float(cx), float(cy), float(r))
    edges = []
    for a, b, d in PATH_RE.findall(svg):
        edges.append((int(a), int(b), sample_path(d)))
    for a, b, x1, y1, x2, y2 in LINE_RE.findall(svg):
        edges.append((int(a), int(b), sample_line((float(x1), float(y1)),
                                                  (float(x2), float(y2)))))
    return nodes, edges


def sample_line(p, q, n=40):
    return [(p[0] + (q[0] - p[0]) * k / n, p[1] + (q[1] - p[1]) * k / n) for k in range(n + 1)]


def sample_path(d: str, n=60):
    toks = re.findall(r"[MLC]|-?[\d.]+", d)
    pts, cur, i = [], None, 0
    while i < len(toks):
        cmd = toks[i]
        i += 1
        nums = []
        while i < len(toks) and toks[i] not in "MLC":
            nums.append(float(toks[i]))
            i += 1
        if cmd == "M":
            assert len(nums) == 2, d
            cur = (nums[0], nums[1])
            pts.append(cur)
        elif cmd == "L":
            assert len(nums) == 2 and cur is not None, d
            pts += sample_line(cur, (nums[0], nums[1]), n)
            cur = (nums[0], nums[1])
        else:
            assert len(nums) == 6 and cur is not None, d
            (x1, y1), (x2, y2), (x3, y3) = zip(nums[0::2], nums[1::2])
            for k in range(n + 1):
                t = k / n
                a, b, c, e = (1 - t) ** 3, 3 * (1 - t) ** 2 * t, 3 * (1 - t) * t * t, t ** 3
                pts.append((a * cur[0] + b * x1 + c * x2 + e * x3,
                            a * cur[1] + b * y1 + c * y2 + e * y3))
            cur = (x3, y3)
    return pts


def graph_faults(page: str, steps: list[dict]) -> list[str]:
    """Everything wrong with the drawn graph of these steps: an edge that
    comes within a node's radius of a node other than its two ends, an edge
    that does not start at its parent's circle or end at its step's, a
    repeated edge, a parent relation with no edge (among drawn steps)."""
    nodes, edges = read_graph(page)
    faults = []
    seen = set()
    for a, b, pts in edges:
        if (a, b) in seen:
            faults.append(f"edge {a}->{b} drawn twice")
        seen.add((a, b))
        for end, pt in ((a, pts[0]), (b, pts[-1])):
            x, y, r = nodes[end]
            if abs(math.hypot(pt[0] - x, pt[1] - y) - r) > 1.0:
                faults.append(f"edge {a}->{b} does not meet the circle of {end}")
        for sid, (x, y, r) in nodes.items():
            if sid in (a, b):
                continue
            near = min(math.hypot(px - x, py - y) for px, py in pts)
            if near < r:
                faults.append(f"edge {a}->{b} passes through node {sid} "
                              f"({near:.1f} px from its centre, radius {r})")
    want = {(p, st["id"]) for st in steps if st["id"] in nodes
            for p in st.get("parents") or [] if p in nodes}
    for a, b in sorted(want - seen):
        faults.append(f"no edge {a}->{b}")
    for a, b in sorted(seen - want):
        faults.append(f"edge {a}->{b} is no parent relation")
    return faults


# ------------------------------------------------------------ jobs on the console

def prove_on_console(e, path: Path, time_limit=20):
    """Submit a corpus file (and what it includes) through the API, work it
    off with the real engine, sign in; (job id, stored proof)."""
    files = collect_bundle(str(path))
    main = next(iter(files))
    resp = e.client.post("/api/submissions",
                         json={"problem": {"main": main, "files": files},
                               "time_limit": time_limit},
                         headers={"Authorization": f"Bearer {e.alice}"})
    assert resp.status_code in (200, 201, 202), resp.get_data(as_text=True)
    jid = resp.get_json()["jobs"][0]["id"]
    e.run_all()
    rec = e.store.get_job(jid)
    assert rec["verdict"] == "Theorem", (path, rec)
    e.sign_in(e.alice)
    return jid, e.store.get_result(jid)["proof"]


@pytest.mark.parametrize("rel", [
    "group-completion/r10_inverse_of_product.nj",   # long edges between equations
    "pelletier/p49.p",                              # a parent used twice
    "pelletier/p58.p",                              # a parent used twice, 5 steps
    "pelletier/p34.p",                              # 172 steps
])
def test_edges_of_engine_proofs_touch_only_their_own_two_steps(env, rel):
    jid, pf = prove_on_console(env, CORPUS / rel)
    page = env.get(f"/jobs/{jid}/proof")
    steps = pf["steps"]
    assert len(steps) <= MAX_DRAWN_STEPS
    nodes, edges = read_graph(page)
    assert set(nodes) == {st["id"] for st in steps}        # drawn whole
    assert graph_faults(page, steps) == []
    assert 'id="graph-partial"' not in page


def test_the_proof_shape_qa_reported(env):
    """Step 4 uses step 1 twice; 6 uses 2 and 5; 4 and 5 sit between 2 and
    6.  Drawn before: one straight line 2->6 through the circles of 4 and 5,
    and 1->4 twice."""
    steps = [
        {"id": 1, "rule": "input", "parents": []},
        {"id": 2, "rule": "input", "parents": []},
        {"id": 3, "rule": "input", "parents": []},
        {"id": 4, "rule": "superposition", "parents": [1, 1]},
        {"id": 5, "rule": "resolution", "parents": [4, 3]},
        {"id": 6, "rule": "resolution", "parents": [2, 5]},
    ]
    for st in steps:
        st["_kind"], st["_text"] = "derived", f"c{st['id']}"
    g = graph_layout(steps)
    edges = [(e["from"], e["to"]) for e in g["edges"]]
    assert sorted(edges) == [(1, 4), (2, 6), (3, 5), (4, 5), (5, 6)]
    assert next(e for e in g["edges"] if (e["from"], e["to"]) == (1, 4))["times"] == 2
    # the same geometry check on the markup the template makes of it
    from flask import render_template
    with env.app.test_request_context():
        svg = render_template("proof.html", j={"id": "j1", "batch": "b1", "verdict": "Theorem"},
                              name="n", steps=[dict(st, clause=[]) for st in steps], axioms=[],
                              used=set(), symbols=[], graph=g, text="")
    assert graph_faults(svg, steps) == []
    assert svg.count(">×2</text>") == 1


def test_the_check_sees_an_edge_through_a_node():
    """The geometry check itself: a straight edge 2->6 over 4 and 5 (the
    old drawing) is a fault, and so is a repeated edge."""
    page = ('<svg id="proof-graph">'
            '<line class="edge" data-from="2" data-to="6" x1="82" y1="35" x2="82" y2="189">'
            '<line class="edge" data-from="1" data-to="4" x1="40" y1="35" x2="82" y2="69">'
            '<line class="edge" data-from="1" data-to="4" x1="40" y1="35" x2="82" y2="69">'
            + "".join(f'<a href="#step-{i}" class="node x" data-step="{i}" id="node-{i}">'
                      f'<title>t</title><circle cx="{x}" cy="{y}" r="13">'
                      for i, x, y in ((1, 40, 22), (2, 82, 22), (4, 82, 82), (5, 82, 142),
                                      (6, 82, 202)))
            + "</svg>")
    faults = graph_faults(page, [{"id": 4, "parents": [1, 1]}, {"id": 6, "parents": [2]}])
    assert "edge 1->4 drawn twice" in faults
    assert any(f.startswith("edge 2->6 passes through node 4") for f in faults)
    assert any(f.startswith("edge 2->6 passes through node 5") for f in faults)


# ------------------------------------------------------------ long proofs

def chain(n: int) -> str:
    """A fact, n rules p_i(x) -> p_(i+1)(x) and the conjecture p_n(c): the
    engine's proof has 2n + 3 steps."""
    lines = ["axiom start: p0(c)"]
    lines += [f"axiom r{i}: forall x. p{i}(x) implies p{i + 1}(x)" for i in range(n)]
    lines.append(f"conjecture goal: p{n}(c)")
    return "\n".join(lines) + "\n"


def test_a_long_proof_draws_the_steps_nearest_the_contradiction(env, tmp_path):
    (tmp_path / "chain.nj").write_text(chain(400))
    jid, pf = prove_on_console(env, tmp_path / "chain.nj", time_limit=60)
    steps = pf["steps"]
    assert len(steps) == 803 > MAX_DRAWN_STEPS
    page = env.get(f"/jobs/{jid}/proof")
    # the table is complete
    assert len(re.findall(r'<tr id="step-\d+" class="step', page)) == len(steps)
    # the page says the graph is a part
    note = re.search(r'<p id="graph-partial">(.*?)</p>', page, re.S)
    assert note, "no note that the graph is partial"
    text = html.unescape(re.sub(r"<[^>]+>", "", note.group(1)))
    nodes, edges = read_graph(page)
    assert f"This proof has {len(steps)} steps" in text
    assert f"shows the {len(nodes)} steps nearest the contradiction" in text
    # what is drawn: the contradiction and the steps right above it, readable
    assert 10 <= len(nodes) <= MAX_DRAWN_STEPS
    assert steps[-1]["id"] in nodes
    by_id = {st["id"]: st for st in steps}
    for sid in nodes:
        if sid != steps[-1]["id"]:
            assert any(sid in (by_id[c].get("parents") or []) for c in nodes), sid
    width = float(re.search(r'<svg id="proof-graph"[^>]*width="([\d.]+)"', page).group(1))
    assert width <= MAX_WIDTH
    assert graph_faults(page, steps) == []
    # a drawn step whose parents are not all drawn is dashed and says which
    cut = [sid for sid in nodes if any(p not in nodes for p in by_id[sid].get("parents") or [])]
    assert cut
    for sid in cut:
        node = re.search(rf'<a href="#step-{sid}" class="node [^"]*cut[^"]*"[^>]*>'
                         rf'<title>([^<]*)</title><circle [^>]*stroke-dasharray', page)
        assert node, sid
        missing = [p for p in by_id[sid]["parents"] if p not in nodes]
        assert "not drawn" in node.group(1) and str(missing[0]) in node.group(1)


def test_a_short_proof_wider_than_the_page_is_drawn_in_part():
    """Few steps but one with very many parents (a finite-domain step uses
    every input): the layer of inputs would be wider than MAX_WIDTH."""
    n = MAX_WIDTH // 40 + 20
    steps = [{"id": i, "rule": "input", "parents": [], "_kind": "axiom", "_text": "p"}
             for i in range(1, n + 1)]
    steps.append({"id": n + 1, "rule": "finite_domain", "parents": list(range(1, n + 1)),
                  "_kind": "empty", "_text": ""})
    g = graph_layout(steps)
    assert g["partial"] and g["why"] == "width" and g["total"] == n + 1
    assert g["width"] <= MAX_WIDTH and g["shown"] == len(g["nodes"]) < n + 1
    last = next(nd for nd in g["nodes"] if nd["id"] == n + 1)
    assert last["cut"] and "not drawn" in last["title"]
