"""Meta-tests on the public interface: every parameter documented, no keyword silently ignored.

Modelled on python-control's parameter meta-tests (common practice in scientific Python
libraries): walk every public name, parse its numpydoc docstring with numpydoc's own
parser, and compare the documented parameters with the signature.
"""

from __future__ import annotations

import dataclasses
import importlib
import inspect
import pkgutil

import pytest
from numpydoc.docscrape import ClassDoc, FunctionDoc

import photorx

# Modules whose public names are part of the interface: every module of the package except
# the notebook panels (their public names are listed in photorx.views.widgets and checked
# through it) and private helpers.
_MODULES = sorted(
    info.name for info in pkgutil.walk_packages(photorx.__path__, prefix="photorx.")
    if not info.name.rsplit(".", 1)[-1].startswith("_")
)


def _public_objects():
    """(qualified name, object) of every public function, class and public method."""
    seen = {}
    for module_name in ["photorx"] + _MODULES:
        module = importlib.import_module(module_name)
        names = getattr(module, "__all__", None)
        if names is None:
            continue
        for name in names:
            if name.startswith("_"):
                continue
            # a functools.cache / lru_cache wrapper is no function to inspect: read the
            # function it wraps (its signature and docstring are what users see)
            obj = inspect.unwrap(getattr(module, name))
            if not (inspect.isfunction(obj) or inspect.isclass(obj)):
                continue
            if not getattr(obj, "__module__", "").startswith("photorx"):
                continue
            seen.setdefault(f"{obj.__module__}.{obj.__qualname__}", obj)
            if inspect.isclass(obj) and not issubclass(obj, BaseException):
                for attr, member in vars(obj).items():
                    if attr.startswith("_"):
                        continue
                    if isinstance(member, (staticmethod, classmethod)):
                        member = member.__func__
                    member = inspect.unwrap(member)
                    if inspect.isfunction(member):
                        seen.setdefault(f"{obj.__module__}.{obj.__qualname__}.{attr}", member)
    return sorted(seen.items())


PUBLIC = _public_objects()


def _signature_parameters(obj):
    if inspect.isclass(obj) and dataclasses.is_dataclass(obj):
        return [f.name for f in dataclasses.fields(obj) if f.init]
    try:
        # the signature of the class itself, not of ``__init__``: a named tuple takes its
        # fields through ``__new__`` and a mixin without ``__init__`` takes no arguments,
        # while both report ``object.__init__(self, *args, **kwargs)``
        params = inspect.signature(obj).parameters.values()
    except (TypeError, ValueError):  # builtins without a signature
        return []
    return [p.name for p in params if p.name not in ("self", "cls")
            and p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)]


def _documented_parameters(obj):
    doc = ClassDoc(obj) if inspect.isclass(obj) else FunctionDoc(obj)
    names = set()
    for section in ("Parameters", "Other Parameters"):
        for param in doc[section]:
            for name in param.name.split(","):
                names.add(name.strip().lstrip("*"))
    return names


def test_the_walk_finds_the_interface():
    # guards the meta-test itself: an empty walk would pass everything
    names = {name for name, _ in PUBLIC}
    assert len(PUBLIC) > 100
    for expected in ("photorx.analysis.receiver.Receiver", "photorx.circuit.tia.Tia.noise",
                     "photorx.device.junction_abrupt.AbruptJunction.capacitance",
                     "photorx.analysis.sweep.sweep", "photorx.units.parse_quantity"):
        assert expected in names


@pytest.mark.parametrize("name,obj", PUBLIC, ids=[n for n, _ in PUBLIC])
def test_every_parameter_is_documented(name, obj):
    expected = _signature_parameters(obj)
    missing = [p for p in expected if p not in _documented_parameters(obj)] if expected else []
    assert not missing, f"{name}: parameters not documented in its numpydoc Parameters section: {missing}"


def test_the_documentation_check_can_fail():
    def undocumented(alpha, beta):
        """Add.

        Parameters
        ----------
        alpha : float
            First.
        """

    assert _signature_parameters(undocumented) == ["alpha", "beta"]
    assert _documented_parameters(undocumented) == {"alpha"}


_BOGUS = "definitely_not_a_parameter"


@pytest.mark.parametrize("name,obj", PUBLIC, ids=[n for n, _ in PUBLIC])
def test_unknown_keywords_are_refused_by_the_signature(name, obj):
    """Without ``**kwargs`` Python itself refuses an unknown keyword; with it, see below."""
    if inspect.isclass(obj) and issubclass(obj, BaseException):
        return  # exceptions and warnings take what BaseException takes; they are not options
    try:
        signature = inspect.signature(obj)
    except (TypeError, ValueError):
        return
    if any(p.kind is p.VAR_KEYWORD for p in signature.parameters.values()):
        assert name in _FORWARDS_KEYWORDS or name in _NAMES_ARE_DATA, (
            f"{name} takes **kwargs: add a call with an unknown keyword to _FORWARDS_KEYWORDS")
        return
    with pytest.raises(TypeError):
        signature.bind_partial(**{_BOGUS: 1})


def _demo():
    return photorx.demo_receiver()


# Each call below is made twice: once with ``extra = {}``, which must succeed (so the
# refusal is caused by the unknown name, not by a broken call), and once with an unknown
# keyword, which must raise TypeError or DesignError.

def _call_tia_analyze(tmp_path, extra):
    rx = _demo()
    rx.tia.analyze(rx.equivalent_circuit(), **extra)


def _call_tia_noise(tmp_path, extra):
    rx = _demo()
    rx.tia.noise(rx.equivalent_circuit(), **extra)


def _call_write_report(tmp_path, extra):
    from photorx.views.report import write_report

    path = tmp_path / ("r-bad.html" if extra else "r.html")
    write_report(_demo(), path, **extra)
    assert path.exists()


def _call_sweep(tmp_path, extra):
    photorx.sweep(_demo(), rf=[5e3, 10e3], **{k: [1.0] for k in extra})


def _call_with_parameters(tmp_path, extra):
    from photorx.analysis.parameters import with_parameters

    with_parameters(_demo(), rf=5e3, **extra)


def _call_integrated_output_noise(tmp_path, extra):
    from photorx.circuit.noise import integrated_output_noise

    # an invented but complete design (every required keyword of output_noise_psd)
    design = {"gbw": 100e6, "dc_gain": 3e4, "rf": 47e3, "cf": 0.2e-12, "cd": 2e-12,
              "en": 8e-9, "in_": 5e-15}
    integrated_output_noise(1.0, 1e9, **design, **extra)


def _call_panel_set(tmp_path, extra):
    import photorx.views.widgets as pw

    panel = pw.junction_panel(render=False)
    before = panel.value("temperature")
    try:
        panel.set(temperature=before + 10.0, **extra)
    except TypeError:
        assert panel.value("temperature") == before  # refused before any control moved
        raise


# public callables that forward **kwargs: each is called with an unknown keyword
_FORWARDS_KEYWORDS = {
    "photorx.circuit.noise.integrated_output_noise": _call_integrated_output_noise,
    "photorx.analysis.parameters.with_parameters": _call_with_parameters,
    "photorx.analysis.sweep.sweep": _call_sweep,
    "photorx.circuit.tia.Tia.analyze": _call_tia_analyze,
    "photorx.circuit.tia.Tia.noise": _call_tia_noise,
    "photorx.views.report.write_report": _call_write_report,
    "photorx.views.widgets_base.Panel.set": _call_panel_set,
}


def _call_chain_noise(tmp_path, extra):
    from photorx.analysis.noise_integrals import chain_noise

    design = {"gbw": 100e6, "dc_gain": 3e4, "rf": 47e3, "cf": 0.2e-12, "cd": 2e-12,
              "en": 8e-9, "in_": 5e-15}
    chain_noise(1.0, **design, **extra)


_FORWARDS_KEYWORDS["photorx.analysis.noise_integrals.chain_noise"] = _call_chain_noise


_GAIN_POINTS = ([1e2, 1e4, 1e6, 1e8], [100.0, 80.0, 40.0, -0.5], [-6.0, -84.0, -90.0, -108.0])


def _call_from_gain_points(tmp_path, extra):
    photorx.OpAmp.from_gain_points(*_GAIN_POINTS, poles=1, input_capacitance=1e-12, **extra)


def _call_gain_fit_amplifier(tmp_path, extra):
    photorx.fit_open_loop_gain(*_GAIN_POINTS, poles=1).amplifier(input_capacitance=1e-12, **extra)


_FORWARDS_KEYWORDS["photorx.circuit.amplifier.OpAmp.from_gain_points"] = _call_from_gain_points
_FORWARDS_KEYWORDS["photorx.circuit.amplifier_fit.GainFit.amplifier"] = _call_gain_fit_amplifier


def _grid_keys(extra):
    from photorx.analysis.sweep import grid

    return set(grid(rf=[5e3, 10e3], **{k: [1.0] for k in extra}))


# public callables whose keyword names are data, not options: ``grid`` builds the cartesian
# product of whatever axes it is given (``sweep`` checks the names against the receiver
# before calling it). Each entry checks that the name really comes back as data.
_NAMES_ARE_DATA = {
    "photorx.analysis.sweep.grid": _grid_keys,
}


@pytest.mark.parametrize("name", sorted(_FORWARDS_KEYWORDS))
def test_forwarded_unknown_keywords_are_refused(name, tmp_path):
    call = _FORWARDS_KEYWORDS[name]
    call(tmp_path, {})
    with pytest.raises((TypeError, photorx.DesignError), match=_BOGUS):
        call(tmp_path, {_BOGUS: 1})
    if name.endswith("write_report"):
        assert not (tmp_path / "r-bad.html").exists()  # refused before anything is written


@pytest.mark.parametrize("name", sorted(_NAMES_ARE_DATA))
def test_keyword_names_taken_as_data_come_back(name):
    assert _NAMES_ARE_DATA[name]({_BOGUS: 1}) == {"rf", _BOGUS}


def test_the_forwarding_lists_name_public_callables():
    # guards the lists themselves: a misspelt entry would exempt nothing and test nothing
    names = {name for name, _ in PUBLIC}
    assert set(_FORWARDS_KEYWORDS) <= names
    assert set(_NAMES_ARE_DATA) <= names
