"""Finding routes: built-ins and plugins through one entry-point group.

Built-in routes are registered in `pyproject.toml` under the same
`crosscheck.routes` entry-point group that a research group's own package
would use, so the host treats its own routes exactly like third-party ones.
When crosscheck runs from a source tree that was never installed, the
built-in table below stands in for the missing entry-point metadata.  Set
CROSSCHECK_NO_PLUGINS=1 to ignore third-party entry points (built-ins still
load).  Discovery, loading and validation are separate small functions; the
result is sorted by name so output is deterministic.
"""

from __future__ import annotations

import importlib
import os
from dataclasses import dataclass
from importlib import metadata

from crosscheck.routes.base import Route

GROUP = "crosscheck.routes"
DISABLE_ENV = "CROSSCHECK_NO_PLUGINS"
BUILTIN: dict[str, str] = {
    "killing-horizon": "crosscheck.routes.killing_horizon:KillingHorizonRoute",
    "near-horizon": "crosscheck.routes.near_horizon:NearHorizonRoute",
    "ray-peeling": "crosscheck.routes.ray_peeling:RayPeelingRoute",
    "bogoliubov": "crosscheck.routes.bogoliubov:BogoliubovRoute",
    "detector-response": "crosscheck.routes.detector_response:DetectorResponseRoute",
    "dimensional-estimate": "crosscheck.routes.dimensional_estimate:DimensionalEstimateRoute",
    "euclidean-period": "crosscheck.routes.euclidean_period:EuclideanPeriodRoute",
    "first-law": "crosscheck.routes.first_law:FirstLawRoute",
    "infall-atom": "crosscheck.routes.infall_atom:InfallAtomRoute",
    "kms-correlator": "crosscheck.routes.kms_correlator:KmsCorrelatorRoute",
    "tunneling": "crosscheck.routes.tunneling:TunnelingRoute",
}
REQUIRED_ATTRIBUTES = ("name", "title", "grade", "observables", "applies", "symbolic", "numeric")


@dataclass(frozen=True)
class LoadFailure:
    """A plugin that could not be loaded; reported, never fatal."""

    name: str
    target: str
    message: str


def discover() -> dict[str, str]:
    """Route name -> 'module:attribute', built-ins first, then plugins."""
    targets = dict(BUILTIN)
    if os.environ.get(DISABLE_ENV, "") not in ("", "0"):
        return targets
    for entry in metadata.entry_points(group=GROUP):
        targets.setdefault(entry.name, entry.value)
    return targets


def load_target(target: str) -> Route:
    """Import 'module:Class' and instantiate it."""
    module_name, _, attribute = target.partition(":")
    route_class = getattr(importlib.import_module(module_name), attribute)
    route = route_class()
    missing = [a for a in REQUIRED_ATTRIBUTES if not hasattr(route, a)]
    if missing:
        raise TypeError(f"{target} lacks {', '.join(missing)}")
    if route.grade not in ("exact", "estimate"):
        raise TypeError(f"{target} has grade {route.grade!r}; expected 'exact' or 'estimate'")
    return route


def load_routes() -> tuple[dict[str, Route], list[LoadFailure]]:
    """All routes that load, sorted by name, and the failures."""
    routes: dict[str, Route] = {}
    failures: list[LoadFailure] = []
    for name, target in sorted(discover().items()):
        try:
            route = load_target(target)
        except Exception as exc:  # a broken plugin must not stop the run
            failures.append(LoadFailure(name, target, f"{type(exc).__name__}: {exc}"))
            continue
        if route.name != name:
            failures.append(LoadFailure(name, target, f"registered as '{name}' but calls itself '{route.name}'"))
            continue
        routes[name] = route
    return routes, failures


def select(routes: dict[str, Route], names: list[str] | tuple[str, ...] | None) -> dict[str, Route]:
    """The named routes (all when None); an unknown name lists the valid ones."""
    if names is None:
        return routes
    unknown = [n for n in names if n not in routes]
    if unknown:
        raise KeyError(f"unknown route '{unknown[0]}'; valid routes: {', '.join(sorted(routes))}")
    return {n: routes[n] for n in sorted(set(names))}
