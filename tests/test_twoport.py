"""TwoPort (devmodels.twoport): what a value must be to exist, checked at construction."""

from __future__ import annotations

import numpy as np
import pytest

import devmodels as dm

M = np.array([[1e-3, -2e-5], [4e-2, 1e-4]], dtype=complex)  # an invented Y matrix, S


def data(n: int) -> np.ndarray:
    return np.repeat(M[None], n, axis=0)


def test_valid_values_are_kept_read_only():
    tp = dm.TwoPort([0.0, 1e3, 2e6], data(3), "y", (50, 75.0), "ce", "label")
    assert tp.freq.dtype == float and tp.data.dtype == complex and tp.z0 == (50.0, 75.0)
    assert not tp.freq.flags.writeable and not tp.data.flags.writeable
    one = dm.TwoPort(None, M, "h")
    assert one.data.shape == (1, 2, 2) and one.freq is None
    assert dm.TwoPort([1.0], M, label="file.s2p").label == "file.s2p"


@pytest.mark.parametrize("bad, where", [(np.nan, "nan"), (np.inf, "inf"), (complex(0, np.inf), "inf"),
                                        (complex(np.nan, 1), "nan")])
def test_data_must_be_finite(bad, where):
    d = data(4)
    d[2, 1, 0] = bad
    with pytest.raises(dm.InputError) as e:
        dm.TwoPort([1e3, 2e3, 3e3, 4e3], d)
    msg = str(e.value)
    assert msg.startswith("data: ") and "3000 Hz (point 2)" in msg and "\n" not in msg
    with pytest.raises(dm.InputError, match="^data: .*given point"):
        dm.TwoPort(None, np.where(np.eye(2) > 0, bad, 0))


@pytest.mark.parametrize("freq, fragment", [
    ([1e3, 2e3, 1.5e3, 4e3], "1500 Hz at point 2 is below 2000 Hz"),
    ([1e3, 2e3, 2e3, 4e3], "2000 Hz at point 2 repeats 2000 Hz"),
    ([1e3, -2e3, 3e3, 4e3], "got -2000 at point 1"),
    ([1e3, 2e3, np.nan, 4e3], "got nan at point 2"),
    ([np.inf, 2e3, 3e3, 4e3], "got inf at point 0"),
])
def test_frequencies_finite_non_negative_strictly_increasing(freq, fragment):
    with pytest.raises(dm.InputError) as e:
        dm.TwoPort(freq, data(4))
    assert str(e.value).startswith("freq: ") and fragment in str(e.value)


def test_frequency_count_and_shape():
    with pytest.raises(dm.InputError, match="^freq: 3 frequencies for 4"):
        dm.TwoPort([1.0, 2.0, 3.0], data(4))
    with pytest.raises(dm.InputError, match="^freq: frequency-independent"):
        dm.TwoPort(None, data(2))
    with pytest.raises(dm.InputError, match=r"^data: expected shape \(F, 2, 2\)"):
        dm.TwoPort([1.0], np.ones((1, 3, 3)))
    with pytest.raises(dm.InputError, match="^data: expected complex numbers"):
        dm.TwoPort(None, [[1, 2], [3, "four"]])
    with pytest.raises(dm.InputError, match="^freq: expected frequencies"):
        dm.TwoPort(["1 kHz"], data(1))


@pytest.mark.parametrize("z0", [True, False, np.bool_(True), (50.0, True), [False, 75.0]])
def test_booleans_are_not_reference_resistances(z0):
    # bool is a subclass of int in Python: True would otherwise be read as 1 ohm.
    with pytest.raises(dm.InputError, match="^z0: .*boolean"):
        dm.TwoPort([1.0], M, "s", z0)


@pytest.mark.parametrize("z0", ["50", (50.0, 50j), (0.0, 50.0), (-50.0,), (50.0, np.nan), (1, 2, 3)])
def test_other_bad_reference_resistances(z0):
    with pytest.raises(dm.InputError, match="^z0: "):
        dm.TwoPort([1.0], M, "s", z0)


def test_kind_and_boolean_frequencies():
    with pytest.raises(dm.InputError, match="^kind: "):
        dm.TwoPort([1.0], M, "q")
    with pytest.raises(dm.InputError, match="^freq: .*booleans"):
        dm.TwoPort(np.array([True]), M)
    with pytest.raises(dm.InputError, match="^data: .*booleans"):
        dm.TwoPort(None, np.eye(2, dtype=bool))


def test_conversions_keep_the_checked_frequencies():
    tp = dm.TwoPort(np.geomspace(1e3, 1e9, 5), data(5), "y", 50.0)
    for kind in ("z", "h", "g", "abcd", "s"):
        out = tp.to(kind)
        np.testing.assert_array_equal(out.freq, tp.freq)
        assert np.all(np.isfinite(out.data))


def test_singular_message_without_frequency_reads_cleanly():
    # det Z = 0: no Y parameters (Y = Z^-1); with no frequency to name, the point is dropped
    # with its comma
    tp = dm.TwoPort(None, np.array([[[1.0, 1.0], [1.0, 1.0]]]), "z")
    with pytest.raises(dm.SingularParameterError) as err:
        tp.to("y")
    assert str(err.value) == ("y: the Y parameters do not exist for this two-port (Z is singular: det Z = 0; "
                              "converting Z to Y)")
    tf = dm.TwoPort(np.array([5e3]), np.array([[[1.0, 1.0], [1.0, 1.0]]]), "z")
    with pytest.raises(dm.SingularParameterError, match=r"det Z = 0, at 5000 Hz; converting Z to Y"):
        tf.to("y")
