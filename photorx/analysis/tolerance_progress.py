"""Progress of a tolerance study: one tqdm bar fed by dask (local scheduler or a cluster).

``tqdm.auto`` draws a text bar in a terminal and a widget in Jupyter; the bar appears only
once a study has run for a second (``delay``), so short studies stay quiet.
"""

from __future__ import annotations

import contextlib
import sys

__all__ = ["progress_bar"]


class _Bar:
    def __init__(self, bar):
        self._bar = bar

    def update(self, rows: int) -> None:
        if self._bar is not None and rows:
            self._bar.update(rows)

    def dask_callback(self, rows: dict):
        """A dask local-scheduler callback advancing the bar by each finished chunk's units."""
        from dask.callbacks import Callback

        bar = self

        class _Advance(Callback):
            def _posttask(self, key, result, dsk, state, worker_id):
                bar.update(rows.get(key, 0))

        return _Advance()


@contextlib.contextmanager
def progress_bar(total: int, enabled: bool = True, delay: float = 1.0):
    """Context manager yielding an object with ``update(units)`` and ``dask_callback(rows)``.

    Parameters
    ----------
    total : int
        Units of the study.
    enabled : bool
        False: no bar (updates are ignored).
    delay : float
        Seconds before the bar appears [s]; default 1.
    """
    if not enabled:
        yield _Bar(None)
        return
    from tqdm.auto import tqdm

    with tqdm(total=total, delay=delay, unit="unit", desc="tolerance study", file=sys.stderr,
              leave=False) as bar:
        yield _Bar(bar)
