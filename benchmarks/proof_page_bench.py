"""The console's proof page for a long proof: how long the page takes and how
big its derivation graph is.

    .venv/bin/python benchmarks/proof_page_bench.py            # a 4,503-step proof
    .venv/bin/python benchmarks/proof_page_bench.py --rules 500 --repeat 5
    .venv/bin/python benchmarks/proof_page_bench.py --browser   # also Chromium's time

The problem is ours: a fact p0(c), rules p_i(x) -> p_(i+1)(x) for i < N and
the conjecture p_N(c); the engine's proof of it has 2N + 3 steps (N = 2250:
4,503).  The job is submitted through the API and worked off in-process (the
real engine, fakeredis), then GET /jobs/<id>/proof is timed with Flask's test
client.  Prints the median and the range of the page times, the page's size
and the graph's width, height and node count; with --browser also how long
headless Chromium (Debian's /usr/bin/chromium, NIGHTJAR_CHROMIUM overrides)
takes to load and lay out the page (its stylesheet and script served from
service/web/static).  Asserts nothing.
"""

from __future__ import annotations

import argparse
import os
import re
import statistics
import sys
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)

import fakeredis                                   # noqa: E402
from rq import Queue                               # noqa: E402

from service.app import create_app                 # noqa: E402
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config  # noqa: E402
from service.store import Store                    # noqa: E402
from worker import jobs                            # noqa: E402


def chain(n: int) -> str:
    lines = ["axiom start: p0(c)"]
    lines += [f"axiom r{i}: forall x. p{i}(x) implies p{i + 1}(x)" for i in range(n)]
    lines.append(f"conjecture goal: p{n}(c)")
    return "\n".join(lines) + "\n"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--rules", type=int, default=2250, help="N, the number of rules (default 2250)")
    ap.add_argument("--repeat", type=int, default=7, help="page loads timed (default 7)")
    ap.add_argument("--browser", action="store_true", help="also time Chromium loading the page")
    a = ap.parse_args(argv)

    r = fakeredis.FakeRedis()
    cfg = Config(max_time_limit=120, default_time_limit=60, max_upload_bytes=5_000_000)
    app = create_app(cfg, r)
    store = Store(r)
    token = store.add_token("bench")
    client = app.test_client()
    body = {"problem": {"main": "chain.nj", "files": {"chain.nj": chain(a.rules)}},
            "time_limit": 60}
    resp = client.post("/api/submissions", json=body,
                       headers={"Authorization": f"Bearer {token}"})
    assert resp.status_code in (200, 201, 202), resp.get_data(as_text=True)
    jid = resp.get_json()["jobs"][0]["id"]
    for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
        q = Queue(qn, connection=r)
        for rq_id in q.job_ids:
            jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
            q.remove(rq_id)
    rec = store.get_job(jid)
    steps = len(store.get_result(jid)["proof"]["steps"])
    print(f"job {jid}: {rec.get('verdict')}, a proof of {steps} steps")

    # sign in through the form (the page needs a console session)
    page = client.get("/sign-in").get_data(as_text=True)
    csrf = re.search(r'name="csrf" value="([^"]+)"', page).group(1)
    client.post("/sign-in", data={"csrf": csrf, "token": token})

    times, text = [], ""
    for _ in range(a.repeat):
        t0 = time.perf_counter()
        got = client.get(f"/jobs/{jid}/proof")
        times.append(time.perf_counter() - t0)
        assert got.status_code == 200, got.status_code
        text = got.get_data(as_text=True)
    svg = re.search(r'<svg id="proof-graph"[^>]*width="([\d.]+)" height="([\d.]+)"', text)
    nodes = len(re.findall(r'class="node ', text))
    print(f"page: median {statistics.median(times):.3f} s, range {min(times):.3f}-{max(times):.3f} s "
          f"over {a.repeat} loads; {len(text) / 1e6:.2f} MB of HTML")
    if svg:
        print(f"graph: {svg.group(1)} x {svg.group(2)} px, {nodes} nodes drawn of {steps} steps")
    if a.browser:
        browser_times(text, a.repeat)
    return 0


def browser_times(text: str, repeat: int) -> None:
    from playwright.sync_api import sync_playwright
    static = os.path.join(ROOT, "service", "web", "static")
    exe = os.environ.get("NIGHTJAR_CHROMIUM", "/usr/bin/chromium")

    def serve(route):
        name = route.request.url.split("/web-static/", 1)[1].split("?")[0]
        with open(os.path.join(static, os.path.basename(name)), "rb") as f:
            body = f.read()
        kind = "text/css" if name.endswith(".css") else "text/javascript"
        route.fulfill(status=200, body=body, content_type=kind)

    def page_route(route):
        route.fulfill(status=200, body=text, content_type="text/html")

    times = []
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=exe, args=["--no-sandbox"])
        for _ in range(repeat):
            pg = b.new_page(viewport={"width": 1300, "height": 900})
            pg.route("**/web-static/**", serve)
            pg.route("http://bench.invalid/proof", page_route)
            t0 = time.perf_counter()
            pg.goto("http://bench.invalid/proof", wait_until="load")
            pg.evaluate("document.body.getBoundingClientRect().height")   # layout done
            pg.screenshot()                                                # and painted
            times.append(time.perf_counter() - t0)
            pg.close()
        b.close()
    print(f"Chromium: load, layout and first screenshot median {statistics.median(times):.3f} s, "
          f"range {min(times):.3f}-{max(times):.3f} s over {repeat} loads")


if __name__ == "__main__":
    sys.exit(main())
