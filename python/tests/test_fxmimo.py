"""The fxmimo Python module against outside truth: Python's own integer arithmetic for the
rounding and overflow rules (README "How it computes"), numpy's reader for the .npy files the
fxmimo program writes, and the program's own JSON and vector sets for run, sweep and the
vector-set reader and writer. Run with Debian's python3 -m pytest (python3-pytest)."""
import json
import os
import pathlib
import random
import subprocess

import numpy as np
import pytest

import fxmimo

SOURCE = pathlib.Path(os.environ["FXMIMO_SOURCE_DIR"])
EXE = os.environ["FXMIMO_EXE"]
KIOSK = str(SOURCE / "examples" / "dpi" / "kiosk-8.toml")


def program(*args):
    """Runs the fxmimo program; returns (exit code, stdout, stderr)."""
    r = subprocess.run([EXE, *args], capture_output=True, text=True, check=False)
    return r.returncode, r.stdout, r.stderr


# --- requantisation: Python integers as the reference -----------------------------------------

def round_shift(x, s, mode):
    """round(x / 2^s) with Python's exact integers (floor division is exact floor)."""
    q, rest = divmod(x, 1 << s)  # x = q 2^s + rest, 0 <= rest < 2^s
    half = 1 << (s - 1)
    up = {
        "floor": False,
        "ceil": rest != 0,
        "toward_zero": x < 0 and rest != 0,
        "half_up": rest >= half,
        "half_down": rest > half,
        "half_toward_zero": rest > half or (rest == half and x < 0),
        "half_away": rest > half or (rest == half and x >= 0),
        "half_even": rest > half or (rest == half and q % 2 == 1),
    }[mode]
    return q + 1 if up else q


def overflow(v, w, mode):
    lo, hi = -(1 << (w - 1)), (1 << (w - 1)) - 1
    if lo <= v <= hi and not (mode == "saturate_symmetric" and v == lo):
        return v
    if mode == "wrap":
        return (v - lo) % (1 << w) + lo
    if mode == "saturate":
        return hi if v > hi else lo
    if mode == "saturate_symmetric":
        return hi if v > hi else -hi
    return 0  # saturate_zero


ROUNDINGS = ["floor", "ceil", "toward_zero", "half_up", "half_down", "half_toward_zero", "half_away", "half_even"]
OVERFLOWS = ["wrap", "saturate", "saturate_symmetric", "saturate_zero"]


@pytest.mark.parametrize("rounding", ROUNDINGS)
@pytest.mark.parametrize("ovf", OVERFLOWS)
def test_requantize_follows_the_rules_on_full_range_words(rounding, ovf):
    # Q5.20 (26 bits) into Q3.8 (12 bits): 12 fraction bits dropped, 2 integer bits lost.
    rng = random.Random(61)
    words = [rng.randrange(-(1 << 25), 1 << 25) for _ in range(3000)]
    words += [-(1 << 25), (1 << 25) - 1, 0, 1 << 11, -(1 << 11), 3 << 11, -(3 << 11)]  # extremes and ties
    got, overflows = fxmimo.requantize(np.array(words, dtype=np.int64), "Q5.20", "Q3.8", rounding, ovf)
    expected = [overflow(round_shift(x, 12, rounding), 12, ovf) for x in words]
    assert got.tolist() == expected
    lo, hi = -(1 << 11), (1 << 11) - 1
    rounded = [round_shift(x, 12, rounding) for x in words]
    assert overflows == sum(1 for v in rounded if not lo <= v <= hi or (ovf == "saturate_symmetric" and v == lo))


def test_requantize_keeps_the_shape_and_refuses_words_outside_their_format():
    words = np.arange(-8, 8, dtype=np.int64).reshape(4, 4)
    got, n = fxmimo.requantize(words, "Q3.0", "Q2.0", "floor", "saturate")
    assert got.shape == (4, 4)
    assert got.min() == -4 and got.max() == 3 and n == 8
    with pytest.raises(ValueError, match="flat index 1 is outside Q3.0"):
        fxmimo.requantize(np.array([0, 8]), "Q3.0", "Q2.0")
    with pytest.raises(ValueError, match="Q3.x"):
        fxmimo.requantize(np.array([0]), "Q3.x", "Q2.0")


def test_quantize_agrees_with_the_program():
    # Values exact as doubles and as decimals, with a tie (6.5 LSB) and an overflow.
    values = [0.1015625, -1.3359375, 0.75, 3.0, -0.0078125]
    code, out, err = program("quant", "-f", "Q1.6", "-r", "half_even", "-o", "saturate", "--json", "--",
                             *[repr(v) for v in values])
    assert code == 0, err
    expected = [int(v["word"]) for v in json.loads(out)["values"]]
    got, overflows = fxmimo.quantize(np.array(values), "Q1.6", "half_even", "saturate")
    assert got.tolist() == expected
    assert overflows == 1
    assert fxmimo.values(got, "Q1.6").tolist() == [w / 64 for w in expected]


def test_format_objects():
    f = fxmimo.Format("UQ1.15")
    assert (f.word_bits, f.frac_bits, f.signed, f.int_bits) == (16, 15, False, 1)
    assert str(f) == "UQ1.15" and f == fxmimo.Format("u16,15")


# --- the model: the program's files and JSON as the reference ---------------------------------

def test_trial_words_equal_the_npy_files_numpy_reads(tmp_path):
    code, _, err = program("vectors", "-c", KIOSK, "-o", str(tmp_path / "set"), "--form", "npy",
                           "--nodes", "dac,norm,chan_est", "--trials", "1")
    assert code == 0, err
    words = fxmimo.Scenario(KIOSK).trial_words(1)
    manifest = json.loads((tmp_path / "set" / "manifest.json").read_text())
    checked = 0
    for entry in manifest["files"]:
        if entry["direction"] != "out":
            continue
        on_disk = np.load(tmp_path / "set" / entry["file"])  # numpy's own .npy reader
        node = words[entry["node"]]
        assert on_disk.shape == (1,) + node.shape  # the file has the trial first
        assert [d["name"] for d in entry["dims"]] == ["trial", *node.dims]
        part = node.re if entry["part"] in ("re", "real") else node.im
        assert np.array_equal(on_disk[0], part), entry["file"]
        checked += 1
    assert checked >= 5  # dac re/im, chan_est re/im, norm


def test_run_and_sweep_equal_the_programs_json(tmp_path):
    scen = fxmimo.Scenario(KIOSK)
    assert scen.name == "kiosk-8" and scen.trials == 4 and scen.nodes[-1] == "dac"
    code, _, err = program("run", "-c", KIOSK, "--trials", "2", "--json", str(tmp_path / "run.json"))
    assert code == 0, err
    assert scen.run(2) == json.loads((tmp_path / "run.json").read_text())
    code, _, err = program("sweep", "-c", KIOSK, "--node", "dac", "--bits", "8:10", "--vary", "frac", "--trials", "2",
                           "--json", str(tmp_path / "sweep.json"))
    assert code == 0, err
    assert scen.sweep(["dac"], 8, 10, "frac", 2) == json.loads((tmp_path / "sweep.json").read_text())


def test_vector_sets_written_here_read_there_and_back(tmp_path):
    scen = fxmimo.Scenario(KIOSK)
    words = scen.trial_words(0)
    dac = words["dac"]
    # A record of our own, shaped as the program's: the trial first.
    record = fxmimo.NodeWords("dac", "out", "", str(dac.format), dac.rounding, dac.overflow, ["trial", *dac.dims],
                              dac.re[np.newaxis], dac.im[np.newaxis])
    text = pathlib.Path(KIOSK).read_text()
    fxmimo.write_vector_set(str(tmp_path / "mine"), [record], "kiosk-8.toml", text, 2718, [0], "hex")
    back = fxmimo.read_vector_set(str(tmp_path / "mine"))
    assert back["trials"] == [0] and len(back["records"]) == 1
    assert np.array_equal(back["records"][0].im, dac.im[np.newaxis])
    # The program agrees: its own set of the same node and trial differs in nothing.
    code, _, err = program("vectors", "-c", KIOSK, "-o", str(tmp_path / "theirs"), "--nodes", "dac", "--trials", "0")
    assert code == 0, err
    code, out, err = program("diff", str(tmp_path / "theirs"), str(tmp_path / "mine"))
    assert "dac/out" in out and "identical" in out.split("dac/out")[1].split("\n")[0], out + err
    # And the module's dump of that node passes the program's check.
    (tmp_path / "re.hex").write_text("".join(f"{w & 0xfff:03x}\n" for w in dac.re.flatten()))
    (tmp_path / "im.hex").write_text("".join(f"{w & 0xfff:03x}\n" for w in dac.im.flatten()))
    code, out, err = program("check", str(tmp_path / "theirs"), "--node", "dac", "--dump", str(tmp_path / "re.hex"),
                             "--dump", str(tmp_path / "im.hex"))
    assert code == 0, out + err
    bad = dac.re.flatten().copy()
    bad[7] ^= 1  # a planted one-LSB error
    (tmp_path / "re.hex").write_text("".join(f"{w & 0xfff:03x}\n" for w in bad))
    code, out, err = program("check", str(tmp_path / "theirs"), "--node", "dac", "--dump", str(tmp_path / "re.hex"),
                             "--dump", str(tmp_path / "im.hex"))
    assert code == 1 and "MISMATCH" in out, out + err
