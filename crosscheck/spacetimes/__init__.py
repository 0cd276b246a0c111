"""Spacetimes: metric families, the three claim forms, horizons and Killing normalisation.

`base` holds the value objects routes receive; `forms` builds a `Metric` from
the `static:`, `stationary:` and `metric:` claim forms; `families` holds the
built-in families; `horizon` finds horizons (closed form and numeric);
`normalize` gives the Killing normalisation N in xi = N d/dt.
"""

from __future__ import annotations

from crosscheck.spacetimes.base import (
    PHI,
    R_COORD,
    T_COORD,
    THETA,
    HorizonSpec,
    Metric,
    Normalization,
    Spacetime,
    StaticFunctions,
    angle_symbols,
)
from crosscheck.spacetimes.families import FAMILIES, Family, build_spacetime, family, missing_symbols
from crosscheck.spacetimes.forms import line_element_metric, static_metric, stationary_metric
from crosscheck.spacetimes.horizon import horizon_radius, horizon_radius_numeric, killing_norm
from crosscheck.spacetimes.normalize import (
    geodesic_radius,
    normalization_factor,
    normalization_factor_numeric,
    normalization_radius_numeric,
)

__all__ = [
    "FAMILIES",
    "PHI",
    "R_COORD",
    "THETA",
    "T_COORD",
    "Family",
    "HorizonSpec",
    "Metric",
    "Normalization",
    "Spacetime",
    "StaticFunctions",
    "angle_symbols",
    "build_spacetime",
    "describe_families",
    "family",
    "geodesic_radius",
    "horizon_radius",
    "horizon_radius_numeric",
    "killing_norm",
    "line_element_metric",
    "missing_symbols",
    "normalization_factor",
    "normalization_factor_numeric",
    "normalization_radius_numeric",
    "static_metric",
    "stationary_metric",
]


def describe_families() -> list[dict[str, str]]:
    """One row per built-in family, sorted by name, for `crosscheck spacetimes`."""
    return [
        {
            "name": fam.name,
            "title": fam.title,
            "symbols": ", ".join(fam.symbols),
            "options": ", ".join(fam.options),
            "line_element": fam.line_element,
            "default_horizon": fam.default_horizon,
            "source": fam.source,
        }
        for fam in sorted(FAMILIES.values(), key=lambda f: f.name)
    ]
