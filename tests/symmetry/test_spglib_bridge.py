"""The spglib adapter against crystal prototypes, and our catalogue against spglib."""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest
import spglib
from ase import Atoms
from ase.build import bulk

from crystaltop.errors import CrystaltopError, ShapeError
from crystaltop.symmetry import point_group, point_group_of, site_symmetry_group, space_group_of
from crystaltop.symmetry import spglib_bridge

from .strategies import quaternion_rotation


def as_cell(atoms: Atoms):
    return np.array(atoms.get_cell()), atoms.get_scaled_positions(), atoms.get_atomic_numbers()


def perovskite() -> Atoms:
    # Cubic SrTiO3: Sr at 1a (0,0,0), Ti at 1b (1/2,1/2,1/2), O at 3c of Pm-3m.
    return Atoms(
        "SrTiO3",
        scaled_positions=[[0, 0, 0], [0.5, 0.5, 0.5], [0.5, 0.5, 0], [0.5, 0, 0.5], [0, 0.5, 0.5]],
        cell=np.eye(3) * 3.905,
        pbc=True,
    )


def monoclinic_lattice(a=5.1, b=6.3, c=4.7, beta=np.radians(101.0)):
    # Unique axis b along y, a along x, c in the xz plane.
    return np.array([[a, 0, 0], [0, b, 0], [c * np.cos(beta), 0, c * np.sin(beta)]])


def monoclinic_p21c() -> Atoms:
    # Wyckoff 4e of P2_1/c (unique axis b, cell choice 1): (x,y,z), (-x,y+1/2,-z+1/2), (-x,-y,-z), (x,-y+1/2,z+1/2).
    x, y, z = 0.13, 0.27, 0.38
    positions = [[x, y, z], [-x, y + 0.5, -z + 0.5], [-x, -y, -z], [x, -y + 0.5, z + 0.5]]
    return Atoms("C4", scaled_positions=np.mod(positions, 1), cell=monoclinic_lattice(), pbc=True)


def monoclinic_p2m() -> Atoms:
    # Wyckoff 2m of P2/m (unique axis b): the pair (x,0,z), (-x,0,-z), plus an atom at 1a.
    x, z = 0.21, 0.34
    return Atoms("OC2", scaled_positions=np.mod([[0, 0, 0], [x, 0, z], [-x, 0, -z]], 1), cell=monoclinic_lattice(), pbc=True)


def trigonal(setting: str) -> tuple:
    hexagonal = np.array([[1.0, 0, 0], [-0.5, np.sqrt(3) / 2, 0], [0, 0, 1.6]])
    if setting == "3m1":
        # P3m1 (156): one atom each on 1a (0,0,z), 1b (1/3,2/3,z), 1c (2/3,1/3,z).
        return hexagonal, [[0, 0, 0], [1 / 3, 2 / 3, 0.3], [2 / 3, 1 / 3, 0.6]], [1, 2, 3]
    # P31m (157): 1a (0,0,z), 2b (1/3,2/3,z),(2/3,1/3,z), 3c (x,0,z),(0,x,z),(-x,-x,z).
    positions = [[0, 0, 0], [1 / 3, 2 / 3, 0.3], [2 / 3, 1 / 3, 0.3], [0.3, 0, 0.6], [0, 0.3, 0.6], [0.7, 0.7, 0.6]]
    return hexagonal, positions, [1, 2, 2, 3, 3, 3]


# Space-group numbers and crystal classes from ITA Vol. A (2016): Fm-3m 225, Fd-3m 227, P6_3mc 186,
# Pm-3m 221, P6_3/mmc 194, P2_1/c 14, P2/m 10, P3m1 156, P31m 157; the prototypes' space groups as in the
# standard structure references (rock salt, diamond, wurtzite, cubic perovskite, hcp -- from memory).
PROTOTYPES = {
    "rock salt NaCl": (lambda: bulk("NaCl", "rocksalt", a=5.64), 225, "m-3m", "m-3m"),
    "diamond C": (lambda: bulk("C", "diamond", a=3.567), 227, "m-3m", "m-3m"),
    "wurtzite ZnO": (lambda: bulk("ZnO", "wurtzite", a=3.25, c=5.21), 186, "6mm", "6mm"),
    "cubic perovskite SrTiO3": (perovskite, 221, "m-3m", "m-3m"),
    "hcp Mg": (lambda: bulk("Mg", "hcp", a=3.21, c=5.21), 194, "6/mmm", "6/mmm"),
    "monoclinic P2_1/c": (monoclinic_p21c, 14, "2/m", None),
    "monoclinic P2/m": (monoclinic_p2m, 10, "2/m", None),
}


@pytest.mark.parametrize("name", list(PROTOTYPES))
def test_space_group_numbers_and_classes_of_prototypes_agree_with_ita(name):
    build, number, symbol, _ = PROTOTYPES[name]
    info = space_group_of(as_cell(build()))
    assert info.number == number
    assert info.point_group_symbol == symbol
    assert info.rotations.dtype.kind == "i" and info.rotations.shape[1:] == (3, 3)
    assert info.translations.shape == (len(info.rotations), 3)


@pytest.mark.parametrize("name", list(PROTOTYPES))
def test_point_group_of_a_prototype_matches_spglib_and_our_catalogue(name):
    build, _, symbol, catalogue_symbol = PROTOTYPES[name]
    atoms = build()
    group = point_group_of(atoms)  # an ase.Atoms is accepted as it is
    assert group.symbol == symbol == spglib.get_symmetry_dataset(as_cell(atoms)).pointgroup
    if catalogue_symbol is not None:  # the cell is in the standard orientation of the catalogue
        assert group.approx_equal(point_group(catalogue_symbol))
    else:  # monoclinic, unique axis b = y
        assert group.approx_equal(point_group(symbol, axis=(0, 1, 0), secondary=(0, 0, 1)))
    counts = Counter(op.type_symbol for op in group)
    reference = Counter(op.type_symbol for op in point_group(symbol))
    assert counts == reference


@pytest.mark.parametrize("setting, number", [("3m1", 156), ("31m", 157)])
def test_trigonal_cells_tell_3m1_from_31m(setting, number):
    cell = trigonal(setting)
    assert space_group_of(cell).number == number  # ITA Vol. A: P3m1 is 156, P31m is 157
    group = point_group_of(cell)
    assert group.symbol == "3m" and group.setting == setting
    assert group.approx_equal(point_group(setting))


def test_a_rotated_cell_gives_the_rotated_catalogue_group():
    rotation = quaternion_rotation(np.array([0.3, -0.5, 0.7, 0.2]))
    lattice, positions, numbers = as_cell(bulk("ZnO", "wurtzite", a=3.25, c=5.21))
    group = point_group_of((lattice @ rotation.T, positions, numbers))
    assert group.symbol == "6mm"
    assert group.approx_equal(point_group("6mm").oriented(rotation), tol=1e-8)


def test_our_lattice_basis_matrices_are_spglib_rotations():
    # spglib's rotations W act on fractional columns in the input basis, like Operation.in_basis.
    atoms = bulk("NaCl", "rocksalt", a=5.64)
    info = space_group_of(as_cell(atoms))
    ours = {tuple(w.ravel()) for w in point_group("m-3m").in_basis(np.array(atoms.get_cell())).values()}
    assert ours == {tuple(w.ravel()) for w in info.rotations}


def test_site_symmetry_of_a_square_net_is_4_over_mmm():
    group = site_symmetry_group(np.eye(2), [[0.0, 0.0]], ["A"])
    assert group.symbol == "4/mmm" and group.approx_equal(point_group("4/mmm"))


def test_site_symmetry_of_the_honeycomb_at_the_hexagon_centre_and_at_an_atom():
    # Graphene: layer group p6/mmm; the carbon sites have site symmetry -6m2 (D3h), with mirror normals
    # along a1 for a1 along x (Kopský & Litvin (eds.), ITA Vol. E, 2010 -- from memory).
    lattice = np.array([[1.0, 0.0], [-0.5, np.sqrt(3) / 2]])
    sites = [[1 / 3, 2 / 3], [2 / 3, 1 / 3]]
    centre = site_symmetry_group(lattice, sites, ["C", "C"])
    assert centre.symbol == "6/mmm" and centre.approx_equal(point_group("6/mmm"))
    atom = site_symmetry_group(lattice, sites, ["C", "C"], origin=sites[0])
    assert atom.setting == "-6m2" and atom.approx_equal(point_group("-6m2"))
    assert not atom.approx_equal(point_group("-62m"))
    boron_nitride = site_symmetry_group(lattice, sites, ["B", "N"])
    assert boron_nitride.setting == "-6m2"


def test_site_symmetry_of_chains_keeps_only_operations_of_the_line():
    assert site_symmetry_group([[1.0]], [[0.0]], ["A"]).symbol == "mmm"
    two_species = site_symmetry_group([[1.0]], [[0.0], [0.3]], ["A", "B"])
    assert two_species.symbol == "mm2" and [op.label for op in two_species.rotations()] == ["2x"]


def test_site_symmetry_of_the_perovskite_oxygen_is_4_over_mmm_about_z():
    # ITA Vol. A, Pm-3m (221): Wyckoff 3c has site symmetry 4/mmm; the O at (1/2, 1/2, 0) has its four-fold along z.
    lattice, positions, numbers = as_cell(perovskite())
    group = site_symmetry_group(lattice, positions, list(numbers), origin=positions[2])
    assert group.approx_equal(point_group("4/mmm"))
    assert site_symmetry_group(lattice, positions, list(numbers)).symbol == "m-3m"


def test_spglib_failure_becomes_a_crystaltop_error():
    cell = (np.eye(3), [[0, 0, 0], [0, 0, 0]], [1, 1])  # two atoms on top of each other
    with pytest.raises(CrystaltopError, match="spglib"):
        space_group_of(cell)


def test_a_none_return_from_spglib_becomes_a_crystaltop_error(monkeypatch):
    monkeypatch.setattr(spglib_bridge.spglib, "get_symmetry_dataset", lambda *args, **kwargs: None)
    with pytest.raises(CrystaltopError, match="spglib"):
        point_group_of((np.eye(3), [[0, 0, 0]], [1]))


def test_a_spglib_exception_becomes_a_crystaltop_error(monkeypatch):
    def failing(*args, **kwargs):
        raise spglib.SpglibError("too close distance between atoms")

    monkeypatch.setattr(spglib_bridge.spglib, "get_symmetry_dataset", failing)
    with pytest.raises(CrystaltopError, match="too close"):
        space_group_of((np.eye(3), [[0, 0, 0]], [1]))


@pytest.mark.parametrize(
    "cell",
    [
        (np.eye(2), [[0, 0]], [1]),
        (np.eye(3), [[0, 0]], [1]),
        (np.eye(3), [[0, 0, 0]], [1, 2]),
        (np.eye(3), [[0, 0, 0]], [1.5]),
        "not a cell",
    ],
)
def test_malformed_cells_raise_shape_errors(cell):
    with pytest.raises(ShapeError):
        space_group_of(cell)


def test_site_symmetry_checks_positions_and_labels():
    with pytest.raises(ShapeError):
        site_symmetry_group(np.eye(2), [[0, 0, 0]], ["A"])
    with pytest.raises(ShapeError):
        site_symmetry_group(np.eye(2), [[0, 0]], ["A", "B"])
