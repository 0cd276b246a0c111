"""`crosscheck new`: every printed claim loads, and filled in it checks like a written one."""

from __future__ import annotations

import pytest

from crosscheck.claimfile import load_claim_text
from crosscheck.observables import ALL_OBSERVABLES
from crosscheck.routes.registry import load_routes
from crosscheck.runner import RunOptions, run_claim
from crosscheck.scaffold import DETECTOR_FAMILIES, DETECTOR_OBSERVABLES, observables, render_claim, run_new
from crosscheck.spacetimes import FAMILIES


def test_every_family_and_observable_gives_a_claim_that_loads():
    assert set(observables()) == set(ALL_OBSERVABLES)
    routes, _ = load_routes()
    for name in FAMILIES:
        for observable in observables():
            if observable in DETECTOR_OBSERVABLES and name not in DETECTOR_FAMILIES:
                with pytest.raises(ValueError, match="detector observable"):
                    render_claim(name, observable)
                continue
            text = render_claim(name, observable)
            claims, errors = load_claim_text(text, "new.yaml", known_routes=routes)
            assert not errors and len(claims) == 1, (name, observable, errors)
            claim = claims[0]
            assert observable in claim.observables
            if observable in DETECTOR_OBSERVABLES:
                assert claim.detector is not None and claim.detector.trajectory == "uniform-acceleration"
            else:
                assert {p.name for p in claim.parameters} == set(FAMILIES[name].symbols)


def test_filled_in_scaffold_is_checked():
    # Source: S. W. Hawking, Commun. Math. Phys. 43, 199 (1975): T = 1/(8 pi M).
    text = render_claim("schwarzschild", "T").replace("claim: T = 1 ", "claim: T = 1/(8*pi*M) ")
    routes, _ = load_routes()
    claims, errors = load_claim_text(text, "new.yaml", known_routes=routes)
    assert not errors
    assert run_claim(claims[0], routes, RunOptions(samples=2)).status == "confirmed"


def test_unknown_names_list_the_valid_ones(capsys, tmp_path):
    with pytest.raises(ValueError, match="schwarzschild"):
        render_claim("schwarzschlid", "T")
    with pytest.raises(ValueError, match="kappa"):
        render_claim("schwarzschild", "temperature")
    assert run_new("nowhere", "T") == 2 and "unknown spacetime family" in capsys.readouterr().err
    assert run_new("kerr", "Omega") == 0 and "claim: Omega = 1" in capsys.readouterr().out
    target = tmp_path / "kerr.yaml"
    assert run_new("kerr", "Omega", str(target)) == 0 and target.read_text() == render_claim("kerr", "Omega")
