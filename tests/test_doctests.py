"""The worked examples in the engine's docstrings run and give what they say.

Their check values carry their sources in the docstrings themselves (Kell 1975 density,
Robinson & Stokes A, Davies 1962, Goldberg et al. 2002 eq. 9,
Buck et al. 2002 phosphate standard; the unit examples are exact SI prefixes).
"""

import doctest

import pytest

import selector
import selector.chemistry.activity
import selector.chemistry.thermo
import selector.chemistry.water
import selector.units


@pytest.mark.parametrize("module", [selector, selector.chemistry.water, selector.chemistry.activity,
                                    selector.chemistry.thermo, selector.units])
def test_docstring_examples(module):
    result = doctest.testmod(module)
    assert result.attempted > 0 and result.failed == 0
