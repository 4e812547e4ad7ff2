"""The notebooks: stored without outputs, in step with their source, and executable top to bottom.

Each notebook is executed with nbclient on an ipykernel kernel of *this* interpreter (a
kernel spec written into a temporary folder, so a "python3" kernel installed elsewhere on
the machine cannot be picked up instead), in a temporary working folder. Any error output
fails the test.
"""

import os
import sys
from pathlib import Path

import nbformat
import pytest

nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")

from notebook_sources import NOTEBOOKS, build  # noqa: E402  (tests/ is on sys.path)

NOTEBOOK_DIR = Path(__file__).resolve().parents[1] / "notebooks"
EXPECTED = sorted(NOTEBOOKS)
#: The stage notebooks written as worked studies (computed cells with plots, then the panel).
STUDIES = ("01_junction.ipynb", "02_photodiode.ipynb", "03_amplifier_loop.ipynb",
           "04_noise.ipynb")
WIDGET_MIME = "application/vnd.jupyter.widget-view+json"
ERROR_STYLE = "color:#b00020"  # how photorx.views.widgets_base marks an error message


@pytest.fixture(scope="module")
def kernel_dirs(tmp_path_factory):
    """A folder holding a "python3" kernel spec that runs the current interpreter.

    Connection files and the kernel's IPython profile go to temporary folders too, so the
    run neither depends on nor writes to the user's home (IPython startup files, runtime).
    """
    from ipykernel.kernelspec import write_kernel_spec

    root = tmp_path_factory.mktemp("kernels")
    write_kernel_spec(path=str(root / "python3"))
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("JUPYTER_RUNTIME_DIR", str(tmp_path_factory.mktemp("runtime")))
        mp.setenv("IPYTHONDIR", str(tmp_path_factory.mktemp("ipython")))
        yield str(root)


def execute(nb, kernel_dirs, cwd):
    """Run every cell of ``nb`` in a fresh kernel of this interpreter; returns the notebook."""
    from jupyter_client.kernelspec import KernelSpecManager
    from jupyter_client.manager import KernelManager

    ksm = KernelSpecManager(kernel_dirs=[kernel_dirs])
    km = KernelManager(kernel_name="python3", kernel_spec_manager=ksm)
    client = nbclient.NotebookClient(nb, km=km, timeout=300, allow_errors=False,
                                     resources={"metadata": {"path": str(cwd)}})
    return client.execute()


def outputs(nb):
    return [out for cell in nb.cells if cell.cell_type == "code" for out in cell.outputs]


def test_the_six_notebooks_exist():
    assert sorted(p.name for p in NOTEBOOK_DIR.glob("*.ipynb")) == EXPECTED


@pytest.mark.parametrize("name", EXPECTED)
def test_stored_with_outputs_cleared_and_in_step_with_source(name):
    nb = nbformat.read(NOTEBOOK_DIR / name, as_version=4)
    nbformat.validate(nb)
    for cell in nb.cells:
        if cell.cell_type == "code":
            assert cell.outputs == [], f"{name}: outputs stored"
            assert cell.execution_count is None, f"{name}: execution count stored"
    assert nb.metadata["kernelspec"]["name"] == "python3"
    # the generator (tests/notebook_sources.py) and the stored notebook hold the same cells
    fresh = build(name)
    assert [(c.cell_type, c.source) for c in nb.cells] == \
        [(c.cell_type, c.source) for c in fresh.cells]
    # an explanation first, every panel built by photorx.views.widgets, no code defined
    assert nb.cells[0].cell_type == "markdown" and len(nb.cells[0].source) > 400
    code = "\n".join(c.source for c in nb.cells if c.cell_type == "code")
    assert "pw." in code and "_panel(" in code
    assert "def " not in code and "class " not in code


def test_kernel_runs_this_interpreter(kernel_dirs, tmp_path):
    nb = nbformat.v4.new_notebook()
    nb.cells.append(nbformat.v4.new_code_cell("import sys\nprint(sys.executable)"))
    done = execute(nb, kernel_dirs, tmp_path)
    text = "".join(o.get("text", "") for o in outputs(done)).strip()
    assert os.path.samefile(text, sys.executable)


@pytest.mark.slow
@pytest.mark.parametrize("name", EXPECTED)
def test_notebook_executes_without_error(name, kernel_dirs, tmp_path):
    nb = nbformat.read(NOTEBOOK_DIR / name, as_version=4)
    done = execute(nb, kernel_dirs, tmp_path)
    outs = outputs(done)
    errors = [o for o in outs if o.output_type == "error"]
    assert not errors, errors
    stderr = "".join(o.get("text", "") for o in outs
                     if o.output_type == "stream" and o.get("name") == "stderr")
    assert "Traceback" not in stderr and "Error" not in stderr, stderr
    # the panel was displayed as a widget, and its message area shows no error
    assert any(WIDGET_MIME in o.get("data", {}) for o in outs), name
    # a saved notebook shows figures without a kernel: the panel carries a static image
    # beside its widget view, and each stage study draws at least two plots of its own
    panel_images = [o for o in outs if WIDGET_MIME in o.get("data", {})
                    and "image/png" in o["data"]]
    assert panel_images, name
    if name in STUDIES:
        static = [o for o in outs if "image/png" in o.get("data", {})
                  and WIDGET_MIME not in o["data"]]
        assert len(static) >= 2, (name, len(static))
    state = done.metadata["widgets"]["application/vnd.jupyter.widget-state+json"]["state"]
    texts = [m["state"].get("value") or "" for m in state.values()
             if m.get("model_name") in ("HTMLModel", "HTMLMathModel")]
    assert texts and not [t for t in texts if ERROR_STYLE in t], texts
    # nothing of the run is written back: the stored notebook keeps no outputs
    stored = nbformat.read(NOTEBOOK_DIR / name, as_version=4)
    assert all(c.outputs == [] for c in stored.cells if c.cell_type == "code")
