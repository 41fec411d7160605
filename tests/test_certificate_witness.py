"""Where a countermodel falsifies the conjecture, as data: the certificate's
``fails_for`` field ([[variable name, element], ...] or null), from the
evaluator through the pipeline, ``prove --json``, the stored job record and
the API to the console's model page; records written before the field still
render.

The group facts used here are standard algebra (common practice): the
smallest non-abelian group has order 6 (the symmetric group on three
letters); in it the transpositions are not squares."""

from __future__ import annotations

import html
import itertools
import json
import re

import fakeredis
import pytest
from rq import Queue

from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.store import Store
from tests.test_web_pages import Console
from worker import jobs
from worker import verdict as V
from worker.certify import evaluate
from worker.certify.evaluate import check_model
from worker.pipeline import decide
from worker.syntax import parse_text

GROUP = """\
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit: forall x. e * x = x and x * e = x
axiom inv: forall x. i(x) * x = e and x * i(x) = e
conjecture comm: forall x y. x * y = y * x
"""


def s3_model():
    """The symmetric group on 3 letters, built from permutations (not by the
    model search); elements numbered in the order of itertools."""
    perms = list(itertools.permutations(range(3)))
    num = {p: i for i, p in enumerate(perms)}
    mul = lambda p, q: tuple(p[q[k]] for k in range(3))        # p after q
    inv = lambda p: tuple(sorted(range(3), key=lambda k: p[k]))
    return {"size": 6,
            "functions": {
                "*": {"arity": 2, "values": [[[num[p], num[q]], num[mul(p, q)]]
                                             for p in perms for q in perms]},
                "e": {"arity": 0, "values": [[[], num[(0, 1, 2)]]]},
                "i": {"arity": 1, "values": [[[num[p]], num[inv(p)]] for p in perms]}},
            "predicates": {}}


def table(model, name="*"):
    return {tuple(a): v for a, v in model["functions"][name]["values"]}


def assert_falsifies_commutativity(pairs, model):
    """``pairs`` names x and y, in that order, with x * y != y * x in the
    model's own table."""
    assert [name for name, _ in pairs] == ["x", "y"], pairs
    (_, x), (_, y) = pairs
    assert all(type(d) is int and 0 <= d < model["size"] for d in (x, y)), pairs
    mul = table(model)
    assert mul[(x, y)] != mul[(y, x)], (pairs, mul)


# ============================================================== evaluator

def test_the_evaluator_gives_the_first_falsifying_values_as_data():
    model = s3_model()
    rep = check_model(model, parse_text(GROUP, "g.nj"), "comm")
    assert rep.ok, rep.detail
    assert_falsifies_commutativity(rep.fails_for, model)
    (_, x), (_, y) = rep.fails_for
    mul = table(model)
    assert all(mul[(a, b)] == mul[(b, a)] for a in range(6) for b in range(6)
               if (a, b) < (x, y))                       # the first such pair
    # the human text is the one it always was, and says the same values
    assert rep.detail == (f"3 statement(s) hold and the conjecture comm fails "
                          f"(for x = {x}, y = {y}) in a model of size 6")


def test_an_inner_existential_leaves_only_the_outer_variable():
    # in S3 the transpositions (elements 1, 2, 5 in itertools order) are not squares
    text = GROUP.replace("conjecture comm: forall x y. x * y = y * x",
                         "conjecture sq: forall x. exists y. y * y = x")
    model = s3_model()
    rep = check_model(model, parse_text(text, "g.nj"), "sq")
    assert rep.ok, rep.detail
    [[name, x]] = rep.fails_for
    mul = table(model)
    assert name == "x" and all(mul[(y, y)] != x for y in range(6))
    assert "fails (for x = " in rep.detail


@pytest.mark.parametrize("conjecture", [
    "exists x. x != e and x * x = x",           # not universal
    "i(e) != e",                                # no variable at all
])
def test_no_universal_variable_gives_null(conjecture):
    text = GROUP.replace("forall x y. x * y = y * x", conjecture)
    rep = check_model(s3_model(), parse_text(text, "g.nj"), "comm")
    assert rep.ok, rep.detail
    assert rep.fails_for is None and "(for" not in rep.detail


def test_without_a_conjecture_there_is_nothing_to_name():
    text = GROUP.replace("conjecture comm: forall x y. x * y = y * x\n", "")
    rep = check_model(s3_model(), parse_text(text, "g.nj"), None)
    assert rep.ok and rep.fails_for is None


def test_too_many_assignments_gives_null_and_no_values_in_the_text(monkeypatch):
    monkeypatch.setattr(evaluate, "MAX_COUNTEREXAMPLE_TRIES", 10)   # 36 pairs to try
    rep = check_model(s3_model(), parse_text(GROUP, "g.nj"), "comm")
    assert rep.ok and rep.fails_for is None and "(for" not in rep.detail


def test_elements_are_numbers_where_the_text_writes_them_with_a_hash():
    """Constants named by numerals: the text writes elements as #0, the data
    holds the element itself."""
    p = parse_text("axiom a: 0 != 1\nconjecture c: forall x. x = 0\n", "n.nj")
    model = {"size": 2, "functions": {"0": {"arity": 0, "values": [[[], 1]]},
                                      "1": {"arity": 0, "values": [[[], 0]]}},
             "predicates": {}}
    rep = check_model(model, p, "c")
    assert rep.ok, rep.detail
    assert rep.fails_for == [["x", 0]]                 # 0 is not the value of 0 (that is 1)
    assert "(for x = #0)" in rep.detail


def test_a_refused_model_names_the_values_that_break_the_axiom():
    model = s3_model()
    model["functions"]["e"]["values"][0][1] = 1         # e is no longer the identity
    rep = check_model(model, parse_text(GROUP, "g.nj"), "comm")
    assert not rep.ok and rep.failing_step == 1
    [[name, d]] = rep.fails_for
    mul = table(model)
    assert name == "x" and (mul[(1, d)] != d or mul[(d, 1)] != d)


# ======================================================= pipeline, prove

def test_decide_puts_the_field_in_the_certificate():
    res = decide(parse_text(GROUP, "g.nj"), "comm", V.Settings(limits=V.Limits(time=20)))
    assert res["status"] == V.COUNTER_SATISFIABLE, res
    cert, model = res["certificate"], res["model"]
    assert cert["kind"] == "model-evaluated"
    assert model["size"] == 6                           # the smallest non-abelian group
    assert_falsifies_commutativity(cert["fails_for"], model)
    (_, x), (_, y) = cert["fails_for"]
    assert f"fails (for x = {x}, y = {y}) in a model of size 6" in cert["detail"]
    json.dumps(res)                                     # JSON-ready as it is


def test_a_model_of_the_axioms_alone_carries_null():
    text = GROUP.replace("conjecture comm: forall x y. x * y = y * x\n",
                         "axiom two: exists x. x != e\n")
    res = decide(parse_text(text, "g.nj"), None, V.Settings(limits=V.Limits(time=20)))
    assert res["status"] == V.SATISFIABLE, res
    assert "fails_for" in res["certificate"] and res["certificate"]["fails_for"] is None


def test_prove_json_prints_the_field(tmp_path, capsys):
    from service import cli
    f = tmp_path / "g.nj"
    f.write_text(GROUP)
    assert cli.main(["prove", str(f), "--json", "--time-limit", "20"]) == 0
    line = json.loads(capsys.readouterr().out)
    assert line["status"] == V.COUNTER_SATISFIABLE
    assert_falsifies_commutativity(line["certificate"]["fails_for"], line["model"])
    # the human form says it in words, as before
    assert cli.main(["prove", str(f), "--time-limit", "20"]) == 0
    out = capsys.readouterr().out
    (_, x), (_, y) = line["certificate"]["fails_for"]
    assert f"conjecture comm fails (for x = {x}, y = {y}) in a model of size 6" in out


# ====================================================== service, console

@pytest.fixture
def svc(monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    monkeypatch.delenv("NIGHTJAR_COOKIE_SECURE", raising=False)
    r = fakeredis.FakeRedis()
    app = create_app(Config(max_time_limit=60, default_time_limit=20), r)
    store = Store(r)
    e = Console(app, r, store)
    e.token = store.add_token("alice")
    e.h = {"Authorization": f"Bearer {e.token}"}
    resp = e.client.post("/api/submissions", headers=e.h, json={
        "problem": {"main": "g.nj", "files": {"g.nj": GROUP}}, "time_limit": 20})
    assert resp.status_code == 202, resp.get_json()
    [job] = resp.get_json()["jobs"]
    e.jid = job["id"]
    for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
        q = Queue(qn, connection=r)
        for rq_id in q.job_ids:
            jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
            q.remove(rq_id)
    e.sign_in(e.token)
    return e


def set_certificate(e, cert):
    """Overwrite the stored certificate, as a record of another time would hold it."""
    e.r.hset(f"nj:job:{e.jid}", "certificate", json.dumps(cert))


def fails_at(page):
    """The page's line on where the conjecture fails, or None."""
    m = re.search(r'<span id="fails-at">(.*?)</span>', page)
    return html.unescape(m.group(1)) if m else None


def test_the_api_job_record_has_the_field(svc):
    rec = svc.client.get(f"/api/jobs/{svc.jid}", headers=svc.h).get_json()
    assert rec["verdict"] == "CounterSatisfiable"
    model = svc.client.get(f"/api/jobs/{svc.jid}/model", headers=svc.h).get_json()["model"]
    assert_falsifies_commutativity(rec["certificate"]["fails_for"], model)
    # the list of the batch's jobs gives the same record
    jobs_ = svc.client.get(f"/api/batches/{rec['batch']}/jobs", headers=svc.h).get_json()
    assert jobs_["jobs"][0]["certificate"]["fails_for"] == rec["certificate"]["fails_for"]


def test_the_model_page_shows_the_field(svc):
    cert = svc.store.get_job(svc.jid)["certificate"]
    (_, x), (_, y) = cert["fails_for"]
    assert fails_at(svc.get(f"/jobs/{svc.jid}/model")) == f"for x = {x}, y = {y}"


def test_the_page_reads_the_field_not_the_text(svc):
    cert = svc.store.get_job(svc.jid)["certificate"]
    (_, x), (_, y) = cert["fails_for"]
    # the field says y, x (also a falsifying pair); the text still says x, y
    set_certificate(svc, dict(cert, fails_for=[["x", y], ["y", x]]))
    assert fails_at(svc.get(f"/jobs/{svc.jid}/model")) == f"for x = {y}, y = {x}"
    # null in a record that has the key: no line, whatever the text says
    set_certificate(svc, dict(cert, fails_for=None))
    page = svc.get(f"/jobs/{svc.jid}/model")
    assert fails_at(page) is None and "the conjecture fails" in page
    # a malformed field (an element outside the domain) is not shown
    set_certificate(svc, dict(cert, fails_for=[["x", 9], ["y", 0]]))
    assert fails_at(svc.get(f"/jobs/{svc.jid}/model")) is None


def test_a_record_from_before_the_field_still_renders(svc):
    cert = svc.store.get_job(svc.jid)["certificate"]
    old = {k: v for k, v in cert.items() if k != "fails_for"}
    (_, x), (_, y) = cert["fails_for"]
    # the wording the evaluator wrote then: read off the text
    set_certificate(svc, old)
    assert fails_at(svc.get(f"/jobs/{svc.jid}/model")) == f"for x = {x}, y = {y}"
    # elements written #n (constants named by numerals) read as numbers
    set_certificate(svc, dict(old, detail="3 statement(s) hold and the conjecture comm "
                                          "fails (for x = #1, y = #2) in a model of size 6"))
    assert fails_at(svc.get(f"/jobs/{svc.jid}/model")) == "for x = 1, y = 2"
    # any other text: no line, the page renders
    for detail in ("", "the model fails (for x = 1, y = 2) somewhere",
                   "3 statement(s) hold and the conjecture other fails (for x = 1) "
                   "in a model of size 6",
                   "3 statement(s) hold and the conjecture comm fails (for x = 1, y = 7) "
                   "in a model of size 6"):
        set_certificate(svc, dict(old, detail=detail))
        page = svc.get(f"/jobs/{svc.jid}/model")
        assert fails_at(page) is None and "the conjecture fails" in page, detail
    # no certificate at all
    svc.r.hdel(f"nj:job:{svc.jid}", "certificate")
    page = svc.get(f"/jobs/{svc.jid}/model")
    assert fails_at(page) is None and 'id="domain"' in page
