"""The one-channel residual (Python complex) against numpy's array arithmetic, bit for bit."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from placer.residual import residual_of

finite = st.floats(-1e6, 1e6, allow_nan=False, allow_infinity=False)
# Zeros of both signs, as a position at 0° gives (its effect's imaginary part is -0.0).
component = st.one_of(finite, st.sampled_from([0.0, -0.0]))


def _array_form(target, effects, parts):
    """The residual as numpy forms it: target + Σ count·effect on complex arrays."""
    total = np.array(target, dtype=complex, copy=True)
    for row, column, count in parts:
        total = total + count * effects[row, column]
    return total


@settings(max_examples=300, deadline=None)
@given(target=st.tuples(component, component),
       effects=st.lists(st.tuples(component, component), min_size=6, max_size=6),
       parts=st.lists(st.tuples(st.integers(0, 2), st.integers(0, 1), st.integers(1, 4)),
                      max_size=5))
def test_one_channel_is_the_array_form_bit_for_bit(target, effects, parts):
    # Source: numpy's complex128 multiply and add (the array form above) as the oracle;
    # the one-channel path must give the same IEEE 754 bits, signed zeros included.
    grid = np.array([complex(*e) for e in effects]).reshape(3, 2, 1)
    got = residual_of(np.array([complex(*target)]), grid, parts)
    expected = _array_form(np.array([complex(*target)]), grid, parts)
    assert got.shape == expected.shape == (1,)
    assert got.dtype == expected.dtype
    assert got.view(np.float64).tobytes() == expected.view(np.float64).tobytes()


def test_several_channels_unchanged():
    # Source: the array form above, evaluated by numpy.
    rng = np.random.default_rng(7)
    effects = rng.normal(size=(4, 3, 2)) + 1j * rng.normal(size=(4, 3, 2))
    target = rng.normal(size=2) + 1j * rng.normal(size=2)
    parts = [(0, 1, 2), (3, 2, 1)]
    got = residual_of(target, effects, parts)
    assert got.tobytes() == _array_form(target, effects, parts).tobytes()
