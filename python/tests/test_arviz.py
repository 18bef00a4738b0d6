"""to_arviz() against diagnostics.json: ArviZ's R-hat and ESS of the same draws equal
the run's own (which tests/diagnostics_arviz.rs checks against ArviZ 0.23.4 fixtures)."""

import numpy as np
import pytest

import mixband
from conftest import SHORT

az = pytest.importorskip("arviz")


def test_to_arviz_gives_the_runs_rhat_and_ess(sample_values, tmp_path):
    r = mixband.sample(sample_values, out=tmp_path / "r", seed=8, sampler=SHORT, report=False, quiet=True)
    idata = r.to_arviz()
    post = idata.posterior
    assert post["density"].shape == (2, 200, len(r.bands))
    q = {x["name"]: x for x in r.diagnostics["quantities"]}
    for name in ("loglik", "occupied"):
        assert float(az.rhat(idata)[name]) == pytest.approx(q[name]["rhat"], rel=1e-9)
        assert float(az.ess(idata, method="bulk")[name]) == pytest.approx(q[name]["ess_bulk"], rel=1e-9)
        assert float(az.ess(idata, method="tail")[name]) == pytest.approx(q[name]["ess_tail"], rel=1e-9)
    grid = r.diagnostics["density_grid"]
    rh = az.rhat(idata)["density"].values
    ess = az.ess(idata, method="bulk")["density"].values
    varying = [i for i, p in enumerate(grid) if p.get("rhat") is not None]
    assert len(varying) > len(grid) // 2
    np.testing.assert_allclose(rh[varying], [grid[i]["rhat"] for i in varying], rtol=1e-9)
    np.testing.assert_allclose(ess[varying], [grid[i]["ess_bulk"] for i in varying], rtol=1e-9)
