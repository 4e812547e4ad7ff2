"""The report and an exported notebook, opened in a real browser (Chromium via Playwright).

Playwright (the PyPI package) drives the Chromium from Debian's packages (its path is passed,
no browser build is downloaded). Each page must load every image (``naturalWidth > 0``)
and log no console error; screenshots go to a temporary folder (printed, kept by pytest's
tmp_path). Without Chromium or Playwright the test skips, unless
``PHOTORX_REQUIRE_BROWSER=1`` (set by ``.ci/run``), in which case it fails.

The notebook is executed with nbclient and exported with nbconvert's HTMLExporter the way
a notebook saved without its widget state is read (JupyterLab saves no widget state by
default): the panel shows its static figure. The exported page links two script libraries
on a CDN (require.js and MathJax); the run is offline, so the browser gets an empty script
for them (recorded and checked: nothing else is fetched, every image is embedded).
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest

REQUIRED = os.environ.get("PHOTORX_REQUIRE_BROWSER") == "1"
CDN_SCRIPTS = ("require.min.js", "require.js", "mathjax", "MathJax")
CHROME_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
               "--no-first-run", "--disable-background-networking",
               "--disable-component-update", "--disable-sync"]


def _missing(what):
    if REQUIRED:
        pytest.fail(f"{what} is required (PHOTORX_REQUIRE_BROWSER=1) but not available")
    pytest.skip(f"{what} not available")


def _chromium() -> str:
    for candidate in (os.environ.get("PHOTORX_CHROMIUM"), shutil.which("chromium"),
                      "/usr/bin/chromium"):
        if candidate and Path(candidate).exists():
            return candidate
    _missing("chromium")


@pytest.fixture(scope="module")
def browser():
    path = _chromium()
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _missing("playwright")
    with sync_playwright() as pw:
        chrome = pw.chromium.launch(executable_path=path, args=CHROME_ARGS, headless=True)
        yield chrome
        chrome.close()


def _open(browser, page_file: Path, shot: Path):
    """Open ``page_file``; return (images [(src head, naturalWidth)], console errors, fetched)."""
    page = browser.new_page(viewport={"width": 1100, "height": 900})
    errors, fetched = [], []
    page.on("console", lambda msg: errors.append(msg.text) if msg.type == "error" else None)
    page.on("pageerror", lambda exc: errors.append(str(exc)))

    def route(r):
        url = r.request.url
        if url.startswith(("file:", "data:")):
            return r.continue_()
        fetched.append(url)
        if any(name in url for name in CDN_SCRIPTS):
            return r.fulfill(status=200, content_type="application/javascript", body="")
        return r.abort()

    page.route("**/*", route)
    page.goto(page_file.as_uri(), wait_until="load")
    page.wait_for_timeout(300)
    images = page.eval_on_selector_all(
        "img", "els => els.map(e => [e.src.slice(0, 30), e.complete ? e.naturalWidth : 0])")
    page.screenshot(path=str(shot), full_page=True)
    page.close()
    return images, errors, fetched


def test_report_in_the_browser(browser, tmp_path):
    import photorx as prx
    from photorx.views.report import write_report

    page_file = write_report(prx.demo_receiver(), tmp_path / "report.html", bias_points=9)
    images, errors, fetched = _open(browser, page_file, tmp_path / "report.png")
    print(f"screenshot: {tmp_path / 'report.png'}")
    assert len(images) >= 6  # the schematic and five plots
    assert all(width > 0 for _, width in images), images
    assert all(src.startswith("data:image/") for src, _ in images)
    assert errors == [] and fetched == []


def test_exported_notebook_in_the_browser(browser, tmp_path):
    import nbformat
    from nbclient import NotebookClient
    from nbconvert import HTMLExporter

    from ipykernel.kernelspec import write_kernel_spec
    from jupyter_client.kernelspec import KernelSpecManager
    from jupyter_client.manager import KernelManager

    root = Path(__file__).resolve().parents[2] / "notebooks"
    nb = nbformat.read(root / "03_amplifier_loop.ipynb", as_version=4)
    # a kernel of this interpreter, not a "python3" kernel installed elsewhere
    write_kernel_spec(path=str(tmp_path / "kernels" / "python3"))
    specs = KernelSpecManager(kernel_dirs=[str(tmp_path / "kernels")])
    km = KernelManager(kernel_name="python3", kernel_spec_manager=specs)
    NotebookClient(nb, km=km, timeout=300,
                   resources={"metadata": {"path": str(tmp_path)}}).execute()
    nb.metadata.pop("widgets", None)  # saved without widget state
    body, _ = HTMLExporter().from_notebook_node(nb)
    page_file = tmp_path / "03_amplifier_loop.html"
    page_file.write_text(body, encoding="utf-8")
    images, errors, fetched = _open(browser, page_file, tmp_path / "notebook.png")
    print(f"screenshot: {tmp_path / 'notebook.png'}")
    # the Bode plot, the Cf sweep and the panel's static figure
    assert len(images) >= 3, images
    assert all(width > 0 for _, width in images), images
    assert errors == [], errors
    assert all(any(name in url for name in CDN_SCRIPTS) for url in fetched), fetched
