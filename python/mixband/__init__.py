"""mixband from Python: Bayesian density estimation with mixtures of normals.

Fit a location or location-scale mixture of normals to one sample by Gibbs sampling, with
several chains and a convergence gate, and get the posterior mean density with credible
bands on a grid::

    import mixband
    fit = mixband.sample(df["wing_mm"], seed=1, model={"kernel": "location-scale"})
    fit.converged        # False: report nothing from it
    fit.bands            # DataFrame, the columns of bands.csv
    fit.summary["modes"]

The same config and seed give the same numbers as ``mixband sample`` on the command line,
bit for bit. Every run lives in a run directory (``out``, or a temporary one kept alive by
the result) that the command line can read, resume and extend.
"""

from __future__ import annotations

import json
import os
import shutil
import sys
import tempfile
from pathlib import Path
from typing import Any, Dict, Mapping, Optional, Union

from . import _native
from ._result import Result

__all__ = ["sample", "open", "Result", "__version__"]
__version__ = _native.__version__

_SECTIONS = ("data", "model", "prior", "sampler", "grid", "bands", "gate", "shape", "check")


def _as_floats(values: Any, name: str) -> list:
    """A flat list of floats from a list, NumPy array or pandas Series."""
    if hasattr(values, "to_numpy"):
        values = values.to_numpy()
    if hasattr(values, "ravel") and hasattr(values, "tolist"):
        if getattr(values, "ndim", 1) != 1:
            raise ValueError(f"{name}: expected one column of numbers, got shape {values.shape}")
        values = values.tolist()
    try:
        out = [float(v) for v in values]
    except (TypeError, ValueError) as e:
        raise ValueError(f"{name}: every value must be a number ({e})") from None
    return out


def _as_counts(counts: Any, n: int) -> list:
    if hasattr(counts, "to_numpy"):
        counts = counts.to_numpy()
    if hasattr(counts, "tolist"):
        counts = counts.tolist()
    out = []
    for i, c in enumerate(counts):
        if isinstance(c, float) and c.is_integer():
            c = int(c)
        if not isinstance(c, int) or isinstance(c, bool) or c < 0:
            raise ValueError(f"counts[{i}] is {c!r}; counts must be whole numbers, 0 or more")
        out.append(c)
    if len(out) != n:
        raise ValueError(f"counts: {len(out)} counts for {n} values; give one count per value")
    return out


def _load_config(config: Union[None, str, os.PathLike, Mapping[str, Any]]) -> tuple:
    """The config as a dict of sections, its TOML text when it is a file (None otherwise),
    where it came from, and the folder that relative paths in it are read from."""
    if config is None:
        return {}, None, "config given in Python", os.getcwd()
    if isinstance(config, Mapping):
        return {k: dict(v) for k, v in config.items()}, None, "config given in Python", os.getcwd()
    path = Path(config)
    try:
        import tomllib  # Python 3.11+
    except ModuleNotFoundError:  # pragma: no cover - older Pythons
        import tomli as tomllib  # type: ignore[no-redef]
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as e:
        raise ValueError(f"cannot read config file {path}: {e}") from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        raise ValueError(f"{path}: {e}") from None
    return doc, text, str(path), str(path.resolve().parent)


def _progress_printer(quiet: bool):
    """A progress callback: tqdm when it is installed, a line on stderr otherwise."""
    if quiet:
        return None
    try:
        from tqdm.auto import tqdm  # type: ignore
    except ImportError:
        tqdm = None
    state: Dict[str, Any] = {}

    def show(done: int, planned: int) -> None:
        if state.get("last") == (done, planned):
            return
        state["last"] = (done, planned)
        if tqdm is not None:
            bar = state.get("bar")
            if bar is None:
                bar = state["bar"] = tqdm(total=planned, unit="sweep", desc="mixband")
            bar.total = planned
            bar.update(done - bar.n)
            if done >= planned:
                bar.close()
            return
        width = 30
        filled = int(width * done / planned) if planned else width
        sys.stderr.write(f"\rmixband [{'#' * filled}{'.' * (width - filled)}] {done}/{planned} sweeps")
        if done >= planned:
            sys.stderr.write("\n")
        sys.stderr.flush()

    return show


def sample(
    values: Any = None,
    *,
    counts: Any = None,
    out: Union[None, str, os.PathLike] = None,
    seed: Optional[int] = None,
    config: Union[None, str, os.PathLike, Mapping[str, Any]] = None,
    force: bool = False,
    threads: Optional[int] = None,
    report: bool = True,
    quiet: bool = False,
    **sections: Mapping[str, Any],
) -> Result:
    """Sample a mixture of normals for one sample and summarise it.

    values: the sample (list, NumPy array or pandas Series); None to use the [data] file of
        ``config``.
    counts: how many times each value was observed (optional, whole numbers).
    out: the run directory; None uses a temporary one that lives as long as the result.
    seed: the run's seed ([sampler] seed).
    config: a path to a TOML run description, or a dict of its sections.
    **sections: config sections as dicts, over those of ``config``, for example
        ``model={"kernel": "location"}`` or ``sampler={"draws": 4000}``.
    force: replace an earlier mixband run in ``out``.
    threads: worker threads (default: every core).
    report: write the figures and report.html.
    quiet: no progress display.

    Raises ValueError for bad input (with the message the command line prints) and
    KeyboardInterrupt when interrupted (the run is left resumable: ``mixband.open(dir)
    .resume()``).
    """
    doc, text, origin, base_dir = _load_config(config)
    if sections or seed is not None:
        # Settings given here change the file's: messages then name the merged config.
        if text is not None:
            origin = f"{origin} with the settings given in Python"
        text = None
    for name, section in sections.items():
        if name not in _SECTIONS:
            raise ValueError(
                f"unknown config section {name!r}; the sections are {', '.join(_SECTIONS)}"
            )
        if not isinstance(section, Mapping):
            raise ValueError(f"{name}: expected a dict of keys, got {type(section).__name__}")
        doc.setdefault(name, {}).update(section)
    if seed is not None:
        doc.setdefault("sampler", {})["seed"] = int(seed)
    vals = None
    cnts = None
    if values is not None:
        vals = _as_floats(values, "values")
        if counts is not None:
            cnts = _as_counts(counts, len(vals))
    elif counts is not None:
        raise ValueError("counts given without values")
    tmp = None
    if out is None:
        tmp = tempfile.mkdtemp(prefix="mixband-")
        run_dir = os.path.join(tmp, "run")
    else:
        run_dir = os.fspath(out)
    try:
        got = _native.sample(
            json.dumps(doc, allow_nan=False) if text is None else text,
            text is None,
            origin,
            base_dir,
            vals,
            cnts,
            run_dir,
            force,
            threads=threads,
            report=report,
            progress=_progress_printer(quiet),
        )
    except BaseException:
        if tmp is not None and not isinstance(sys.exc_info()[1], KeyboardInterrupt):
            shutil.rmtree(tmp, ignore_errors=True)
        raise
    return Result(got["run_dir"], _temporary=tmp)


def open(run_dir: Union[str, os.PathLike]) -> Result:  # noqa: A001 - the package's verb
    """An existing run directory (written by Python or by the command line)."""
    path = Path(run_dir)
    if not (path / "manifest.json").is_file() or not (path / "config.toml").is_file():
        raise ValueError(
            f"{path}: no config.toml and manifest.json; is this a mixband run directory?"
        )
    return Result(str(path))

