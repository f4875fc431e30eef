"""The strict Touchstone reader (devmodels.touchstone).

External checks: files written by scikit-rf's writer (``skrf.Network.write_touchstone``) and
scikit-rf's own reading of noise parameters (``Network.nfmin_db``, ``.rn``, ``.g_opt``) are the
independent source; the rules themselves are those of the Touchstone specification (IBIS Open
Forum, "Touchstone File Format Specification", versions 1.1 and 2.0).
"""

from __future__ import annotations

import os
import pickle
import threading
import warnings
from pathlib import Path

import numpy as np
import pytest

import devmodels as dm
from devmodels import touchstone
from devmodels.export import touchstone_text, write_touchstone
from devmodels.touchstone import read_touchstone, read_touchstone_file

DATA = Path(__file__).parent / "data" / "touchstone_bad"
FREQ = np.geomspace(1e6, 5e9, 23)

#: Every malformed file and a fragment of the one-line message it must give (file name, line
#: number and what was expected are checked for all of them).
BAD = {
    "descending_not_noise.s2p": ("line 5", "a decrease starts the noise parameters"),
    "duplicate_frequency.s2p": ("line 5", "duplicate frequency"),
    "nan_frequency.s2p": ("line 4", "'nan' (not finite)"),
    "negative_frequency.s2p": ("line 3", "expected a frequency >= 0"),
    "infinite_value.s2p": ("line 4", "'inf' (not finite)"),
    "r_without_value.s2p": ("line 1", "expected a reference resistance after R"),
    "complex_r.s2p": ("line 1", "complex reference impedance is not supported"),
    "negative_r.s2p": ("line 1", "expected a positive reference resistance"),
    "unknown_parameter.s2p": ("line 1", "got 'Q'"),
    "two_option_lines.s2p": ("line 2", "expected one option line"),
    "eight_numbers.s2p": ("line 3", "expected 9 numbers"),
    "wrapped_line_1x.s2p": ("line 3", "does not wrap a two-port line"),
    "letter_o_for_zero.s2p": ("line 3", "expected numbers, got 'O.011'"),
    "underscore_number.s2p": ("line 3", "expected numbers, got '-0.2_1'"),
    "no_option_line.s2p": ("line 1", "expected the option line"),
    "three_port.s3p": (None, "3-port"),
    "noise_in_y_file.s2p": ("line 5", "noise parameters only in an S-parameter file"),
    "noise_line_six_numbers.s2p": ("line 5", "this line has 6"),
    "noise_not_increasing.s2p": ("line 6", "strictly increasing noise frequencies"),
    "keyword_in_1x.s2p": ("line 3", "keywords belong to Touchstone 2.0 files"),
    "port_impedance_comment.s2p": ("line 3", "Port Impedance"),
    "complex_reference.ts": ("line 6", "complex reference impedance is not supported"),
    "imaginary_reference.ts": ("line 6", "got '75j'"),
    "reference_swallows_data.ts": ("line 7", "expected 2 values after [Reference]"),
    "reference_one_value.ts": ("line 7", "expected 2 values after [Reference] (line 6), got 1"),
    "mixed_mode_order.ts": ("line 5", "[Mixed-Mode Order]"),
    "wrong_number_of_frequencies.ts": ("line 9", "expected 3 frequencies ([Number of Frequencies]"),
    "unknown_data_order.ts": ("line 4", "12_21 or 21_12, got '11_22'"),
    "missing_data_order.ts": ("line 5", "expected [Two-Port Data Order] before [Network Data]"),
    "three_ports.ts": ("line 3", "expected [Number of Ports] 2, got 3"),
    "unknown_keyword.ts": ("line 6", "unknown keyword [Colour]"),
    "missing_end.ts": ("line 8", "expected [End]"),
    "data_after_end.ts": ("line 10", "nothing but comments after [End]"),
    "eight_numbers.ts": ("line 8", "expected 9 numbers for a frequency"),
    "unknown_version.ts": ("line 1", "expected [Version] 2.0"),
    "noise_without_count.ts": ("line 9", "expected [Number of Noise Frequencies] before [Noise Data]"),
    "wrong_noise_count.ts": ("line 12", "expected 2 noise frequencies"),
    "matrix_format_lower.ts": ("line 6", "expected [Matrix Format] Full"),
    "option_before_version.ts": ("line 2", "keywords belong to Touchstone 2.0 files"),
}


def test_every_bad_file_is_listed():
    on_disk = {p.name for p in DATA.iterdir() if not p.name.startswith("accepted_")}
    assert on_disk == set(BAD)


@pytest.mark.parametrize("name", sorted(BAD))
def test_bad_file_is_refused_with_one_line(name):
    line, fragment = BAD[name]
    with pytest.raises(dm.FileFormatError) as e:
        read_touchstone_file(DATA / name)
    msg = str(e.value)
    assert "\n" not in msg and msg.startswith("touchstone: cannot read '")
    assert name in msg and fragment in msg, msg
    if line is not None:
        assert f"{name}', {line}: " in msg, msg
    assert isinstance(e.value, ValueError)  # FileFormatError is a DevModelsError


# --- files that must be accepted -----------------------------------------------------------
def test_utf8_byte_order_mark_is_accepted():
    d = read_touchstone_file(DATA / "accepted_utf8_bom.s2p")
    np.testing.assert_array_equal(d.freq, [1e6, 2e6])  # MHz
    assert d.kind == "s" and d.version == "1.x" and d.z0 == (50.0, 50.0)
    # Touchstone 1.x two-port order: 11, 21, 12, 22
    np.testing.assert_array_equal(d.twoport.data[0], [[0.1 + 0.2j, 0.01 + 0.002j], [0.5 - 0.1j, 0.3 - 0.2j]])
    assert d.comments[0].startswith("invented data")


def test_crlf_lower_case_and_option_order_are_accepted():
    d = read_touchstone_file(DATA / "accepted_crlf_lower_case.s2p")
    np.testing.assert_array_equal(d.freq, [1e6, 2e6])  # kHz
    assert d.z0 == (75.0, 75.0) and d.format == "RI"
    assert d.twoport.data[1, 1, 1] == 0.29 - 0.21j
    assert "trailing comment" in d.comments


def test_noise_block_may_start_at_the_last_frequency():
    # A 5-number line at the last network frequency begins the noise parameters (the
    # Touchstone 1.1 specification lets the first noise frequency be <= the last one).
    d = read_touchstone_file(DATA / "accepted_noise_at_last_frequency.s2p")
    np.testing.assert_array_equal(d.freq, [1e9, 2e9])
    assert d.twoport.data[0, 1, 0] == pytest.approx(2.5 * np.exp(1j * np.radians(120)), rel=1e-15)
    n = d.noise
    np.testing.assert_array_equal(n.freq, [2e9, 3e9])
    np.testing.assert_array_equal(n.nfmin_db, [0.8, 0.9])
    np.testing.assert_allclose(n.gamma_opt, [0.4 * np.exp(1j * np.radians(45)), 0.42 * np.exp(1j * np.radians(60))],
                               rtol=1e-15)
    np.testing.assert_allclose(n.rn, [0.25 * 50, 0.27 * 50], rtol=1e-15)  # Rn / R in a 1.x file
    assert n.z0 == 50.0


def test_version_2_reference_on_next_line_and_wrapped_record():
    d = read_touchstone_file(DATA / "accepted_v2_reference_next_line.ts")
    assert d.version == "2.0" and d.kind == "z" and d.z0 == (50.0, 75.0)
    np.testing.assert_array_equal(d.freq, [1e9, 2e9])  # GHz

    def db(m, a):
        return 10 ** (m / 20) * np.exp(1j * np.radians(a))

    # [Two-Port Data Order] 21_12: 11, 21, 12, 22; version 2.0 values are in ohm (not normalised)
    expect = np.array([[db(34, 10), db(6, 170)], [db(20, -100), db(33, -15)]])
    np.testing.assert_allclose(d.twoport.data[0], expect, rtol=1e-14)


# --- round trips ---------------------------------------------------------------------------
@pytest.fixture(scope="module")
def y_ce():
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=500e6, cmu=1.5e-12, rb=40.0))
    return dm.Stage(m, "ce").two_port(FREQ, "y", 50.0)


def assert_close(a, b, tol=1e-12):
    assert np.max(np.abs(a - b)) <= tol * np.max(np.abs(b)), np.max(np.abs(a - b)) / np.max(np.abs(b))


@pytest.mark.parametrize("polar", [False, True])
@pytest.mark.parametrize("version", ["1.1", "2.0"])
@pytest.mark.parametrize("kind", ["s", "y", "z", "h", "g"])
def test_devmodels_files_read_back(tmp_path, y_ce, kind, version, polar):
    r = (75.0, 75.0) if version == "1.1" or kind != "s" else (50.0, 75.0)
    tp = y_ce.to("s", r) if kind == "s" else dm.TwoPort(FREQ, y_ce.to(kind).data, kind, r)
    path = tmp_path / (f"a.{kind}2p" if version == "1.1" else "a.ts")
    write_touchstone(tp, path, version, polar)
    d = read_touchstone_file(path)
    assert d.kind == kind and d.z0 == r and d.version == ("1.x" if version == "1.1" else "2.0")
    np.testing.assert_array_equal(d.freq, FREQ)
    assert_close(d.twoport.data, tp.data)
    s = read_touchstone(path, config="ce")
    assert s.kind == "s" and s.label == path.name and s.config == "ce"
    assert_close(s.data, tp.to("s").data, 1e-11)


def skrf_network(z0, noise=False):
    import skrf

    rng = np.random.default_rng(7)
    s = (rng.normal(size=(len(FREQ), 2, 2)) + 1j * rng.normal(size=(len(FREQ), 2, 2))) * 0.3
    net = skrf.Network(frequency=skrf.Frequency.from_f(FREQ, unit="Hz"), s=s, z0=z0, name="invented")
    if noise:
        nf = skrf.Frequency.from_f(FREQ, unit="Hz")
        net.set_noise_a(nf, nfmin_db=np.linspace(0.5, 2.5, len(FREQ)),
                        gamma_opt=np.linspace(0.2, 0.6, len(FREQ)) * np.exp(1j * np.linspace(0.3, 2.0, len(FREQ))),
                        rn=np.linspace(8.0, 20.0, len(FREQ)))
    return net


@pytest.mark.parametrize("form", ["ri", "ma", "db"])
@pytest.mark.parametrize("version, z0", [("1.0", 50.0), ("2.0", [50.0, 75.0]), ("2.1", [25.0, 60.0])])
def test_scikit_rf_s_files_read_back(tmp_path, version, z0, form):
    # Files written by scikit-rf's writer (the independent source) hold the same S.
    net = skrf_network(z0)
    path = tmp_path / ("net.s2p" if version == "1.0" else "net.ts")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net.write_touchstone(str(path), form=form, version=version)
    d = read_touchstone_file(path)
    np.testing.assert_allclose(d.freq, FREQ, rtol=1e-15)
    assert d.z0 == tuple(np.broadcast_to(z0, 2)) and d.kind == "s"
    assert_close(d.twoport.data, net.s)


@pytest.mark.parametrize("kind", ["y", "z", "h", "g"])
@pytest.mark.parametrize("version", ["2.0", "2.1"])
def test_scikit_rf_version_2_y_z_h_g_files_read_back(tmp_path, kind, version):
    # scikit-rf writes Y, Z, H, G unnormalised in version 2.x; its net.y/.z/.h/.g are the reference.
    # (scikit-rf 2.2 writes no [Reference] line for them, so the file's reference is the option
    # line's R = 50 ohm at both ports; S is compared with scikit-rf's reading of the same file.)
    import skrf

    net = skrf_network([50.0, 75.0])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net.write_touchstone(str(tmp_path / "n.ts"), parameter=kind.upper(), version=version)
    d = read_touchstone_file(tmp_path / "n.ts")
    assert d.kind == kind and d.version == version
    assert_close(d.twoport.data, getattr(net, kind))
    ref = skrf.Network(str(tmp_path / "n.ts"))
    assert d.z0 == tuple(ref.z0[0].real)
    assert_close(read_touchstone(tmp_path / "n.ts").data, ref.s, 1e-10)


def test_scikit_rf_version_1_z_file_read_back(tmp_path):
    # Z in a 1.x file is Z/R (Touchstone specification); scikit-rf's writer and reader agree
    # on Z (its 1.x handling is wrong only for Y, H, G, so those are not compared here).
    net = skrf_network(50.0)
    net.write_touchstone(str(tmp_path / "n.z2p"), parameter="Z")
    d = read_touchstone_file(tmp_path / "n.z2p")
    assert d.kind == "z"
    assert_close(d.twoport.data, net.z)


@pytest.mark.parametrize("version", ["1.0", "2.0"])
def test_noise_parameters_agree_with_scikit_rf(tmp_path, version):
    # The noise block written by scikit-rf and read back by scikit-rf (the outside check):
    # NFmin, Rn and Gamma_opt at each noise frequency equal what devmodels reads.
    import skrf

    net = skrf_network(50.0, noise=True)
    path = tmp_path / ("n.s2p" if version == "1.0" else "n.ts")
    net.write_touchstone(str(path), version=version)
    d = read_touchstone_file(path)
    ref = skrf.Network(str(path))
    n = d.noise
    np.testing.assert_allclose(n.freq, FREQ, rtol=1e-15)
    np.testing.assert_allclose(n.nfmin_db, ref.nfmin_db, rtol=1e-9)
    np.testing.assert_allclose(n.rn, ref.rn, rtol=1e-9)
    np.testing.assert_allclose(n.gamma_opt, ref.g_opt, rtol=1e-9, atol=1e-12)
    assert n.z0 == 50.0 and d.twoport.kind == "s"
    assert_close(d.twoport.data, ref.s)


def test_interpolation_is_reported(tmp_path, y_ce):
    path = tmp_path / "a.s2p"
    write_touchstone(y_ce.to("s"), path)
    d = read_touchstone_file(path)
    want = np.array([FREQ[0], np.sqrt(FREQ[3] * FREQ[4]), FREQ[10]])
    tp, interpolated = d.at(want, "cb")
    np.testing.assert_array_equal(interpolated, [False, True, False])
    assert tp.config == "cb" and tp.label == "a.s2p"
    s = y_ce.to("s").data
    np.testing.assert_array_equal(tp.data[0], d.s().data[0])
    w = (want[1] - FREQ[3]) / (FREQ[4] - FREQ[3])  # linear in re and im of S
    assert_close(tp.data[1], (1 - w) * s[3] + w * s[4], 1e-12)
    assert np.array_equal(read_touchstone(path, want).data, tp.data)
    all_points, none = d.at()
    assert not none.any() and len(all_points) == len(FREQ)
    with pytest.raises(dm.InputError, match="^freq: .*outside the file's range"):
        d.at([FREQ[-1] * 2])
    with pytest.raises(dm.InputError, match="^freq: "):
        d.at([np.nan])


# --- what is opened ------------------------------------------------------------------------
def test_missing_directory_and_device_are_refused(tmp_path):
    with pytest.raises(dm.FileFormatError, match="^touchstone: cannot read .*no such file"):
        read_touchstone_file(tmp_path / "none.s2p")
    with pytest.raises(dm.FileFormatError, match="a directory, not a regular file"):
        read_touchstone_file(tmp_path)
    with pytest.raises(dm.FileFormatError, match="a character device, not a regular file"):
        read_touchstone_file("/dev/null")


def test_fifo_is_refused_without_blocking(tmp_path):
    fifo = tmp_path / "pipe.s2p"
    os.mkfifo(fifo)
    result = []

    def read():
        try:
            read_touchstone_file(fifo)
        except dm.FileFormatError as exc:
            result.append(str(exc))

    t = threading.Thread(target=read, daemon=True)
    t.start()
    t.join(timeout=10)
    assert not t.is_alive(), "reading a FIFO blocked"
    assert result and "a FIFO (named pipe), not a regular file" in result[0]


def test_file_above_the_size_limit_is_refused(tmp_path, y_ce, monkeypatch):
    path = tmp_path / "a.s2p"
    write_touchstone(y_ce.to("s"), path)
    monkeypatch.setattr(touchstone, "MAX_BYTES", path.stat().st_size - 1)
    with pytest.raises(dm.FileFormatError, match="the largest read is"):
        read_touchstone_file(path)
    monkeypatch.setattr(touchstone, "MAX_BYTES", path.stat().st_size)
    assert len(read_touchstone_file(path).freq) == len(FREQ)
    assert touchstone.MAX_BYTES == path.stat().st_size and 512 * 2**20 == 536870912  # documented default


def test_symlink_to_a_file_is_read(tmp_path, y_ce):
    write_touchstone(y_ce.to("s"), tmp_path / "real.s2p")
    (tmp_path / "link.s2p").symlink_to(tmp_path / "real.s2p")
    assert_close(read_touchstone_file(tmp_path / "link.s2p").twoport.data, y_ce.to("s").data)


class _Marker:
    """Unpickling this object would create the file ``path`` (a stand-in for running code)."""

    def __init__(self, path):
        self.path = str(path)

    def __reduce__(self):
        return (open, (self.path, "w"))


def test_a_pickle_is_never_unpickled(tmp_path):
    marker = tmp_path / "was-unpickled"
    path = tmp_path / "crafted.s2p"
    path.write_bytes(pickle.dumps(_Marker(marker)))
    with pytest.raises(dm.FileFormatError, match="^touchstone: cannot read 'crafted.s2p'|cannot read '.*crafted.s2p'"):
        read_touchstone_file(path)
    assert not marker.exists()


def test_text_of_the_writer_is_a_valid_file(tmp_path, y_ce):
    # The 2.0 text devmodels writes satisfies every rule of the reader (keywords, counts, [End]).
    txt = touchstone_text(y_ce.to("s", (50.0, 75.0)), "2.0", comment="invented")
    (tmp_path / "x.ts").write_text(txt)
    assert read_touchstone_file(tmp_path / "x.ts").comments == ("invented",)
    (tmp_path / "cut.ts").write_text(txt[: len(txt) // 2].rsplit("\n", 1)[0] + "\n")
    with pytest.raises(dm.FileFormatError, match="cut short"):
        read_touchstone_file(tmp_path / "cut.ts")
