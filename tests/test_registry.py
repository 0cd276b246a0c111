"""Route discovery and the contract every registered route keeps.

The reference values are published results: Schwarzschild kappa = 1/(4M)
(Wald 1984, sec. 12.5) and T = 1/(8 pi M) (Hawking 1975).
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from crosscheck.routes import registry
from crosscheck.routes.base import Problem, Route
from crosscheck.spacetimes import build_spacetime
from crosscheck.spacetimes.base import Normalization, Spacetime

ROUTES, FAILURES = registry.load_routes()
M = sympy.Symbol("M", positive=True)


def schwarzschild_problem(wanted=frozenset({"kappa", "T"})) -> Problem:
    metric, horizon, _ = build_spacetime("schwarzschild", {"M": M}, {}, "geometric")
    return Problem(Spacetime(metric, horizon, Normalization(), "schwarzschild"), None, (M,), wanted,
                   {M: (sympy.Rational(1, 2), sympy.Integer(20))})


def test_builtin_routes_load_sorted():
    assert FAILURES == []
    assert {"killing-horizon", "near-horizon"} <= set(ROUTES)
    assert list(ROUTES) == sorted(ROUTES)


@pytest.mark.parametrize("name", sorted(ROUTES))
def test_route_contract(name):
    route = ROUTES[name]
    assert isinstance(route, Route)
    assert route.name == name and route.title and route.grade in ("exact", "estimate")
    assert route.observables and route.version
    minkowski, _, _ = build_spacetime("minkowski", {}, {}, "geometric")
    from crosscheck.spacetimes.base import HorizonSpec

    flat = Problem(Spacetime(minkowski, HorizonSpec(), Normalization(), "minkowski"), None, (), frozenset({"T"}))
    assert isinstance(route.applies(flat), str)
    assert route.applies(Problem(None, None, (), frozenset({"T"}))) is not None


@pytest.mark.parametrize("name", sorted(n for n in ROUTES if {"kappa", "T"} <= ROUTES[n].observables))
def test_route_reproduces_schwarzschild(name):
    route = ROUTES[name]
    problem = schwarzschild_problem()
    assert route.applies(problem) is None
    symbolic = route.symbolic(problem)
    # Source: Wald 1984, sec. 12.5; Hawking 1975.
    assert sympy.simplify(symbolic.values["kappa"] - 1 / (4 * M)) == 0
    assert sympy.simplify(symbolic.values["T"] - 1 / (8 * sympy.pi * M)) == 0
    assert symbolic.provenance
    with mpmath.workdps(30):
        numeric = route.numeric(problem, {M: mpmath.mpf("2.5")}, 30)
        kappa = numeric.values["kappa"]
        assert abs(kappa.value - 1 / mpmath.mpf(10)) < max(1e-25, 10 * kappa.error)
        assert kappa.error < 1e-12


def test_unknown_route_name_lists_valid_ones():
    with pytest.raises(KeyError, match="valid routes: .*killing-horizon"):
        registry.select(ROUTES, ["tunnelling"])


def test_plugin_routes_come_from_entry_points(monkeypatch):
    class FakeEntry:
        name = "group-route"
        value = "tests.test_registry:NotARoute"

    monkeypatch.setattr(registry.metadata, "entry_points", lambda group: [FakeEntry()])
    assert registry.discover()["group-route"] == FakeEntry.value
    monkeypatch.setenv(registry.DISABLE_ENV, "1")
    assert "group-route" not in registry.discover()


def test_broken_plugin_is_reported_not_fatal(monkeypatch):
    monkeypatch.setattr(registry, "discover", lambda: {**registry.BUILTIN, "broken": "no.such.module:Route"})
    routes, failures = registry.load_routes()
    assert "killing-horizon" in routes and [f.name for f in failures] == ["broken"]
    assert "ModuleNotFoundError" in failures[0].message
