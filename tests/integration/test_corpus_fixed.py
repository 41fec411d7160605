"""QA's case end to end (the ``nightjar corpus`` command in a subprocess, the
API under waitress, real Redis and workers, the real engine): a regression
fixed is not a regression.  The demo suite copied as ``qa-ferry``, an axiom
broken and put back; the run that puts it back and ``corpus diff`` pass the
gate and list the repaired obligations as gained, FIXED."""

from __future__ import annotations

import json
import shutil

from tests.integration.test_corpus_run import DEMO, last_json, nightjar

PUFFIN = "axiom puffin_at_night: night_service(puffin)\n"
BROKEN = "axiom puffin_at_night: night_service(puffin) or night_service(maud)\n"


def test_putting_a_broken_axiom_back_passes_the_gate(api, workers, tmp_path):
    workers.start(2)
    token = api.store.add_token("qa")
    suite = tmp_path / "qa-ferry"
    shutil.copytree(DEMO, suite)
    manifest = suite / "suite.toml"
    manifest.write_text(manifest.read_text().replace('name = "greywater"', 'name = "qa-ferry"'))
    ferries = suite / "axioms" / "ferries.nj"
    original = ferries.read_text()
    assert PUFFIN in original

    r = nightjar(api, token, "corpus", "diff", "--suite", "qa-ferry")
    assert r.returncode == 2 and "has 0 runs" in r.stderr        # no such suite yet
    r = nightjar(api, token, "corpus", "run", str(suite), "--wait", "--json")
    assert r.returncode == 0, r.stderr + r.stdout
    first = last_json(r.stdout)
    assert first["unexpected"] == 0 and first["total"] == 31
    # a CI job that always runs `corpus diff`: its first run has nothing to compare
    r = nightjar(api, token, "corpus", "diff", "--suite", "qa-ferry")
    assert r.returncode == 0, r.stderr + r.stdout
    assert r.stdout.startswith(f"suite qa-ferry has one run ({first['run']}): nothing to "
                               f"compare yet")

    ferries.write_text(original.replace(PUFFIN, BROKEN))
    r = nightjar(api, token, "corpus", "run", str(suite), "--wait", "--json")
    assert r.returncode == 5, r.stderr + r.stdout
    second = last_json(r.stdout)
    broken = sorted(x["key"] for x in second["changes"]["unexpected"])
    assert second["unexpected"] == 8 == len(broken), second

    ferries.write_text(original)
    r = nightjar(api, token, "corpus", "run", str(suite), "--wait", "--json")
    assert r.returncode == 0, r.stderr + r.stdout
    third = last_json(r.stdout)
    assert third["flipped"] == 0 and third["unexpected"] == 0 and third["lost"] == 0
    gained = third["changes"]["gained"]
    assert sorted(x["key"] for x in gained if x.get("fixed")) == broken
    assert all((x["before"], x["after"]) == ("CounterSatisfiable", "Theorem")
               for x in gained if x["key"] in broken)

    r = nightjar(api, token, "corpus", "diff", "--suite", "qa-ferry")
    assert r.returncode == 0, r.stderr + r.stdout
    lines = r.stdout.splitlines()
    assert "DEFINITE VERDICTS CHANGED: 8 obligations" in r.stdout
    fixed = [ln for ln in lines if ln.startswith("FIXED ")]
    assert sorted(ln.split()[1] for ln in fixed) == broken
    assert all("CounterSatisfiable -> Theorem (a definite verdict changed, to the one the "
               "manifest expects)" in ln for ln in fixed)
    assert not any(ln.startswith("FLIPPED") for ln in lines)
    assert "0 flipped" in lines[-1] and "8 of them fixed" in lines[-1]
    r = nightjar(api, token, "corpus", "diff", "--suite", "qa-ferry", "--json")
    assert r.returncode == 0
    d = json.loads(r.stdout)
    assert d["flipped"] == [] and d["regression"] is False
    assert sum(1 for x in d["gained"] if x.get("fixed")) == 8
    # the gate still fails the other way: the broken run against the first one
    r = nightjar(api, token, "corpus", "diff", first["run"], second["run"])
    assert r.returncode == 5 and r.stdout.count("\nFLIPPED ") == 8
