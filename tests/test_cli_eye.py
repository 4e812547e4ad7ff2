"""``photorx eye``: figures on stdout, the density eye as an image, one-line errors.

The figures printed are the ones of :meth:`photorx.Receiver.eye` (checked against outside
references in tests/analysis/test_digital.py); here: the command routes them, parses the bit
rate with units, writes a valid image atomically and refuses bad input in one line.
"""

from __future__ import annotations

import pytest

import photorx as prx
from photorx.cli import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_eye_writes_the_figures_and_a_png(capsys, tmp_path):
    path = tmp_path / "eye.png"
    code, out, err = run(capsys, "eye", "--bit-rate", "2.5G", "--pattern", "prbs9",
                         "--output", str(path))
    assert code == 0, err
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # the PNG signature
    eye = prx.demo_receiver().eye(bit_rate=2.5e9, pattern="prbs9")
    assert f"{eye.isi_penalty_db:.3f} dB" in out and "NRZ PRBS9" in out
    assert "2.5 Gbit/s" in out


def test_eye_uses_the_design_bit_rate_and_pam4(capsys):
    code, out, err = run(capsys, "eye", "--modulation", "pam4")
    assert code == 0, err
    assert "PAM4 PRBS7" in out and "1.25 Gbit/s" in out


@pytest.mark.parametrize("argv, words", [
    (["eye", "--bit-rate", "0"], ["bit_rate", "bit/s", "valid range"]),
    (["eye", "--bit-rate", "10 GHz"], ["bit rate", "bit/s"]),
    (["eye", "--bit-rate", "2e12"], ["bit_rate", "1e12 bit/s"]),
    (["eye", "--pattern", "prbs8"], ["pattern", "prbs8", "prbs7"]),
    (["eye", "si-pin-850"], ["bit_rate", "--bit-rate"]),
    (["eye", "--modulation", "pam8"], ["modulation"]),
])
def test_eye_errors_are_one_line(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1 and "Traceback" not in err, err
    for word in words:
        assert word in err


def test_eye_refuses_an_unknown_image_type_before_writing(capsys, tmp_path):
    path = tmp_path / "eye.txt"
    code, out, err = run(capsys, "eye", "--output", str(path))
    assert code == 2 and not path.exists() and ".png" in err
