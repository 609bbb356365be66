"""Disclination charges predicted by `disclination_charge` against the charges measured on real-space samples.

The prediction is the counting rule of PHYSICS.md §8 applied to the Wannier content that the occupied rotation
eigenvalues fix (derivation in the plugin's module docstring); Li, Zhu, Benalcazar, Hughes, Phys. Rev. B 101,
115115 (2020) state such charges in units of e/n, and so does the plugin. The judge is the charge measured on a
finite sample with the disclination (crystaltop.defects.disclination + bound_charge, as tests/defects/
test_charges.py), with the same ionic background (ions at 1a unless said otherwise). Charges are electrons minus
ions, mod e.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.defects import bound_charge, disclination
from crystaltop.errors import NotApplicable
from crystaltop.examples import benalcazar_bernevig_hughes, bernevig_hughes_zhang, c4_breathing_square, haldane
from crystaltop.examples.crystalline import HEXAGONAL, breathing_kagome, hexagon_triangle
from crystaltop.examples.obstructed_limits import kekule_honeycomb
from crystaltop.plugin import Context, high_symmetry_momenta, planar_rotations
from crystaltop.report import Result
from crystaltop_plugins import disclination_charge as dc

NAME = "disclination_charge"


def _predict(model, group, filling, **options):
    report = ct.classify(model, group=group, filling=filling, invariants=[NAME],
                         options={NAME: options} if options else None)
    return report[NAME]


def _measured(model, omega, core, filling, n, size=14, ions="1a"):
    """Charge bound to the disclination, in units of e/n (mod n), or None if it is not quantised."""
    ions = [((0.0, 0.0), float(filling))] if ions == "1a" else ions
    charge = bound_charge(disclination(model, omega, size, core=core, filling=filling, ions=ions))
    return charge.quantised(n, tol=0.02)


_CACHE: dict = {}


def _cached(key, build, group, filling):
    if key not in _CACHE:
        _CACHE[key] = (build(), _predict(build(), group, filling))
    return _CACHE[key]


# ---------------------------------------------------------------------------------------------- C4 and C6
# (core, Frank angle, predicted charge in units of e/n) for the obstructed limits, ions at 1a.
C4_SSH = [("1a", "-π/2", 1), ("1a", "π/2", 3), ("1a", "π", 2), ("1b", "-π/2", 3), ("1b", "π/2", 1), ("1b", "π", 2),
          ("2c", "π", 0)]
KEKULE = [("1a", "-2π/3", 0), ("1a", "-π/3", 3), ("1a", "π/3", 3), ("1a", "2π/3", 0), ("1a", "π", 3),
          ("2b", "-2π/3", 0), ("2b", "2π/3", 0), ("3c", "π", 3)]
MODELS = {
    "c4_obstructed": (lambda: c4_breathing_square(gamma=0.3), "4/mmm", 1, 4),
    "c4_trivial": (lambda: c4_breathing_square(gamma=1.0, lam=0.3), "4/mmm", 1, 4),
    "c6_obstructed": (lambda: kekule_honeycomb(0.5, 1.0), "6/mmm", 3, 6),
    "c6_trivial": (lambda: kekule_honeycomb(1.0, 0.5), "6/mmm", 3, 6),
}


def _core_position(result, core):
    return result.details["cores"][core]["position"]


def _radians(result, core, omega):
    return result.details["cores"][core]["frank_angles"][omega]["radians"]


@pytest.mark.parametrize("key, table", [("c4_obstructed", C4_SSH), ("c6_obstructed", KEKULE)])
def test_the_plugin_lists_every_core_type_and_frank_angle_with_its_charge_in_units_of_e_over_n(key, table):
    """C4 SSH (Benalcazar, Li, Hughes, PRB 99, 245151 (2019)): Wannier centres at 1b, q_core = −1 at 1a, +1 at 1b,
    0 at 2c. Kekulé honeycomb (Noh et al., Nat. Photonics 12, 408 (2018)): at 3c, q_core = −3 at 1a, 0 at 2b, +1 at 3c.
    The values are those the counting rule gives (tests/defects/test_charges.py measures the same numbers)."""
    build, group, filling, n = MODELS[key]
    _, res = _cached(key, build, group, filling)
    assert res.status == "ok", res.message
    got = {(core, omega): entry[f"e/{n}"] for core, cases in res.value.items() for omega, entry in cases.items()}
    assert got == {(core, omega): units for core, omega, units in table}
    for core, omega, units in table:
        assert Fraction(res.value[core][omega]["mod 1"]) == Fraction(units, n)
    assert res.details["unit"] == f"e/{n}"
    assert "1a" in res.details["ions"] and "default" in res.details["ions"]


@pytest.mark.parametrize("key, core, omega", [("c4_obstructed", c, o) for c, o, _ in C4_SSH]
                         + [("c6_obstructed", c, o) for c, o, _ in KEKULE])
def test_the_predicted_charge_is_the_one_measured_on_the_disclinated_sample(key, core, omega):
    """Measured (units of e/n, 14–16 cells): C4 SSH 1a: −π/2 → 1, π/2 → 3, π → 2; 1b: −π/2 → 3, π/2 → 1, π → 2;
    2c: π → 0. Kekulé 1a: ∓2π/3 → 0, ∓π/3 → 3, π → 3; 2b: ±2π/3 → 0; 3c: π → 3."""
    build, group, filling, n = MODELS[key]
    model, res = _cached(key, build, group, filling)
    size = 16 if core == "3c" else 14  # the bond-centred core needs a slightly larger flake
    measured = _measured(model, _radians(res, core, omega), _core_position(res, core), filling, n, size)
    assert measured == res.value[core][omega][f"e/{n}"]


@pytest.mark.parametrize("key", ["c4_trivial", "c6_trivial"])
def test_a_trivial_atomic_insulator_gives_zero_for_every_core_type_and_frank_angle(key):
    """Common practice (PHYSICS.md §8): Wannier centres on the ions at 1a bind nothing. Measured 0 on each sample
    (C4: γ = 1, λ = 0.3; Kekulé: t_intra = 1, t_inter = 0.5)."""
    build, group, filling, n = MODELS[key]
    model, res = _cached(key, build, group, filling)
    assert res.status == "ok", res.message
    for core, cases in res.value.items():
        for omega, entry in cases.items():
            assert entry == {f"e/{n}": 0, "mod 1": "0"}
            size = 16 if core == "3c" else 14
            assert _measured(model, _radians(res, core, omega), _core_position(res, core), filling, n, size) == 0


@pytest.mark.parametrize("key", list(MODELS))
def test_the_closed_forms_from_the_rotation_indices_and_the_polarization_term_agree(key):
    """The second methods of the record (derived in the module docstring): N(w) mod m from χ^(n) with time
    reversal, and δN(1a, Ω) − (ẑ × T)·P with P from `polarization`."""
    build, group, filling, n = MODELS[key]
    _, res = _cached(key, build, group, filling)
    own = [c for c in res.cross_checks if c.method.startswith("closed form")]
    assert len(own) == 1 and own[0].agree, own
    assert "(ẑ × T)·P" in own[0].method
    assert res.details["polarization"] == ((0.5, 0.5) if key == "c4_obstructed" else (0.0, 0.0))


def test_the_c6_obstructed_limit_at_2b_binds_thirds():
    """Hexagon–triangle C6 model (crystaltop.examples.crystalline; χ^(6) = (0, −2), PHYSICS.md §6): Wannier
    centres at 2b, two per cell, q_core = −2 at 1a, +1 at 2b. Measured: 1a π/3 → 4 e/6; 2b 2π/3 → 2 e/6."""
    model = hexagon_triangle()
    res = _predict(model, "6/mmm", 2)
    assert res.value["2b"] == {"-2π/3": {"e/6": 4, "mod 1": "2/3"}, "2π/3": {"e/6": 2, "mod 1": "1/3"}}
    assert res.value["3c"] == {"π": {"e/6": 0, "mod 1": "0"}}
    for core, omega in [("1a", "π/3"), ("2b", "2π/3")]:
        measured = _measured(model, _radians(res, core, omega), _core_position(res, core), 2, 6, 16)
        assert measured == res.value[core][omega]["e/6"]


# ---------------------------------------------------------------------------------------------- C3 and C2
def test_a_c3_obstructed_limit_with_a_polarization_binds_different_charges_at_its_three_cores():
    """Breathing kagome (Ezawa, PRL 120, 026801 (2018)): one Wannier centre at the C3 centre (2/3, 2/3) of the
    60° axes, P = (2/3, 2/3) ≠ 0, so the three cores differ and the sign of the (ẑ × T)·P term is tested.
    Measured (units of e/3): 1a −2π/3 → 1, 2π/3 → 2; (1/3, 1/3) → 0, 0; (2/3, 2/3) → 2, 1."""
    model = breathing_kagome(0.2, 1.0)
    res = _predict(model, "3m", 1)
    assert res.status == "ok", res.message
    assert {c: {o: e["e/3"] for o, e in cases.items()} for c, cases in res.value.items()} == {
        "1a": {"-2π/3": 1, "2π/3": 2}, "1b": {"-2π/3": 0, "2π/3": 0}, "1c": {"-2π/3": 2, "2π/3": 1}}
    assert res.details["cores"]["1c"]["position"] == pytest.approx((2 / 3, 2 / 3))
    assert [c.agree for c in res.cross_checks] == [True]
    for core, cases in res.value.items():
        for omega, entry in cases.items():
            assert _measured(model, _radians(res, core, omega), _core_position(res, core), 1, 3) == entry["e/3"]


def rectangular_ssh(gx, gy, lx, ly):
    """A C2-symmetric (mmm) four-site model on the square lattice: intra-cell −gx, −gy and inter-cell −lx, −ly
    bonds along x and y (a construction of ours, the C4 SSH model with the x and y bonds made unequal)."""
    model = ct.LatticeModel(np.eye(2), name=f"rectangular SSH {gx:g} {gy:g} {lx:g} {ly:g}")
    for p in [(0.25, 0.25), (-0.25, 0.25), (-0.25, -0.25), (0.25, -0.25)]:
        model.add_site(p, "s")
    for i, j in [(0, 1), (3, 2)]:  # along x
        model.add_hopping(-gx, i, j)
        model.add_hopping(-lx, j, i, (-1, 0))
    for i, j in [(0, 3), (1, 2)]:  # along y
        model.add_hopping(-gy, i, j)
        model.add_hopping(-ly, j, i, (0, -1))
    return model


@pytest.mark.parametrize("bonds, where, expected", [
    ((0.2, 1.0, 1.0, 0.2), "1c", {"1a": 1, "1b": 0, "1c": 1, "1d": 0}),
    ((0.2, 0.4, 1.0, 1.0), "1d", {"1a": 1, "1b": 0, "1c": 0, "1d": 1}),
])
def test_a_c2_obstructed_limit_binds_half_a_charge_at_its_wannier_centre_and_at_the_origin(bonds, where, expected):
    """Derived here (counting rule): one Wannier centre at `where`, ions at 1a: e/2 at 1a and at `where`, 0 at the
    other two C2 centres (units of e/2). Measured on Ω = π samples: the same."""
    model = rectangular_ssh(*bonds)
    res = _predict(model, "mmm", 1)
    assert res.status == "ok", res.message
    assert res.details["cores"][where]["wannier_centres_per_site"] == 1
    assert {c: cases["π"]["e/2"] for c, cases in res.value.items()} == expected
    assert [c.agree for c in res.cross_checks] == [True]
    for core in expected:
        assert _measured(model, np.pi, _core_position(res, core), 1, 2) == expected[core]


# ---------------------------------------------------------------------------------------------- the ions
def test_with_ions_on_the_sites_the_prediction_matches_the_builders_default_background():
    """tests/defects/test_charges.py: the C4 SSH limit with the ions on the sites binds 0 at a 1a core and e/4 at
    1b for Ω = π/2; the plugin with ions="sites" says the same, and the sample (builder default ions) agrees."""
    model = c4_breathing_square(gamma=0.3)
    res = _predict(model, "4/mmm", 1, ions="sites")
    assert res.status == "ok", res.message
    assert res.value["1a"]["π/2"]["e/4"] == 0 and res.value["1b"]["π/2"]["e/4"] == 1
    assert "basis states" in res.details["ions"]
    assert res.details["polarization_term"].startswith("not used")
    for core in ("1a", "1b"):
        measured = _measured(model, np.pi / 2, core, 1, 4, size=16, ions=None)
        assert measured == res.value[core]["π/2"]["e/4"]


def test_ions_under_the_wannier_centres_leave_nothing_to_bind():
    """Derived (counting rule): with the ions at 1b, where the C4 SSH Wannier centre sits, q_core = 0 at every
    rotation centre, so no disclination binds a charge."""
    res = _predict(c4_breathing_square(gamma=0.3), "4/mmm", 1, ions="1b")
    assert res.status == "ok", res.message
    assert all(e["e/4"] == 0 for cases in res.value.values() for e in cases.values())


@pytest.mark.parametrize("ions, message", [
    ([((0.0, 0.0), 2.0)], "would not be neutral"),
    ([((0.1, 0.0), 1.0)], "not symmetric"),
    ("3d", "give 'sites', a Wyckoff name"),
    ([(0.0, 1.0)], "reduced coordinates"),
])
def test_bad_ions_are_refused_with_the_reason(ions, message):
    res = _predict(c4_breathing_square(gamma=0.3), "4/mmm", 1, ions=ions)
    assert res.status == "failed" and message in res.message


# ---------------------------------------------------------------------------------------------- outside the domain
def test_a_chern_insulator_outside_p4_is_skipped_with_the_reason():
    # Haldane, PRL 61, 2015 (1988): C = −1 at φ = π/2, M = 0 (PHYSICS.md §2); the C4 Chern rule is
    # tests/plugins/test_disclination_charge_chern.py
    res = _predict(haldane(), "6/m", 1)
    assert res.status == "skipped" and "Chern number -1" in res.message and "C4 samples only" in res.message


def test_pi_flux_with_c4_to_the_fourth_minus_one_is_skipped():
    # Benalcazar, Bernevig, Hughes, Science 357, 61 (2017): C4^4 = −1 (PHYSICS.md §6)
    res = _predict(benalcazar_bernevig_hughes(gamma=0.5), "4mm", 2)
    assert res.status == "skipped" and "4z+^4 = −1" in res.message


def test_a_spinful_model_is_not_offered():
    res = _predict(bernevig_hughes_zhang(m=-1.0), "4/mmm", 2)
    assert res.status == "skipped" and "spinless" in res.message


def test_a_gapless_model_gets_no_value():
    # C4 SSH at γ = λ: the gap closes at Γ/M; the rotation eigenvalues fail there, so nothing is predicted
    res = _predict(c4_breathing_square(gamma=1.0), "4/mmm", 1)
    assert res.status == "skipped" and res.value is None and "rotation_eigenvalues" in res.message


def test_eigenvalues_of_no_atomic_limit_are_refused_as_fragile_or_non_wannierisable():
    """Two occupied bands with C4 eigenvalues {−1, −1} at Γ and {1, 1} at M, C2 eigenvalues {1, 1} at X and Y:
    the Fang–Gilbert–Bernevig product is 1 (C ≡ 0 mod 4) but no sum of band representations induced from 1a, 1b,
    2c has them (enumerated in the derivation). Fed to the plugin as the results of the invariants it uses."""
    model = c4_breathing_square(gamma=0.3)
    group = ct.point_group("4/mmm")
    counts = {"2z": {"Γ": [2, 0], "X": [2, 0], "Y": [2, 0], "M": [2, 0]},
              "4z+": {"Γ": [0, 0, 2, 0], "M": [2, 0, 0, 0]}}
    momenta = {"2z": {"Γ": (0.0, 0.0), "X": (0.5, 0.0), "Y": (0.0, 0.5), "M": (0.5, 0.5)},
               "4z+": {"Γ": (0.0, 0.0), "M": (0.5, 0.5)}}
    details = {label: {"counts": counts[label], "momenta": momenta[label]} for label in counts}
    details["powers"] = {"2z": 1, "4z+": 1}
    results = {"rotation_eigenvalues": Result(name="rotation_eigenvalues", title="", status="ok", value={},
                                              details=details),
               "chern": Result(name="chern", title="", status="ok", value=0)}
    context = Context(model=model, group=group, filling=2, time_reversal=True, bands=None, results=results,
                      options={}, allowed=("rotation_eigenvalues", "chern", "rotation_indices", "polarization"))
    with pytest.raises(NotApplicable, match="no atomic limit"):
        dc.DisclinationCharge().compute(context)


# ---------------------------------------------------------------------------------------------- the derivation
GROUPS = {"2": np.array([[1.0, 0.0], [0.3, 1.1]]), "3": HEXAGONAL, "4": np.eye(2), "6": HEXAGONAL}


def _setup(group_symbol, lattice):
    group = ct.point_group(group_symbol)
    rot = [op for op in planar_rotations(group, 2) if op.fold == 2 or op.angle > 0]
    gen = max(rot, key=lambda op: op.fold)
    w = np.asarray(gen.in_basis(lattice), dtype=int)
    return group, rot, gen.fold, w


@pytest.mark.parametrize("symbol, lattice", [*GROUPS.items(), ("3", HEXAGONAL[::-1].copy())],
                         ids=["p2", "p3", "p4", "p6", "p3-left-handed"])
def test_the_polarization_term_follows_from_the_counting_rule_for_every_integer_content(symbol, lattice):
    """Module docstring, item 3 (derived): δN(c, Ω) ≡ δN(1a, Ω) − h (T₁P₂ − T₂P₁), on random integer charges at
    the rotation centres (every site of every orbit, every Frank angle), h = sign det(lattice)."""
    _, _, n, w = _setup(symbol, lattice)
    orbits = dc.centre_orbits(w, n)
    handed = np.sign(np.linalg.det(lattice))
    rng = np.random.default_rng(7)
    for _ in range(40):
        net = rng.integers(-3, 4, size=len(orbits))
        net[0] = -sum(net[i] * len(o["sites"]) for i, o in enumerate(orbits) if i)  # neutral cell
        p = sum((net[i] * o["sites"].sum(axis=0) for i, o in enumerate(orbits)), np.zeros(2))
        for i, o in enumerate(orbits):
            for c in o["sites"]:
                for k in dc.frank_steps(o["fold"]):
                    kk = k * (n // o["fold"])
                    t = dc.holonomy_translation(w, c, kk)
                    lhs = Fraction(k, o["fold"]) * int(net[i])
                    rhs = float(Fraction(kk, n) * int(net[0])) - handed * (t[0] * p[1] - t[1] * p[0])
                    assert abs((float(lhs) - rhs + 0.5) % 1.0 - 0.5) < 1e-6


def _band_table(symbol):
    """(n, W, centre orbits, band-representation table, its columns and rows) of the group ``symbol``."""
    lattice = GROUPS[symbol]
    group, rot, n, w = _setup(symbol, lattice)
    momenta = high_symmetry_momenta(group, lattice)
    rotations = [(op.label, op.fold, n // op.fold, {m.label: m.k for m in momenta if op.label in m.rotations})
                 for op in rot]
    orbits = dc.centre_orbits(w, n)
    return (n, w, orbits) + tuple(dc.band_representation_table(orbits, w, n, rotations))


@pytest.mark.parametrize("symbol", list(GROUPS))
def test_every_wannier_content_with_the_same_eigenvalues_binds_the_same_charges(symbol):
    """Module docstring, item 2: over every content of up to three bands (all site eigenvalues, no time
    reversal), contents with equal occupied rotation eigenvalues give equal predictions (five bands were checked
    in the derivation)."""
    n, w, orbits, table, columns, _ = _band_table(symbol)
    sizes = [len(orbits[o]["sites"]) for o, _ in columns]
    seen = {}

    def visit(j, left, x):
        if j == len(columns):
            content = [0] * len(orbits)
            for (o, _), c in zip(columns, x):
                content[o] += c
            bands = sum(c * s for c, s in zip(x, sizes))
            ions = [(orbits[0]["sites"][0], Fraction(bands))]
            predicted = dc.DisclinationCharge._predict(orbits, tuple(content), ions, n, w)
            key = tuple(table @ np.array(x))
            assert seen.setdefault(key, predicted) == predicted, (x, key)
            return
        for c in range(left // sizes[j] + 1):
            visit(j + 1, left - c * sizes[j], x + [c])

    visit(0, 3, [])
    assert len(seen) > 20


@pytest.mark.parametrize("symbol, expected", [
    ("4", {"1a": (1, (0.0, 0.0)), "1b": (1, (0.5, 0.5)), "2c": (2, (0.0, 0.5))}),
    ("6", {"1a": (1, (0.0, 0.0)), "2b": (2, (1 / 3, 1 / 3)), "3c": (3, (0.0, 0.5))}),
])
def test_the_rotation_centres_are_the_maximal_wyckoff_positions_of_p4_and_p6(symbol, expected):
    """International Tables for Crystallography, Vol. A, p4 and p6: multiplicities 1, 1, 2 and 1, 2, 3 (letters
    here ordered by the coordinates on the model's axes; the 60° hexagonal axes put 2b at (1/3, 1/3))."""
    _, _, n, w = _setup(symbol, GROUPS[symbol])
    orbits = dc.centre_orbits(w, n)
    assert [o["name"] for o in orbits] == list(expected)
    for o in orbits:
        size, first = expected[o["name"]]
        assert len(o["sites"]) == size and tuple(o["sites"][0]) == pytest.approx(first)


def test_the_band_representations_have_the_rotation_indices_of_the_docstring():
    """Module docstring, item 2: 1b s of p4 gives χ^(4) = ([X1], [M1], [M2]) = (−1, −1, 0) and 2b s, 3c s of p6
    give χ^(6) = ([M1^(2)], [K1^(3)]) = (0, −2) and (−2, 0) (PHYSICS.md §6, Benalcazar, Li, Hughes 2019)."""
    def brackets(symbol, orbit_name):
        _, _, orbits, table, columns, rows = _band_table(symbol)
        j = next(i for i, (o, s) in enumerate(columns) if orbits[o]["name"] == orbit_name and s == 0)
        col = dict(zip(rows, table[:, j]))
        return lambda label, m, p: int(col[(label, m, p - 1)] - col[(label, "Γ", p - 1)])

    b = brackets("4", "1b")
    assert (b("2z", "X", 1), b("4z+", "M", 1), b("4z+", "M", 2)) == (-1, -1, 0)
    for orbit, chi in [("2b", (0, -2)), ("3c", (-2, 0))]:
        b = brackets("6", orbit)
        assert (b("2z", "M", 1), b("3z+", "K", 1)) == chi


def test_verify_defects_without_ions_builds_the_samples_with_the_background_the_prediction_assumed():
    """The plugin's default background (1a) is not the builders' (the sites): verify_defects, given no ions, reads
    the background from the record, so each of the seven C4 SSH cases is measured as predicted."""
    report = ct.verify_defects(c4_breathing_square(gamma=0.3), "4/mmm", 1, invariants=[NAME],
                               sizes={"disclination": 14})
    checks = [c for c in report.verification if c.prediction == NAME]
    assert len(checks) == 7 and all(c.agree for c in checks), [(c.case, c.measured) for c in checks]
