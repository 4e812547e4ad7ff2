"""Design files with an avalanche photodiode: keys, round trip, the shipped demo, the CLI."""

import dataclasses

import pytest

import photorx as prx
from photorx import designfile as dfile
from photorx.cli import main


@pytest.fixture(scope="module")
def rx():
    return prx.load_design("si-apd-850")


def test_demo_apd_design_builds_an_avalanche_receiver(rx):
    assert isinstance(rx.photodiode, prx.AvalanchePhotodiode)
    r = rx.evaluate()
    # an APD near its optimum: gain of tens, F = k M + (1-k)(2 - 1/M) (McIntyre 1966)
    assert 10 < r.gain < 200
    k = r.k_effective
    assert r.excess_noise_factor == pytest.approx(k * r.gain + (1 - k) * (2 - 1 / r.gain),
                                                  rel=1e-12)
    # Si k_eff about 0.02-0.05 (trade fact, from memory; Sze and Ng 3rd ed. ch. 13)
    assert 0.01 < k < 0.1
    assert all(rx.checks()["ok"])


def test_apd_design_round_trips(rx, tmp_path):
    path = prx.save_design(rx, tmp_path / "apd.toml")
    back = prx.load_design(path)
    assert back == rx
    assert 'kind = "avalanche"' in path.read_text()
    again = dataclasses.replace(rx, photodiode=dataclasses.replace(
        rx.photodiode, bulk_dark_current=2e-12, surface_dark_current=1e-10))
    assert prx.load_design(prx.save_design(again, tmp_path / "b.toml")) == again


def test_pin_designs_write_no_kind(tmp_path):
    text = dfile.dumps_design(prx.demo_receiver())
    assert "kind" not in text.split("[photodiode]")[1].split("[")[0]


def test_avalanche_keys_need_the_avalanche_kind():
    text = dfile.demo_design_path("si-apd-850").read_text()
    with pytest.raises(prx.DesignError, match=r"\[photodiode\] injection: does not apply.*avalanche"):
        dfile.loads_design(text.replace('kind = "avalanche"\n', ""))
    with pytest.raises(prx.DesignError, match=r"\[photodiode\] kind"):
        dfile.loads_design(text.replace('kind = "avalanche"', 'kind = "apd"'))
    with pytest.raises(prx.DesignError, match="material"):
        dfile.loads_design(text.replace('material = "Si"', 'material = "GaAs"'))


def test_a_sam_apd_cannot_be_written(rx):
    sam = prx.AvalanchePhotodiode(structure=prx.SamStructure(area=2.5e-9))
    with pytest.raises(prx.DesignError, match="structure"):
        dfile.dumps_design(dataclasses.replace(rx, photodiode=sam, wavelength=1550e-9))


def test_template_documents_the_avalanche_keys():
    text = dfile.design_template()
    for key in ("kind", "injection", "surface_dark_current", "bulk_dark_current",
                "saturation_velocity"):
        assert f"{key} = " in text
    assert "hundreds of volts" in text


def test_cli_budget_of_the_apd_demo(capsys):
    assert main(["budget", "si-apd-850"]) == 0
    out = capsys.readouterr().out
    assert "avalanche gain" in out and "excess noise factor" in out


def test_cli_sweep_in_gain(tmp_path):
    from photorx.views import read_sweep_csv

    out = tmp_path / "gain.csv"
    assert main(["sweep", "si-apd-850", "--axis", "gain=2:50:3:log", "--output", str(out)]) == 0
    frame = read_sweep_csv(out)  # unit-suffixed headers read back to bare names
    # each gain becomes the bias that gives it (McIntyre gain rises monotonically to breakdown)
    assert list(frame["gain"].round(6)) == pytest.approx([2.0, 10.0, 50.0], rel=1e-6)
    assert frame["reverse_bias"].is_monotonic_increasing
