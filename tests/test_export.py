"""Export (devmodels.export): Touchstone read back by scikit-rf, CSV, JSON, block-by-block atomic writes."""

from __future__ import annotations

import csv
import json
import os

import numpy as np
import pytest

import devmodels as dm
from devmodels.export import (atomic_write, touchstone_text, twoport_dict, write_by_extension,
                              write_csv, write_json, write_touchstone)

FREQ = np.geomspace(1e3, 1e10, 37)


@pytest.fixture(scope="module")
def y_ce():
    m = dm.HybridPi.from_bias(dm.BipolarBias(ic=2e-3, vce=5.0, beta=120, va=60.0, ft=500e6, cmu=1.5e-12, rb=40.0))
    return dm.Stage(m, "ce").two_port(FREQ, "y", 50.0)


def read_skrf(path):
    import skrf

    return skrf.Network(str(path))


def rel_err(a, b):
    return np.max(np.abs(a - b)) / np.max(np.abs(b))


@pytest.mark.parametrize("polar", [False, True])
@pytest.mark.parametrize("version, name", [("1.1", "a.s2p"), ("2.0", "a.ts")])
def test_touchstone_s_read_back_by_scikit_rf(tmp_path, y_ce, version, name, polar):
    # scikit-rf's Touchstone reader (skrf.Network(file)) recovers S within 1e-9.
    s = y_ce.to("s")
    write_touchstone(s, tmp_path / name, version, polar)
    net = read_skrf(tmp_path / name)
    np.testing.assert_allclose(net.f, FREQ, rtol=1e-15)
    assert rel_err(net.s, s.data) < 1e-9
    assert np.all(net.z0 == 50)


@pytest.mark.parametrize("version, name", [("1.1", "a.z2p"), ("2.0", "a.ts")])
def test_touchstone_z_read_back_by_scikit_rf(tmp_path, y_ce, version, name):
    # Version 1.1 stores Z / R, version 2.0 stores Z in ohm; scikit-rf undoes both
    # (its reader: z * R for 1.x, then z2s); compare with S at 50 ohm.
    write_touchstone(y_ce.to("z"), tmp_path / name, version)
    net = read_skrf(tmp_path / name)
    assert rel_err(net.s, y_ce.to("s").data) < 1e-9
    assert rel_err(net.z, y_ce.to("z").data) < 1e-9


@pytest.mark.parametrize("kind", ["y", "h", "g"])
def test_touchstone_2_y_h_g_read_back_by_scikit_rf(tmp_path, y_ce, kind):
    # Touchstone 2.0 stores Y, H, G unnormalised; scikit-rf converts them with y2s/h2s/g2s.
    write_touchstone(y_ce.to(kind), tmp_path / "a.ts", "2.0")
    assert rel_err(read_skrf(tmp_path / "a.ts").s, y_ce.to("s").data) < 1e-9


def test_touchstone_2_per_port_reference(tmp_path, y_ce):
    # [Reference] 50 75: scikit-rf reads one z0 per port and S at those references.
    s = y_ce.to("s", (50.0, 75.0))
    write_touchstone(s, tmp_path / "a.ts", "2.0")
    net = read_skrf(tmp_path / "a.ts")
    np.testing.assert_array_equal(net.z0[0], [50, 75])
    assert rel_err(net.s, s.data) < 1e-9
    with pytest.raises(dm.InputError, match="^z0:"):
        touchstone_text(s, "1.1")


@pytest.mark.parametrize("kind", ["y", "h", "g"])
def test_touchstone_1_1_normalisation_of_y_h_g(tmp_path, y_ce, kind):
    # Touchstone 1.1 (IBIS Open Forum specification, from memory): Y*R; h11/R, h12, h21, h22*R;
    # g11*R, g12, g21, g22/R; two-port order 11 21 12 22.  scikit-rf's parser gives the raw
    # values in file order (Touchstone.s_flat); its 1.x conversion of Y, H and G multiplies
    # whole rows by R, which is right only for Z, so the normalisation is checked on the raw
    # values here, and `devmodels gain --touchstone` undoes it itself (test_cli_terminated).
    from skrf.io.touchstone import Touchstone

    r = 75.0
    tp = y_ce.to(kind).to(kind, r)  # same data, reference 75 ohm
    tp = dm.TwoPort(tp.freq, tp.data, kind, r)
    write_touchstone(tp, tmp_path / f"a.{kind}2p", "1.1")
    raw = np.asarray(Touchstone(str(tmp_path / f"a.{kind}2p")).s_flat)
    d = tp.data
    norm = {"y": (r, r, r, r), "h": (1 / r, 1, 1, r), "g": (r, 1, 1, 1 / r)}[kind]
    expect = np.stack([d[:, 0, 0] * norm[0], d[:, 1, 0] * norm[2], d[:, 0, 1] * norm[1], d[:, 1, 1] * norm[3]], 1)
    assert rel_err(raw, expect) < 1e-12


def test_touchstone_text_layout(y_ce):
    txt = touchstone_text(y_ce.to("s"), "2.0", comment="invented demo")
    lines = txt.splitlines()
    assert lines[0] == "! invented demo" and lines[1] == "[Version] 2.0"
    assert "# Hz S RI R 50" in lines and "[Two-Port Data Order] 12_21" in lines
    assert f"[Number of Frequencies] {len(FREQ)}" in lines and lines[-1] == "[End]"
    assert touchstone_text(y_ce.to("s")).splitlines()[0] == "# Hz S RI R 50"
    with pytest.raises(dm.InputError, match="^kind:"):
        touchstone_text(y_ce.to("abcd"))


@pytest.mark.parametrize("polar", [False, True])
def test_csv_round_trip_and_header(tmp_path, y_ce, polar):
    # Read back with the standard library's csv module; re/im or magnitude/angle (deg).
    tp = y_ce.to("h")
    write_csv(tp, tmp_path / "a.csv", polar)
    with open(tmp_path / "a.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0][0].startswith("# devmodels")
    head = rows[1]
    assert head[0] == "freq [Hz]" and len(head) == 9
    assert head[1] == ("mag h11 [ohm]" if polar else "re h11 [ohm]") and head[8].endswith("[deg]" if polar else "[S]")
    vals = np.array(rows[2:], dtype=float)
    np.testing.assert_allclose(vals[:, 0], FREQ, rtol=1e-15)
    c = vals[:, 1::2] * np.exp(1j * np.radians(vals[:, 2::2])) if polar else vals[:, 1::2] + 1j * vals[:, 2::2]
    assert rel_err(c.reshape(-1, 2, 2), tp.data) < 1e-12


def test_json_file_is_the_params_object(tmp_path, y_ce):
    # The file holds twoport_dict (the params JSON the command line prints, see
    # test_cli_core), and its [re, im] pairs give the data back exactly.
    tp = y_ce.to("s", (50.0, 75.0))
    write_json(tp, tmp_path / "a.json", {"figures": {"ft": 3e8}})
    obj = json.loads((tmp_path / "a.json").read_text())
    assert obj == {**twoport_dict(tp), "figures": {"ft": 3e8}}
    assert obj["kind"] == "s" and obj["z0"] == [50.0, 75.0] and obj["config"] == "ce"
    assert [p["freq"] for p in obj["points"]] == FREQ.tolist()
    got = np.array([[[complex(*p[k]) for k in ("11", "12")], [complex(*p[k]) for k in ("21", "22")]]
                    for p in obj["points"]])
    np.testing.assert_array_equal(got, tp.data)


def test_atomic_write_leaves_no_partial_file(tmp_path, monkeypatch):
    # An exception that is not an OSError goes on unchanged, after the temporary file is removed.
    target = tmp_path / "keep.s2p"
    target.write_text("old content\n")

    class Boom(RuntimeError):
        pass

    real_fsync = os.fsync

    def failing_fsync(fd):
        raise Boom("disk full")

    monkeypatch.setattr(os, "fsync", failing_fsync)
    with pytest.raises(Boom):
        atomic_write(target, "new content\n" * 1000)
    monkeypatch.setattr(os, "fsync", real_fsync)
    assert target.read_text() == "old content\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.s2p"]


def test_write_by_extension(tmp_path, y_ce):
    s = y_ce.to("s")
    assert write_by_extension(s, tmp_path / "a.s2p")[1] == "Touchstone 1.1"
    assert write_by_extension(s, tmp_path / "a.ts")[1] == "Touchstone 2.0"
    assert write_by_extension(y_ce.to("s", (50, 75)), tmp_path / "b.s2p")[1] == "Touchstone 2.0"
    assert write_by_extension(s, tmp_path / "a.csv")[1] == "CSV"
    assert write_by_extension(s, tmp_path / "a.json")[1] == "JSON"
    with pytest.raises(dm.InputError, match="^out:"):
        write_by_extension(s, tmp_path / "a.y2p")
    with pytest.raises(dm.InputError, match="^out:"):
        write_by_extension(s, tmp_path / "a.txt")
    with pytest.raises(dm.OutputError, match="^out: cannot write .*does not exist"):
        write_by_extension(s, tmp_path / "missing" / "a.csv")
    (tmp_path / "d.csv").mkdir()
    with pytest.raises(dm.OutputError, match="^sweep-out: cannot write .*directory"):
        write_by_extension(s, tmp_path / "d.csv", option="sweep-out")


@pytest.mark.parametrize("block", [1, 5, 36, 37, 1000])
def test_blocks_join_to_the_same_text(y_ce, block):
    # Block by block or at once: the same bytes, whatever the block size.
    from devmodels.export import csv_chunks, csv_text, touchstone_chunks

    for tp in (y_ce.to("s"), y_ce.to("h"), y_ce.to("s", (50.0, 75.0))):
        for polar in (False, True):
            if tp.z0[0] == tp.z0[1]:
                assert "".join(touchstone_chunks(tp, "1.1", polar, "c", block)) == touchstone_text(tp, "1.1", polar, "c")
            assert "".join(touchstone_chunks(tp, "2.0", polar, "", block)) == touchstone_text(tp, "2.0", polar)
            assert "".join(csv_chunks(tp, polar, block)) == csv_text(tp, polar)


@pytest.mark.parametrize("extra", [None, {}, {"figures": {"ft": 3e8, "fmax": None}}, {"kind": "replaced"}])
def test_json_blocks_equal_one_dump(y_ce, extra):
    from devmodels.export import json_chunks

    tp = y_ce.to("s")
    obj = twoport_dict(tp)
    obj.update(extra or {})
    expect = json.dumps(obj, allow_nan=False) + "\n"
    for block in (1, 7, 100):
        assert "".join(json_chunks(tp, extra, block)) == expect
    one = dm.TwoPort(None, [[1.1e3, 2.5e-4], [50, 24e-6]], "h")
    assert "".join(json_chunks(one, extra, 1)) == json.dumps({**twoport_dict(one), **(extra or {})}) + "\n"


def test_bad_data_is_refused_before_any_file_exists(tmp_path, y_ce):
    # Touchstone cannot hold ABCD: the check comes before the temporary file is made.
    with pytest.raises(dm.InputError, match="^kind:"):
        write_touchstone(y_ce.to("abcd"), tmp_path / "a.s2p")
    assert list(tmp_path.iterdir()) == []


def test_writers_replace_a_symlink_and_keep_a_mode(tmp_path, y_ce):
    real = tmp_path / "target.txt"
    real.write_text("untouched\n")
    link = tmp_path / "a.s2p"
    link.symlink_to(real)
    write_by_extension(y_ce.to("s"), link)
    assert not link.is_symlink() and real.read_text() == "untouched\n"
    assert link.read_text() == touchstone_text(y_ce.to("s"))
    os.chmod(link, 0o600)
    write_csv(y_ce, link.with_suffix(".csv"))
    write_touchstone(y_ce.to("s"), link, polar=True)
    assert os.stat(link).st_mode & 0o777 == 0o600


def test_touchstone_db_format_read_back_by_scikit_rf_and_by_devmodels(tmp_path):
    # The DB format of the Touchstone specification (20 log10 |x| and angle in degrees):
    # scikit-rf's reader and devmodels' own reader get the same S back.
    skrf = pytest.importorskip("skrf")
    from devmodels.export import write_touchstone
    from devmodels.touchstone import read_touchstone

    m = dm.HybridPi(gm=0.04, r_pi=2.5e3, ro=50e3, c_pi=10e-12, c_mu=1e-12, rb=60.0)
    tp = dm.Stage(m, "ce").two_port(np.geomspace(1e6, 1e9, 7), "s")
    path = write_touchstone(tp, tmp_path / "db.s2p", polar="db", comment="CE stage\nbias: invented")
    text = path.read_text()
    assert "# Hz S DB R 50" in text and "! bias: invented" in text
    np.testing.assert_allclose(skrf.Network(str(path)).s, tp.data, rtol=1e-12)
    np.testing.assert_allclose(read_touchstone(path).data, tp.data, rtol=1e-12)


def test_csv_db_columns_and_comment():
    from devmodels.export import csv_text

    tp = dm.TwoPort(np.array([1e6]), np.array([[[0.5, 0.01], [10.0, 0.25j]]]), "s")
    text = csv_text(tp, "db")  # through the chunked writer's head
    head = text.splitlines()[1]
    assert head.startswith("freq [Hz],db s11 [dB],ang s11 [deg]")
    row = [float(x) for x in text.splitlines()[2].split(",")]
    assert row[1] == pytest.approx(20 * np.log10(0.5), abs=1e-12) and row[5] == pytest.approx(20.0, abs=1e-12)
    with pytest.raises(dm.InputError, match="^format: expected ri, ma or db"):
        csv_text(tp, "xy")


def test_extra_columns_in_csv_and_json_and_refused_by_touchstone(tmp_path):
    # the column values go into the file as they are (a 17-digit round trip: common practice, no source)
    from devmodels.export import Columns, csv_text, twoport_dict, write_by_extension

    f = np.array([1e6, 2e6, 3e6])
    tp = dm.TwoPort(f, np.tile(np.array([[0.2, 0.01], [3.0, 0.4]], dtype=complex), (3, 1, 1)), "s", 50.0)
    col = Columns(("a_db", "b"), ("a [dB]", "b [1]"), np.array([[1.5, 2.0], [1.25, 3.0], [0.1, 4.0]]))
    lines = csv_text(tp, columns=col).splitlines()
    assert lines[1].endswith(",a [dB],b [1]") and lines[3].endswith(",1.25,3")
    pts = twoport_dict(tp, col)["points"]
    assert [p["a_db"] for p in pts] == [1.5, 1.25, 0.1] and [p["b"] for p in pts] == [2.0, 3.0, 4.0]
    with pytest.raises(dm.InputError, match="^out: Touchstone has no place for a_db, b"):
        write_by_extension(tp, tmp_path / "x.s2p", columns=col)
    assert not (tmp_path / "x.s2p").exists()
    bad = Columns(("a_db",), ("a [dB]",), np.array([[1.0], [np.nan], [2.0]]))
    with pytest.raises(dm.InputError, match="^columns: a_db hold values that do not exist"):
        csv_text(tp, columns=bad)
