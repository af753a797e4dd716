"""Step fits over no profiles at all (every seed lacked samples on one side of its edge).

Truth: zero profiles in give zero results out, of the documented shapes (definition of the
interface, common practice, no source).
"""

from __future__ import annotations

import numpy as np

from profilecheck.imaging._stepfit import fit_steps


def test_no_profiles_give_empty_fits():
    W = 16
    e = np.zeros(0)
    res = fit_steps(np.zeros((0, W)), np.zeros((0, W), bool), e, e, e, e, max_shift=2.5)
    for v in (res.x0, res.B, res.C, res.s, res.var_x0_unit, res.rss, res.dof, res.converged):
        assert v.shape == (0,)
