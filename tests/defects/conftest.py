"""Setup of the defect tests: single-threaded BLAS when these tests run on their own.

The machine's two cores are shared with other test runs; a multi-threaded OpenBLAS then spends most of a dense
eigendecomposition waiting for its second thread (0.2 s becomes 1–6 s for 1,024 states). The variable only takes
effect if numpy has not been imported yet (``pytest tests/defects``); in a full run it changes nothing.
"""

from __future__ import annotations

import os
import sys

if "numpy" not in sys.modules:
    os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
