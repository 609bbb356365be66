"""A minimal model satisfying the band-data protocol, written directly in numpy (no crystaltop models)."""

from __future__ import annotations

import numpy as np

SX = np.array([[0, 1], [1, 0]], dtype=complex)
SY = np.array([[0, -1j], [1j, 0]], dtype=complex)
SZ = np.diag([1.0, -1.0]).astype(complex)


class TwoBandPlane:
    """H = sin k1 σx + sin k2 σy + (m + cos k1 + cos k2) σz on a square lattice, k in reduced units."""

    dim = 2
    n_states = 2
    spinful = False

    def __init__(self, m, positions=((0.0, 0.0), (0.0, 0.0))):
        self.m = m
        self.lattice = np.eye(2)
        self.positions = np.asarray(positions, dtype=float)

    def hamiltonian(self, k):
        k = 2 * np.pi * np.asarray(k, dtype=float)
        kx, ky = k[..., 0], k[..., 1]
        return (np.sin(kx)[..., None, None] * SX + np.sin(ky)[..., None, None] * SY
                + (self.m + np.cos(kx) + np.cos(ky))[..., None, None] * SZ)

    def position_phase(self, dk):
        return np.diag(np.exp(-2j * np.pi * self.positions @ np.asarray(dk, dtype=float)))


class AtomicChain:
    """Two decoupled orbitals at reduced positions x0, x1 with energies -1, +1 (one occupied)."""

    dim = 1
    n_states = 2
    spinful = False

    def __init__(self, x0, x1=0.0, hermitian=True):
        self.lattice = np.eye(1)
        self.positions = np.array([[x0], [x1]])
        self.hermitian = hermitian

    def hamiltonian(self, k):
        k = np.asarray(k, dtype=float)
        h = np.broadcast_to(np.diag([-1.0, 1.0]).astype(complex), k.shape[:-1] + (2, 2)).copy()
        if not self.hermitian:
            h[..., 0, 1] = 0.5
        return h

    def position_phase(self, dk):
        return np.diag(np.exp(-2j * np.pi * self.positions @ np.asarray(dk, dtype=float)))
