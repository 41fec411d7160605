"""The model page lists symbols in natural order (u2 before u10), the order
of the plain-text model (worker.models.display.natural), not as text
(u1, u10, u11, ..., u19, u2, u20).  A real countermodel found by the engine
through the console (Flask test client over fakeredis)."""

from __future__ import annotations

import html
import re

from tests.test_web_pages import env  # noqa: F401  (the console over fakeredis)

# twenty constants, twenty predicates and two functions whose names differ
# only in their numbers; the conjecture fails in a model of two elements
NUMBERED = "\n".join([f"axiom a{i}: r{i}(u{i})" for i in range(1, 21)]
                     + ["axiom b: g2(u1) = g10(u2)",
                        "conjecture c: r1(u2)"]) + "\n"


def names_in(page: str, pattern: str) -> list[str]:
    return [html.unescape(n) for n in re.findall(pattern, page)]


def test_model_page_orders_symbols_by_their_numbers(env):
    env.sign_in(env.alice)
    resp = env.submit(NUMBERED, time_limit="20")
    assert resp.status_code == 303, resp.get_data(as_text=True)
    jid = resp.headers["Location"].rsplit("/", 1)[1]     # one job: its page
    assert env.run_all() == 1
    assert env.store.get_job(jid)["verdict"] == "CounterSatisfiable"
    page = env.get(f"/jobs/{jid}/model")
    table = re.search(r'<table[^>]*id="constants".*?</table>', page, re.S).group(0)
    consts = names_in(table, r'<th scope="row"><code>([^<]+)</code>')
    assert consts == [f"u{i}" for i in range(1, 21)], consts
    funs = names_in(page, r"<h2><code>(g\d+)\(x\)</code></h2>")
    assert funs == ["g2", "g10"], funs
    body = page.split('id="constants"', 1)[1]
    preds = [p for p in dict.fromkeys(re.findall(r"\b(r\d+)\b", body.split("<details", 1)[0]))]
    assert preds == [f"r{i}" for i in range(1, 21)], preds
    # the same order as the model as plain text at the end of the page
    text = html.unescape(re.search(r'<pre class="plain">(.*?)</pre>', page, re.S).group(1))
    in_text = [m for m in re.findall(r"^(u\d+) +=", text, re.M)]
    assert in_text == consts
