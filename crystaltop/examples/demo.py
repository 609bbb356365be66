"""Demonstration scenario: choosing a resonator lattice for a one-way microwave waveguide.

A metamaterial team places identical dielectric resonators on a square array (period 1). Each resonator has a
monopole mode (s-like) and a pair of dipole modes (px-, py-like); neighbouring resonators couple through their
evanescent fields. Loading each resonator with a ferrite and applying a magnetic bias splits the two dipole modes
into circularly polarised ones (a term i·Δ between px and py, like an orbital Zeeman splitting), which breaks
time reversal and every mirror but keeps the four-fold rotation. The team wants to know, before fabricating a
sample, which design carries a one-way (chiral) edge channel in the gap above the lowest band: that is the
Chern number of the lowest band. The unbiased array keeps the full point group 4mm; the biased one only 4.

The numbers are invented for the demonstration (they are not fitted to any device).
"""

from __future__ import annotations

import numpy as np

from ..models import LatticeModel

__all__ = ["resonator_array", "DESIGNS", "demo_reports", "verdict"]


def resonator_array(*, monopole: float, dipole: float, bias: float, monopole_dipole: float = 0.5,
                    monopole_monopole: float = -0.3, dipole_head_on: float = 0.4, dipole_side: float = -0.1,
                    name: str | None = None) -> LatticeModel:
    """Square array of resonators with one monopole and two dipole modes each (3 states per cell).

    Parameters
    ----------
    monopole, dipole : float
        Mode frequencies (detuning from the operating frequency, arbitrary units).
    bias : float
        Gyromagnetic splitting Δ of the dipole pair (0: unbiased, time-reversal symmetric, group 4mm).
    monopole_dipole, monopole_monopole, dipole_head_on, dipole_side : float
        Nearest-neighbour couplings: monopole–dipole (odd under reversing the bond), monopole–monopole,
        dipoles pointing along the bond (head-on) and across it (side by side).
    """
    m = LatticeModel(np.eye(2), name=name or f"resonator array (bias {bias:g})")
    s, px, py = m.add_site((0.0, 0.0), "s px py")
    m.set_onsite(s, monopole)
    m.set_onsite(px, dipole)
    m.set_onsite(py, dipole)
    if bias:
        m.add_hopping(1j * bias, px, py)
    for bond, (along, across) in {(1, 0): (px, py), (0, 1): (py, px)}.items():
        m.add_hopping(monopole_monopole, s, s, bond)
        m.add_hopping(monopole_dipole, s, along, bond)
        m.add_hopping(-monopole_dipole, along, s, bond)
        m.add_hopping(dipole_head_on, along, along, bond)
        m.add_hopping(dipole_side, across, across, bond)
    return m


#: the two designs on the team's table: (model keyword arguments, point group)
DESIGNS = {
    "unbiased": (dict(monopole=-1.0, dipole=1.0, bias=0.0, name="design A: unbiased resonator array"), "4mm"),
    "biased": (dict(monopole=0.5, dipole=0.0, bias=1.0, name="design B: biased resonator array"), "4"),
}


def demo_reports(options=None) -> list:
    """Reports on both designs, lowest band filled."""
    from ..classification import classify

    return [classify(resonator_array(**kwargs), group=group, filling=1, options=options)
            for kwargs, group in DESIGNS.values()]


def verdict(reports) -> str:
    """One line per design: does it carry a one-way edge channel above the lowest band?"""
    lines = []
    for r in reports:
        chern = r["chern"]
        if not chern.ok:
            lines.append(f"{r.model['name']}: no verdict ({chern.status}: {chern.message})")
        elif chern.value:
            lines.append(f"{r.model['name']}: Chern number {chern.value}: {abs(chern.value)} one-way edge "
                         f"channel(s) in the gap above the lowest band (gap {chern.smallest_gap:.2g})")
        else:
            lines.append(f"{r.model['name']}: Chern number 0: no protected one-way edge channel")
    return "\n".join(lines)
