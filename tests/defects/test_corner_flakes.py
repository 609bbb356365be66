"""Corner charges measured on flakes of whole cells against the `corner_charge` plugin: C3 triangles about each of
the three C3 centres, C4 squares about both C4 centres, a C6 hexagon.

Measured: the charge of the sector of angle 2π/n about a corner, electrons (+1) minus ions, ions at 1a, at the
five Fermi levels of verify_defects (the middle half of the gap); the value is defined when the five agree mod e.
An ion on a boundary ray of the sector counts one half and the ion at the centre 1/n, so the n sectors tile the
flake (triangles and hexagons of whole cells have ions on their mirror lines).

Expected, by counting (common practice, no source): the occupied Wannier functions and the ions not at the flake's
centre come in orbits of n about it, so the flake's charge is ≡ the net charge per cell at its centre (mod n), and a
sector carries (Wannier functions per cell at the centre − ions per cell there) / n. With Wannier functions away from
1a the polarization is not zero and this depends on where the flake is centred (Takahashi, Zhang, Murakami, Phys.
Rev. B 103, 205123 (2021), from memory): about 1a it is −1/3 per Wannier function for C3.

The plugin's formulas: C4 and C6 from Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019), from memory
(PHYSICS.md §6); C3 derived from the counting above, its P = 0 case being the (e/3)[K2^(3)] recalled from the same
paper.
"""

from __future__ import annotations

import functools
import itertools
from fractions import Fraction

import numpy as np
import pytest
from scipy.sparse.csgraph import connected_components

import crystaltop as ct
from crystaltop.defects import flake
from crystaltop.examples import c4_breathing_square
from crystaltop.examples.crystalline import HEXAGONAL, breathing_kagome, hexagon_triangle
from crystaltop.models import LatticeModel
from crystaltop.verification import CORNER_LEVELS

ORIGIN, W1, W2 = (0.0, 0.0), (1 / 3, 1 / 3), (2 / 3, 2 / 3)  # the C3 centres on HEXAGONAL (60° basis)
NAMES = {ORIGIN: "(0, 0)", W1: "(1/3, 1/3)", W2: "(2/3, 2/3)"}


def mod1(x: float) -> float:
    """Distance of x from the nearest integer."""
    return abs((x + 0.5) % 1.0 - 0.5)


def kagome(t_cell: float, t_between: float, towards, flux: float = 0.0) -> LatticeModel:
    """A breathing kagome lattice (a construction for these tests): three s sites per cell on a triangle about the
    origin, pointing at the C3 centre ``towards`` (W2: azimuths 90°, 210°, 330°, as `breathing_kagome`; W1: 30°,
    150°, 270°). Bonds inside the cell carry −t_cell; each triangle between cells, about a copy of ``towards``,
    −t_between e^{iφ/3} counter-clockwise (``flux`` φ through it; φ ≠ 0 breaks time reversal)."""
    start = {W2: 90.0, W1: 30.0}[towards]
    angles = np.radians(start + np.array([0.0, 120.0, 240.0]))
    xy = np.stack([np.cos(angles), np.sin(angles)], axis=-1) / (2.0 * np.sqrt(3.0))
    model = LatticeModel(HEXAGONAL, name=f"kagome towards {NAMES[towards]}")
    for p in xy @ np.linalg.inv(HEXAGONAL):
        model.add_site(p, "s")
    for i, j in itertools.product(range(3), repeat=2):
        for cell in itertools.product((-1, 0, 1), repeat=2):
            rj = xy[j] + np.asarray(cell) @ HEXAGONAL
            if abs(np.linalg.norm(rj - xy[i]) - 0.5) > 1e-9 or (i, j, cell) > (j, i, tuple(-c for c in cell)):
                continue  # not a bond, or the reverse of one already added
            if not any(cell):
                model.add_hopping(-t_cell, i, j)
                continue
            centre = 2.0 * xy[i]  # the triangle between cells that site i points at
            a, b = rj - centre, xy[i] - centre
            model.add_hopping(-t_between * np.exp(1j * np.sign(a[0] * b[1] - a[1] * b[0]) * flux / 3.0), i, j, cell)
    return model


#: name: (builder, filling, where the occupied Wannier functions sit, how many per cell)
C3_MODELS = {
    "s orbital at 1a": (lambda: kagome(1.0, 0.2, W2), 1, ORIGIN, 1),
    "s orbital at (2/3, 2/3) (breathing_kagome)": (lambda: breathing_kagome(0.2, 1.0), 1, W2, 1),
    "s orbital at (1/3, 1/3)": (lambda: kagome(0.2, 1.0, W1), 1, W1, 1),
    "pair e^{±2πi/3} at (2/3, 2/3)": (lambda: kagome(0.2, -1.0, W2), 2, W2, 2),
    "e^{-2πi/3} at (2/3, 2/3), no time reversal": (lambda: kagome(0.1, 1.0, W2, flux=4 * np.pi / 3), 1, W2, 1),
}


@functools.lru_cache(maxsize=None)
def c3_record(name):
    build, filling, _, _ = C3_MODELS[name]
    return ct.classify(build(), group="3", filling=filling, invariants=["corner_charge"])["corner_charge"]


def counted(centre, wannier, per_cell, filling, n):
    """Sector charge by counting: (Wannier functions − ions per cell at the flake's centre) / n, mod 1."""
    return ((per_cell if centre == wannier else 0) - (filling if centre == ORIGIN else 0)) / n % 1.0


def sector_charges(sample, n, centre_xy):
    """Charge of the 2π/n sector about the corner farthest from ``centre_xy``, at the Fermi levels CORNER_LEVELS."""
    e, v = np.linalg.eigh(sample.hamiltonian.toarray())
    weight = np.abs(v) ** 2
    rel = sample.ion_positions - np.asarray(centre_xy)
    r = np.linalg.norm(rel, axis=1)
    angle = np.angle(rel[:, 0] + 1j * rel[:, 1])
    turn = np.abs(np.angle(np.exp(1j * (angle - angle[np.argmax(r)]))))
    share = np.where(r < 1e-9, 1.0 / n, np.where(np.abs(turn - np.pi / n) < 1e-9, 0.5, 1.0 * (turn < np.pi / n)))
    out = []
    for level in sample.gap.centre + sample.gap.width * np.asarray(CORNER_LEVELS):
        rho = weight[:, e < level].sum(axis=1)
        net = np.bincount(sample.state_ion, weights=rho, minlength=len(sample.ion_charges)) - sample.ion_charges
        out.append(float(net @ share))
    return np.array(out)


def measured(sample, n, centre_xy):
    """The sector charge mod 1, asserting it is the same at every Fermi level."""
    charges = sector_charges(sample, n, centre_xy)
    assert max(mod1(c - charges[2]) for c in charges) < 1e-6, f"depends on the Fermi level: {charges}"
    return charges[2] % 1.0


# ---------------------------------------------------------------------------------------------- C3
@pytest.mark.parametrize("centre", [ORIGIN, W1, W2], ids=lambda c: NAMES[c])
@pytest.mark.parametrize("name", list(C3_MODELS))
def test_a_triangle_of_whole_cells_has_a_third_of_the_net_charge_at_its_centre_in_each_corner(name, centre):
    """Counting (common practice) against a triangle of side about 12 cells about each C3 centre, and the plugin's
    value for that centre (derived by the same counting from the C3 eigenvalues at K, K′; see the module)."""
    build, filling, wannier, per_cell = C3_MODELS[name]
    sample = flake(build(), "triangle", 12, filling=filling, ions=[(ORIGIN, float(filling))], centre=centre)
    got = measured(sample, 3, np.asarray(centre) @ HEXAGONAL)
    expected = counted(centre, wannier, per_cell, filling, 3)
    assert mod1(got - expected) < 1e-6
    record = c3_record(name)
    assert record.status == "ok", record.message
    assert float(Fraction(record.details["by_centre"][NAMES[centre]])) == pytest.approx(expected)


@pytest.mark.parametrize("name", list(C3_MODELS))
def test_the_c3_value_is_the_triangle_about_the_origin_minus_a_third_per_wannier_function_elsewhere(name):
    """The record's value refers to the flake the defects layer builds (a triangle about the origin): −1/3 ≡ 2/3
    for one Wannier function at (1/3, 1/3) or (2/3, 2/3) (counting), where the formula recalled from Benalcazar,
    Li, Hughes (2019), (e/3)[K2^(3)], gave +1/3 and 0 — its values for a triangle about (2/3, 2/3)."""
    _, filling, wannier, per_cell = C3_MODELS[name]
    record = c3_record(name)
    assert record.details["centre"] == "(0, 0)"
    assert mod1(record.value - counted(ORIGIN, wannier, per_cell, filling, 3)) < 1e-9
    if len(record.details["indices"]) == 2:  # time reversal: χ^(3) = ([K1], [K2])
        k1, k2 = record.details["indices"]
        assert mod1(record.value - k1 / 3) < 1e-9 and mod1(counted(W2, wannier, per_cell, filling, 3) - k2 / 3) < 1e-9


def test_without_polarization_every_c3_centre_gives_the_recalled_formula():
    """Benalcazar, Li, Hughes (2019), Q = (e/3)[K2^(3)] (from memory), holds where the polarization vanishes:
    Wannier functions at (1/3, 1/3) and (2/3, 2/3) (`hexagon_triangle` seen under C3), χ^(3) = (−2, 1), e/3 on
    triangles about every centre (counting: (1 − 0)/3 about W1 or W2, (0 − 2)/3 about the origin)."""
    record = ct.classify(hexagon_triangle(0.3, 1.0), group="3", filling=2, invariants=["corner_charge"])["corner_charge"]
    assert record.details["indices"] == (-2, 1)
    assert set(record.details["by_centre"].values()) == {"1/3"}
    assert not any("polarization" in note for note in record.notes)
    sample = flake(hexagon_triangle(0.3, 1.0), "triangle", 12, filling=2, ions=[(ORIGIN, 2.0)])
    assert mod1(measured(sample, 3, (0.0, 0.0)) - 1 / 3) < 1e-6


@pytest.mark.parametrize("towards", [W1, W2], ids=lambda c: NAMES[c])
def test_in_the_atomic_limit_the_corner_charge_is_counted_from_whole_wannier_triangles(towards):
    """Common practice: at t_cell = 0 the triangle of whole cells about the origin falls apart into the triangles
    between cells (one electron in each bonding state), pairs of sites cut at the edge (one electron each, or none:
    they come in threes) and single sites (none). Electrons minus ions (one per cell) is ≡ −1 mod 3: −1/3 per corner,
    as the diagonalisation of the same flake measures."""
    sample = flake(kagome(0.0, 1.0, towards), "triangle", 12, filling=1, ions=[(ORIGIN, 1.0)])
    _, label = connected_components(sample.hamiltonian != 0, directed=False)
    sizes = np.bincount(np.bincount(label), minlength=4)  # number of clusters of 1, 2, 3 sites
    cells = len(sample.ion_charges)
    assert sizes[2] % 3 == 0 and 3 * sizes[3] + 2 * sizes[2] + sizes[1] == 3 * cells
    for electrons in (sizes[3], sizes[3] + sizes[2]):  # the cut pairs empty or filled
        assert mod1((electrons - cells) / 3 - (-1 / 3)) < 1e-9
    assert mod1(measured(sample, 3, (0.0, 0.0)) + 1 / 3) < 1e-6


def test_verify_defects_confirms_the_c3_corner_charge_of_the_breathing_kagome_about_every_centre():
    """One triangle of whole cells about each C3 centre, each measured at five Fermi levels in the gap: 2/3 about
    the origin, 0 about (1/3, 1/3), 1/3 about (2/3, 2/3) (the table above)."""
    report = ct.verify_defects(breathing_kagome(0.2, 1.0), "3m", 1, ions=[(ORIGIN, 1.0)],
                               invariants=["corner_charge"], sizes={"flake": 12})
    checks = {c.case: c for c in report.verification if c.prediction == "corner_charge"}
    assert set(checks) == {f"corner, flake about {w}" for w in ("(0, 0)", "(1/3, 1/3)", "(2/3, 2/3)")}
    assert all(c.sample.startswith("flake") and c.agree is True for c in checks.values())
    assert checks["corner, flake about (0, 0)"].predicted.startswith("+0.6667")


# ---------------------------------------------------------------------------------------------- C4, C6
@pytest.mark.parametrize("size, centre, expected", [(12, "(1/2, 1/2)", 0.25), (13, "(0, 0)", 0.75)])
def test_the_c4_formula_is_the_square_about_the_plaquette_centre(size, centre, expected):
    """C4 SSH model (γ = 0.3), Wannier functions at (1/2, 1/2), ions at 1a. An L × L parallelogram of whole cells is
    centred at the plaquette centre for even L: e/4, the formula of Benalcazar, Li, Hughes (2019) (from memory;
    PHYSICS.md §6 [checked]) and counting (+1/4). For odd L it is centred at 1a: counting gives −1/4 ≡ 3/4."""
    model = c4_breathing_square(gamma=0.3)
    sample = flake(model, "parallelogram", size, filling=1, ions=[(ORIGIN, 1.0)])
    assert mod1(measured(sample, 4, sample.ion_positions.mean(axis=0)) - expected) < 1e-6
    record = ct.classify(model, group="4", filling=1, invariants=["corner_charge"])["corner_charge"]
    assert record.value == pytest.approx(0.25) and record.details["centre"] == "(1/2, 1/2)"
    assert record.details["by_centre"][centre] == {0.25: "1/4", 0.75: "3/4"}[expected]


def test_the_c6_corner_charge_of_the_2b_lattice_is_minus_a_third_on_a_hexagon():
    """`hexagon_triangle`, Wannier functions at 2b, ions at 1a: Q = (e/4)[M1^(2)] + (e/6)[K1^(3)] with χ^(6) =
    (0, −2) (Benalcazar, Li, Hughes 2019, from memory) gives −e/3 ≡ 2e/3; counting: (0 − 2)/6. A hexagon of whole
    cells (inradius 4.5) measures it at all five Fermi levels: the sign is checked, not only |Q|."""
    model = hexagon_triangle(0.3, 1.0)
    record = ct.classify(model, group="6/mmm", filling=2, invariants=["corner_charge"])["corner_charge"]
    assert record.value == pytest.approx(2 / 3)
    sample = flake(model, "polygon", 9, filling=2, ions=[(ORIGIN, 2.0)])
    assert mod1(measured(sample, 6, (0.0, 0.0)) - 2 / 3) < 1e-6
