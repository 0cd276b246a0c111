"""The claim loader: valid files load; every error names file, line, column and field.

Positions are checked exactly (1-based, as editors count).  Expected values
here are positions in the test's own text, counted by hand.
"""

from __future__ import annotations

import sympy

from crosscheck.claimfile import load_claim_file, load_claim_text, load_paths

GOOD = """
id: test/schwarzschild
spacetime:
  name: schwarzschild
parameters:
  M: [0.5, 20]
claim: T = 1/(8*pi*M)
"""


def only_error(path):
    claims, errors = load_claim_file(path)
    assert not claims and len(errors) == 1, (claims, errors)
    return errors[0]


def test_good_claim_loads(claim_file):
    claims, errors = load_claim_file(claim_file(GOOD))
    assert errors == []
    [claim] = claims
    M = claim.parameters[0].symbol
    assert M.is_positive
    assert sympy.simplify(claim.rhs - 1 / (8 * sympy.pi * M)) == 0
    assert claim.observables == {"T"}
    assert claim.line == 1 and claim.claim_line == 6


def test_tolerance_written_as_yaml11_string_is_accepted(claim_file):
    # PyYAML (YAML 1.1) loads 1e-12 as a string; the loader reads it as a number (PITFALLS.md).
    claims, errors = load_claim_file(claim_file(GOOD + "tolerance: 1e-12\n"))
    assert not errors and claims[0].tolerance == 1e-12


def test_duplicate_key_points_at_the_duplicate(claim_file):
    error = only_error(claim_file(GOOD + "claim: T = 2\n"))
    assert (error.line, error.column, error.field) == (7, 1, "claim")
    assert "duplicate key" in error.message and "line 6" in error.message


def test_unknown_key_suggests_the_nearest(claim_file):
    error = only_error(claim_file(GOOD + "toleranse: 1e-9\n"))
    assert (error.line, error.column) == (7, 1)
    assert "did you mean 'tolerance'" in error.message


def test_bad_range_message_names_field_and_values(claim_file):
    error = only_error(claim_file(GOOD.replace("[0.5, 20]", "[3, 1]")))
    assert str(error).endswith("parameters.M: expected [lo, hi] with lo < hi, got [3, 1]")
    assert (error.line, error.column) == (5, 6)


def test_undefined_name_in_claim_points_into_the_expression(claim_file):
    error = only_error(claim_file(GOOD.replace("1/(8*pi*M)", "1/(8*pi*Mass)")))
    assert error.field == "claim" and error.line == 6
    # 'claim: ' is 7 characters, 'T = 1/(8*pi*' 12 more: Mass starts at column 20.
    assert error.column == 20
    assert "Mass" in error.message


def test_unknown_family_suggests(claim_file):
    error = only_error(claim_file(GOOD.replace("name: schwarzschild", "name: schwarzchild")))
    assert error.field == "spacetime.name" and error.line == 3
    assert "schwarzschild" in error.message


def test_missing_family_parameter(claim_file):
    error = only_error(claim_file(GOOD.replace("schwarzschild", "kerr")))
    assert "needs a" in error.message


def test_merge_keys_and_aliases_rejected(claim_file):
    error = only_error(claim_file(GOOD + "notes: &x hello\nsources: [*x]\n"))
    assert "aliases" in error.message
    error = only_error(claim_file("base: &b {id: x}\n<<: *b\n"))
    assert "merge" in error.message or "aliases" in error.message


def test_yaml_syntax_error_position(claim_file):
    error = only_error(claim_file("id: x\nparameters: [1, 2\n"))
    assert error.line >= 2 and "YAML syntax" in error.message


def test_hostile_expression_is_an_input_error(claim_file, tmp_path):
    marker = tmp_path / "pwned"
    text = GOOD.replace("1/(8*pi*M)", f"__import__('os').system('touch {marker}')")
    error = only_error(claim_file(text))
    assert error.field == "claim"
    assert not marker.exists()


def test_where_and_static_form(claim_file):
    text = """
    id: test/rn-static
    spacetime:
      static:
        F: 1 - 2*M/r + Q**2/r**2
      horizon: M + sqrt(M**2 - Q**2)
    parameters:
      M: [1, 2]
      q: [0, 0.9]
    where:
      Q: q*M
    claim: T = sqrt(M**2 - Q**2)/(2*pi*(M + sqrt(M**2 - Q**2))**2)
    """
    claims, errors = load_claim_file(claim_file(text))
    assert not errors
    q = claims[0].parameters[1].symbol
    assert q.is_nonnegative and not q.is_positive


def test_directory_loads_every_yaml_and_reports_bad_ones(claim_file, tmp_path):
    claim_file(GOOD, "a/good.yaml")
    claim_file(GOOD.replace("test/schwarzschild", "test/other").replace("[0.5, 20]", "[1]"), "b/bad.yaml")
    result = load_paths([str(tmp_path)])
    assert [c.id for c in result.claims] == ["test/schwarzschild"]
    assert len(result.errors) == 1 and result.errors[0].path.endswith("bad.yaml")


def test_duplicate_ids_across_files(claim_file, tmp_path):
    claim_file(GOOD, "one.yaml")
    claim_file(GOOD, "two.yaml")
    result = load_paths([str(tmp_path)])
    assert len(result.claims) == 1 and "duplicate id" in result.errors[0].message


def test_several_claims_in_one_file_one_bad(claim_file):
    text = """
    claims:
      - id: test/one
        spacetime: {name: schwarzschild}
        parameters: {M: [1, 2]}
        claim: kappa = 1/(4*M)
      - id: test/two
        spacetime: {name: schwarzschild}
        parameters: {M: [1, 2]}
        claim: kappa = 1/(4*N)
    """
    claims, errors = load_claim_file(claim_file(text))
    assert [c.id for c in claims] == ["test/one"]
    assert len(errors) == 1 and errors[0].line == 9


def test_unknown_route_lists_valid_ones(claim_file):
    claims, errors = load_claim_file(claim_file(GOOD + "routes: [killing-horizon, tunnelling]\n"), known_routes={"killing-horizon", "near-horizon"})
    assert not claims and "valid routes: killing-horizon, near-horizon" in errors[0].message


def test_claim_without_observable_is_rejected(claim_file):
    error = only_error(claim_file(GOOD.replace("T = 1/(8*pi*M)", "M = M")))
    assert "no observable" in error.message


def test_detector_section_is_parsed(claim_file):
    text = """
    id: test/unruh
    spacetime: {name: minkowski, dim: 4}
    detector:
      trajectory: uniform-acceleration
      acceleration: a
    parameters:
      a: [0.1, 10]
    claim: T = a/(2*pi)
    spectrum: bose
    """
    claims, errors = load_claim_file(claim_file(text))
    assert not errors
    detector = claims[0].detector
    assert detector.trajectory == "uniform-acceleration" and claims[0].spectrum == "bose"
    error = only_error(claim_file(text.replace("acceleration: a", "radius: a")))
    assert "not a parameter of 'uniform-acceleration'" in error.message


def test_python_tags_are_never_constructed(claim_file, tmp_path):
    # PITFALLS.md: only safe-loader semantics; a python tag must not run anything.
    marker = tmp_path / "tagged"
    text = GOOD.replace("claim: T = 1/(8*pi*M)", f"claim: !!python/object/apply:os.system ['touch {marker}']")
    error = only_error(claim_file(text))
    assert error.field == "claim" and not marker.exists()


def test_huge_file_and_billion_laughs_rejected(claim_file):
    laughs = "a: &a [x, x]\nb: &b [*a, *a]\nc: &c [*b, *b]\n"
    assert "aliases" in only_error(claim_file(laughs)).message
    error = only_error(claim_file("notes: " + "x" * (300 * 1024) + "\n"))
    assert "larger than" in error.message


STATIC_DETECTOR = """
id: t/static
spacetime: {name: schwarzschild}
detector: {trajectory: static, radius: 4*M}
parameters: {M: [1, 2]}
claim: T = 1/(8*pi*M*sqrt(1/2))
"""


def test_static_detector_claim_becomes_a_local_temperature_claim():
    # A static detector in the Hartle-Hawking state sees the Tolman temperature T_loc(r0)
    # (Tolman, Phys. Rev. 35, 904 (1930)); the claim is read as one on T_loc(4M).
    [claim], errors = load_claim_text(STATIC_DETECTOR, "s.yaml")
    assert not errors and claim.detector is None and claim.observables == frozenset({"T_loc"})
    assert "T_loc(4*M)" in str(claim.lhs)
    _, errors = load_claim_text(STATIC_DETECTOR + "spectrum: bose\n", "s.yaml")
    assert errors and "spectrum" in str(errors[0])
