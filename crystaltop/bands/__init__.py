"""Band data: batched eigensystems, gap checks, links, Wilson loops and symmetry eigenvalues, cached per grid."""

from .band_data import BandData, DiagonalisationStats, format_k
from .products import (batched_det, hermitian_eigh, link_determinants, link_matrices, link_minors,
                       ordered_product, plucker_coordinates, unitary_part)

__all__ = ["BandData", "DiagonalisationStats", "format_k", "link_matrices", "ordered_product", "unitary_part",
           "batched_det", "hermitian_eigh", "link_determinants", "link_minors", "plucker_coordinates"]
