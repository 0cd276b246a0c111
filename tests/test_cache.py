"""The result cache: hits, misses on every input that changes a result, and damaged or
foreign files rebuilt, never trusted.

Runs are in-process (InlineExecutor) so the fake routes' calls can be counted;
the agreeing value is Hawking's T = 1/(8 pi M) (Hawking 1975), see tests/fake_routes.py.
"""

from __future__ import annotations

import dataclasses
import json
import os
import sqlite3

import fake_routes as fake
import pytest

from crosscheck.cache import Cache, claim_fingerprint
from crosscheck.claimfile import load_claim_text
from crosscheck.cli import main
from crosscheck.runner import RunOptions
from crosscheck.scheduler import run_all
from crosscheck.workers import InlineExecutor

CLAIM = """
id: test/cache
spacetime: {name: schwarzschild}
parameters: {M: [0.5, 20]}
claim: T = 1/(8*pi*M)
"""
OPTIONS = RunOptions(samples=2, digits=20)


def claim(text: str = CLAIM):
    [loaded], errors = load_claim_text(text, "cache.yaml")
    assert not errors
    return loaded


def run(path, claims, routes=None, options=OPTIONS):
    """One run through the cache; returns (result, route names that actually ran)."""
    fake.CALLS.clear()
    cache = Cache(str(path))
    try:
        result = run_all(claims, routes or fake.routes(fake.Hawking, fake.HawkingTwin), options, InlineExecutor(), cache)
    finally:
        cache.close()
    return result, list(fake.CALLS), cache


def test_second_run_is_served_from_the_cache(tmp_path):
    path = tmp_path / "cache"
    first, ran, _ = run(path, [claim()])
    assert sorted(ran) == ["hawking", "hawking-twin"] and first.computed == 3  # dimensions + 2 routes
    second, ran, cache = run(path, [claim()])
    assert ran == [] and second.computed == 0 and second.cached == 3 and cache.hits == 3
    assert second.outcomes[0].routes == first.outcomes[0].routes
    assert second.outcomes[0].status == "confirmed"


def test_layout_comments_and_labels_do_not_matter(tmp_path):
    path = tmp_path / "cache"
    run(path, [claim()])
    rewritten = "# a comment\nid: test/renamed\ntitle: another title\n" + "\n".join(
        ["spacetime:", "  name: schwarzschild", "parameters:", "  M: [0.5, 20.0]", "claim: T = 1 / (8 * pi * M)"]
    )
    assert claim_fingerprint(claim(rewritten)) == claim_fingerprint(claim())
    _, ran, _ = run(path, [claim(rewritten)])
    assert ran == []


@pytest.mark.parametrize(
    "change",
    [
        lambda c: CLAIM.replace("[0.5, 20]", "[0.5, 21]"),  # another range
        lambda c: CLAIM.replace("8*pi*M", "4*pi*M"),  # another claimed value
        lambda c: CLAIM.replace("name: schwarzschild", "name: reissner-nordstrom").replace("{M: [0.5, 20]}",
                                                                                           "{M: [1, 2], Q: [0, 0.5]}"),
    ],
)
def test_a_changed_claim_misses(tmp_path, change):
    path = tmp_path / "cache"
    run(path, [claim()])
    _, ran, _ = run(path, [claim(change(CLAIM))])
    assert sorted(ran) == ["hawking", "hawking-twin"]


def test_route_version_and_precision_settings_miss_but_the_timeout_does_not(tmp_path):
    path = tmp_path / "cache"
    run(path, [claim()])

    class NewerHawking(fake.Hawking):
        version = "2"

    _, ran, _ = run(path, [claim()], {"hawking": NewerHawking(), "hawking-twin": fake.HawkingTwin()})
    assert ran == ["hawking"]
    for changed in (dataclasses.replace(OPTIONS, digits=25), dataclasses.replace(OPTIONS, samples=3),
                    dataclasses.replace(OPTIONS, seed=1)):
        _, ran, _ = run(path, [claim()], options=changed)
        assert sorted(ran) == ["hawking", "hawking-twin"], changed
    _, ran, _ = run(path, [claim()], options=dataclasses.replace(OPTIONS, timeout=5.0))
    assert ran == []


def test_errors_and_timeouts_are_not_stored(tmp_path):
    path = tmp_path / "cache"
    routes = fake.routes(fake.Hawking, fake.Raising)
    first, _, _ = run(path, [claim()], routes)
    assert {r.route: r.status for r in first.outcomes[0].routes}["raising"] == "error"
    second, _, _ = run(path, [claim()], routes)
    assert second.computed == 1 and second.cached == 2  # only the erroring route ran again


def test_a_corrupt_file_is_moved_aside_and_rebuilt(tmp_path):
    path = tmp_path / "cache"
    path.write_bytes(b"this is not a database\n" * 100)
    result, ran, cache = run(path, [claim()])
    assert sorted(ran) == ["hawking", "hawking-twin"] and result.outcomes[0].status == "confirmed"
    assert any("not an SQLite file" in note and "rebuilt" in note for note in cache.notes)
    assert (tmp_path / "cache.broken").read_bytes().startswith(b"this is not")
    _, ran, _ = run(path, [claim()])
    assert ran == []  # the rebuilt cache works


def test_a_truncated_database_is_rebuilt(tmp_path):
    path = tmp_path / "cache"
    run(path, [claim()])
    Cache(str(path)).close()  # checkpoint the journal into the main file
    data = path.read_bytes()
    path.write_bytes(data[: len(data) // 2] + b"\xff" * 64)
    _, ran, cache = run(path, [claim()])
    assert sorted(ran) == ["hawking", "hawking-twin"] and cache.notes


def test_a_foreign_sqlite_file_is_not_trusted(tmp_path):
    path = tmp_path / "cache"
    db = sqlite3.connect(path)
    db.execute("CREATE TABLE results (key TEXT PRIMARY KEY, claim TEXT, route TEXT, payload TEXT, digest TEXT, created REAL)")
    db.commit()
    db.close()
    _, ran, cache = run(path, [claim()])
    assert sorted(ran) == ["hawking", "hawking-twin"]
    assert any("another program" in note for note in cache.notes)
    assert sqlite3.connect(tmp_path / "cache.broken").execute("SELECT COUNT(*) FROM results").fetchone() == (0,)


def test_a_tampered_row_is_a_miss(tmp_path):
    path = tmp_path / "cache"
    run(path, [claim()])
    db = sqlite3.connect(path)
    payload, key = db.execute("SELECT payload, key FROM results WHERE route = 'hawking'").fetchone()
    forged = json.loads(payload) | {"status": "disagree"}
    db.execute("UPDATE results SET payload = ? WHERE key = ?", (json.dumps(forged), key))
    db.commit()
    db.close()
    result, ran, _ = run(path, [claim()])
    assert ran == ["hawking"] and result.outcomes[0].status == "confirmed"


def test_cache_clear_command(tmp_path, capsys):
    path = tmp_path / "cache"
    run(path, [claim()])
    assert main(["cache", "clear", "--cache", str(path)]) == 0
    assert not path.exists() and "3 results" in capsys.readouterr().out
    assert main(["cache", "clear", "--cache", str(path)]) == 0  # nothing to clear is fine
    foreign = tmp_path / "notes.txt"
    foreign.write_text("someone's notes")
    assert main(["cache", "clear", "--cache", str(foreign)]) == 2
    assert foreign.read_text() == "someone's notes" and "left alone" in capsys.readouterr().err


def test_cli_run_uses_and_skips_the_cache(tmp_path, claim_file, capsys):
    path = claim_file(CLAIM + "routes: [killing-horizon]\n")
    cache = str(tmp_path / "cli-cache")
    common = ["run", path, "--jobs", "0", "--samples", "1", "--digits", "15", "--cache", cache]
    assert main(common) == 0 and "from the cache" not in capsys.readouterr().out
    assert main(common) == 0 and "(2 results from the cache, 0 computed)" in capsys.readouterr().out
    assert main([*common, "--no-cache"]) == 0 and "from the cache" not in capsys.readouterr().out
    assert os.path.exists(cache)


def test_outcomes_survive_the_round_trip_through_plain_data():
    # A real route on a wrong claim (T = 1/(4 pi M), twice Hawking's value): symbolic check,
    # numeric rows, diagnosis, steps and evidence all present.
    from crosscheck.results_io import outcome_from_data, outcome_to_data
    from crosscheck.routes.registry import load_routes
    from crosscheck.runner import run_claim

    real, _ = load_routes()
    wrong = claim(CLAIM.replace("8*pi*M", "4*pi*M") + "routes: [killing-horizon]\n")
    outcome = run_claim(wrong, real, RunOptions(samples=2, digits=15))
    [route] = [r for r in outcome.routes if r.route == "killing-horizon"]
    assert route.status == "disagree" and route.diagnosis is not None and route.numeric
    text = json.dumps(outcome_to_data(route))
    assert outcome_from_data(json.loads(text)) == route
    with pytest.raises(ValueError):
        outcome_from_data({"route": "x"})


def test_two_open_caches_on_one_file_see_each_others_results(tmp_path):
    path = str(tmp_path / "shared")
    first, second = Cache(path), Cache(path)
    try:
        run_all([claim()], fake.routes(fake.Hawking), OPTIONS, InlineExecutor(), first)
        fake.CALLS.clear()
        result = run_all([claim()], fake.routes(fake.Hawking), OPTIONS, InlineExecutor(), second)
        assert fake.CALLS == [] and result.cached == 2
    finally:
        first.close()
        second.close()


def test_an_unusable_location_runs_without_a_cache(tmp_path):
    result, ran, cache = run(tmp_path / "no-such-directory" / "cache", [claim()])
    assert sorted(ran) == ["hawking", "hawking-twin"] and result.outcomes[0].status == "confirmed"
    assert any("running without a cache" in note for note in cache.notes)
