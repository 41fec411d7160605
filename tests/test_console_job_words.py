"""The console's job and batch pages: a model is called a model unless it is
a countermodel, and a reused job says where its verdict and its seconds come
from (the rule of DEVELOPERS.md, "Command line": seconds shown are the job's
own search; a reused job's are the original search's, shown apart).  Flask
test client, fakeredis, the real engine on tiny problems."""

from __future__ import annotations

import re

import fakeredis
import pytest
from rq import Queue

from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.store import Store
from worker import jobs

CSRF_RE = re.compile(r'name="csrf" value="([^"]+)"')


@pytest.fixture
def console(monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    monkeypatch.delenv("NIGHTJAR_COOKIE_SECURE", raising=False)
    r = fakeredis.FakeRedis()
    app = create_app(Config(), r)
    tok = Store(r).add_token("alice")
    c = app.test_client()
    page = c.get("/sign-in").get_data(as_text=True)
    resp = c.post("/sign-in", data={"csrf": CSRF_RE.search(page).group(1), "token": tok})
    assert resp.status_code == 303

    class K:
        pass
    k = K()
    k.r, k.c, k.h = r, c, {"Authorization": f"Bearer {tok}"}

    def submit(body):
        resp = c.post("/api/submissions", json=body, headers=k.h)
        assert resp.status_code == 202, resp.get_json()
        return resp.get_json()

    def run():
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=r)
            for rq_id in q.job_ids:
                jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
                q.remove(rq_id)

    def page(path):
        resp = c.get(path)
        assert resp.status_code == 200, path
        return resp.get_data(as_text=True)
    k.submit, k.run, k.page = submit, run, page
    return k


def test_the_job_page_calls_a_satisfiable_verdicts_model_a_model(console):
    sub = console.submit({"problems": [
        {"main": "sat.nj", "files": {"sat.nj": "axiom a: p(c)\n"}},
        {"main": "cs.nj", "files": {"cs.nj": "axiom a: p(c)\nconjecture g: q(c)\n"}}]})
    console.run()
    sat, cs = (j["id"] for j in sub["jobs"])
    page = console.page(f"/jobs/{sat}")
    assert "Satisfiable" in page
    assert re.search(r'id="model-link">See the model</a>', page)
    assert "countermodel" not in page.lower()
    page = console.page(f"/jobs/{cs}")
    assert re.search(r'id="model-link">See the countermodel</a>', page)


def test_a_reused_job_says_where_its_verdict_and_seconds_come_from(console):
    body = {"problem": {"main": "f.nj", "files": {"f.nj": "axiom a: p(c)\nconjecture g: p(c)\n"}}}
    first = console.submit(body)
    console.run()
    orig = first["jobs"][0]["id"]
    again = console.submit(dict(body, reuse=True))
    jid = again["jobs"][0]["id"]
    assert again["jobs"][0]["reused"]
    page = console.page(f"/jobs/{jid}")
    assert f'reused from <a href="/jobs/{orig}"><code>{orig}</code></a>' in page
    time_row = re.search(r'<dd id="time">(.*?)</dd>', page, re.S).group(1)
    assert time_row.startswith("— ") and "no search in this job" in time_row
    assert f"<code>{orig}</code>" in time_row and "the original search" in time_row
    plain = re.search(r'<dd id="time">(.*?)</dd>', console.page(f"/jobs/{orig}"), re.S).group(1)
    assert "no search" not in plain and plain.split()[1] in ("ms", "s")
    table = console.page(f"/batches/{again['batch']}")
    row = table.split(f'href="/jobs/{jid}"')[1].split("</tr>")[0]
    assert ">reused</span></td>" in row and "no search in this job" in row
