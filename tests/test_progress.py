"""Progress bars: shown when asked (or on a terminal), silent otherwise, on sweeps, meshes and real-space samples."""

from __future__ import annotations

import numpy as np

from crystaltop.defects import bound_charge, disclination
from crystaltop.examples import c4_breathing_square
from crystaltop.progress import progress_bar

ONE_AT_1A = [((0.0, 0.0), 1.0)]


def test_a_bar_that_is_not_wanted_writes_nothing(capsys):
    bar = progress_bar(10, "work", "step", False)
    for _ in range(10):
        bar.update(1)
    bar.close()
    assert capsys.readouterr().err == ""


def test_off_a_terminal_the_default_is_silent(capsys):
    bar = progress_bar(3, "work", "step", None)  # pytest captures stderr: not a terminal
    bar.update(3)
    bar.close()
    assert capsys.readouterr().err == ""


def test_the_chebyshev_charge_of_a_large_sample_shows_its_recursion_when_asked(capsys):
    sample = disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 16, core="1b", filling=1, ions=ONE_AT_1A)
    shown = bound_charge(sample, method="chebyshev", progress=True)
    err = capsys.readouterr().err
    assert "Chebyshev recursion" in err and "step/s" in err
    hidden = bound_charge(sample, method="chebyshev", progress=False)
    assert capsys.readouterr().err == ""
    assert shown.value == hidden.value  # the bar changes nothing
