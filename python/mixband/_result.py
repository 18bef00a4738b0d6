"""The result of a run: its run directory read back as pandas and plain Python objects.

Every property reads the file the run wrote (bands.csv, cdf.csv, summary.json,
diagnostics.json, checks.json), so a result from Python and the command line's files are
one and the same thing.
"""

from __future__ import annotations

import json
import shutil
import weakref
from pathlib import Path
from typing import Any, Dict, List, Optional

import numpy as np
import pandas as pd

from . import _native


class Result:
    """A mixband run directory and what it holds."""

    def __init__(self, run_dir: str, _temporary: Optional[str] = None) -> None:
        self._dir = Path(run_dir)
        self._cache: Dict[str, Any] = {}
        if _temporary is not None:
            # The temporary folder lives as long as this result.
            self._cleanup = weakref.finalize(self, shutil.rmtree, _temporary, True)

    def __repr__(self) -> str:
        verdict = "converged" if self.converged else "NOT CONVERGED"
        return f"<mixband.Result {self._dir} ({verdict})>"

    @property
    def run_dir(self) -> Path:
        """The run directory."""
        return self._dir

    def _json(self, name: str) -> Any:
        if name not in self._cache:
            path = self._dir / name
            if not path.is_file():
                raise FileNotFoundError(f"{path}: not written (has the run been summarised?)")
            with path.open(encoding="utf-8") as f:
                self._cache[name] = json.load(f)
        return self._cache[name]

    def _csv(self, name: str) -> pd.DataFrame:
        key = "csv:" + name
        if key not in self._cache:
            self._cache[key] = pd.read_csv(self._dir / name)
        return self._cache[key].copy()

    @property
    def bands(self) -> pd.DataFrame:
        """The density on the grid: posterior mean, median and credible bands (bands.csv)."""
        return self._csv("bands.csv")

    @property
    def cdf(self) -> pd.DataFrame:
        """The CDF on the grid with its bands (cdf.csv)."""
        return self._csv("cdf.csv")

    @property
    def summary(self) -> Dict[str, Any]:
        """summary.json: quantiles, moments, modes, bumps, occupied components."""
        return self._json("summary.json")

    @property
    def diagnostics(self) -> Dict[str, Any]:
        """diagnostics.json: the convergence gate's R-hat and ESS for every quantity."""
        return self._json("diagnostics.json")

    @property
    def checks(self) -> Optional[Dict[str, Any]]:
        """checks.json, the model checked against the data; None when it did not run."""
        try:
            return self._json("checks.json")
        except FileNotFoundError:
            return None

    @property
    def converged(self) -> bool:
        """Whether the chains passed the convergence gate. When False, report nothing."""
        return bool(self.diagnostics.get("passed", False))

    @property
    def report_html(self) -> Optional[Path]:
        """report.html, when it was written."""
        p = self._dir / "report.html"
        return p if p.is_file() else None

    def _chain_ids(self) -> List[int]:
        return [c["id"] for c in self._json("manifest.json")["chains"]]

    def draws(self, chain: Optional[int] = None) -> Any:
        """The kept draws: a dict of chain id to DataFrame (one row a draw), or one chain's
        DataFrame when ``chain`` is given. Component columns carry labels that may switch;
        loglik, occupied and concentration do not."""
        ids = self._chain_ids()
        if chain is not None:
            if chain not in ids:
                raise ValueError(f"chain {chain} is not in this run (chains {ids})")
            return pd.read_csv(self._dir / "draws" / f"chain-{chain}.csv")
        return {i: pd.read_csv(self._dir / "draws" / f"chain-{i}.csv") for i in ids}

    def density_draws(self):
        """The density of every kept draw on the grid, as a NumPy array of shape
        (chains, draws, grid points); every chain cut to the shortest."""
        raw, chains, per_chain, points = _native.density_draws(str(self._dir))
        return np.frombuffer(raw, dtype="<f8").reshape(chains, per_chain, points)

    def _refresh(self) -> None:
        self._cache.clear()

    def resume(self, *, threads: Optional[int] = None, report: bool = True, quiet: bool = False) -> "Result":
        """Continue an interrupted run to its configured length."""
        from . import _progress_printer

        _native.resume(str(self._dir), None, threads=threads, report=report, progress=_progress_printer(quiet))
        self._refresh()
        return self

    def extend(self, draws: int, *, threads: Optional[int] = None, report: bool = True, quiet: bool = False) -> "Result":
        """Sample ``draws`` more kept draws a chain and summarise again (the run must be
        complete). The same as ``mixband extend RUN --draws N``."""
        from . import _progress_printer

        if isinstance(draws, bool) or not isinstance(draws, int):
            raise ValueError(f"draws must be a whole number, got {draws!r}")
        if draws < 1:
            raise ValueError("--draws must be at least 1")
        _native.resume(str(self._dir), draws, threads=threads, report=report, progress=_progress_printer(quiet))
        self._refresh()
        return self

    def to_arviz(self):
        """An ArviZ InferenceData of the label-invariant quantities: loglik, occupied and
        the density at every grid point (dimension ``x``). Needs ArviZ installed
        (``pip install mixband[arviz]``)."""
        try:
            import arviz as az
        except ImportError:
            raise ImportError("to_arviz() needs ArviZ: pip install arviz") from None
        draws = self.draws()
        n = min(len(d) for d in draws.values())
        ids = sorted(draws)
        post = {
            name: np.stack([draws[i][name].to_numpy()[:n] for i in ids])
            for name in ("loglik", "occupied")
        }
        dens = self.density_draws()
        post["density"] = dens[:, :n, :]
        grid = self.bands.iloc[:, 0].to_numpy()
        return az.from_dict(
            posterior=post,
            coords={"chain": ids, "x": grid},
            dims={"density": ["x"]},
        )
