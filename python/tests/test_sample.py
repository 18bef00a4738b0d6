"""The Python package against the command line: same config and seed, same numbers bit
for bit; bad input raises the message the command line prints; a run opened and
extended from Python equals one extended from the command line."""

import json
import signal
import threading

import numpy as np
import pandas as pd
import pytest

import mixband
from conftest import SHORT, copy_run, run_cli, same_files

OUTPUTS = ["bands.csv", "cdf.csv", "summary.json", "diagnostics.json", "checks.json"]


def test_values_in_memory_equal_the_cli_on_the_same_file(project, sample_values, tmp_path):
    cli = run_cli("sample", "run.toml", "--out", "cli-run", "--quiet", "--no-report", cwd=project)
    assert cli.returncode in (0, 3), cli.stderr
    for values in (sample_values, sample_values.tolist(), pd.Series(sample_values)):
        out = tmp_path / f"py-{type(values).__name__}"
        r = mixband.sample(values, out=out, seed=11, sampler=SHORT, report=False, quiet=True)
        same_files(project / "cli-run", out, OUTPUTS)
        assert r.converged == json.loads((out / "diagnostics.json").read_text())["passed"]
    # The DataFrames are bands.csv and cdf.csv as pandas reads them.
    pd.testing.assert_frame_equal(r.bands, pd.read_csv(project / "cli-run" / "bands.csv"))
    pd.testing.assert_frame_equal(r.cdf, pd.read_csv(project / "cli-run" / "cdf.csv"))
    assert r.summary == json.loads((project / "cli-run" / "summary.json").read_text())
    assert r.diagnostics["passed"] == r.converged


def test_config_file_runs_like_the_cli(project, tmp_path):
    cli = run_cli("sample", "run.toml", "--out", "cli-run", "--quiet", "--no-report", cwd=project)
    assert cli.returncode in (0, 3), cli.stderr
    r = mixband.sample(config=project / "run.toml", out=tmp_path / "py", report=False, quiet=True)
    same_files(project / "cli-run", r.run_dir, OUTPUTS)


def test_bad_config_raises_the_cli_message(project, monkeypatch):
    cfg = project / "bad.toml"
    cfg.write_text('[data]\nfile = "values.csv"\ncolumn = "value"\n[sampler]\ndraws = -5\n')
    cli = run_cli("sample", "bad.toml", "--out", "x", "--quiet", cwd=project)
    assert cli.returncode not in (0, 3)
    monkeypatch.chdir(project)
    with pytest.raises(ValueError) as e:
        mixband.sample(config="bad.toml", out="y", quiet=True)
    assert cli.stderr == f"mixband: error: {e.value}\n"
    assert "bad.toml: [sampler] draws" in str(e.value) and "(line 5)" in str(e.value)
    assert not (project / "y").exists()


@pytest.mark.parametrize(
    "values, kwargs, words",
    [
        ([1.0, float("nan"), 2.0], {}, "values[1]"),
        ([1.0, 2.0], {"counts": [1]}, "1 counts for 2 values"),
        ([1.0, 2.0], {"counts": [1, -1]}, "counts[1]"),
        (["a", 1.0], {}, "values"),
        ([1.0, 2.0], {"model": {"kernel": "no-such-kernel"}}, "kernel"),
        ([1.0, 2.0], {"modle": {}}, "unknown config section 'modle'"),
        ([1.0, 2.0], {"data": {"file": "x.csv"}}, "[data] file"),
    ],
)
def test_bad_input_is_a_value_error(values, kwargs, words, tmp_path):
    with pytest.raises(ValueError) as e:
        mixband.sample(values, out=tmp_path / "r", quiet=True, **kwargs)
    assert words in str(e.value)


def test_existing_run_is_not_overwritten(sample_values, tmp_path):
    out = tmp_path / "r"
    mixband.sample(sample_values, out=out, seed=1, sampler=SHORT, report=False, quiet=True)
    before = (out / "bands.csv").read_bytes()
    with pytest.raises(ValueError, match="--force"):
        mixband.sample(sample_values, out=out, seed=2, sampler=SHORT, quiet=True)
    assert (out / "bands.csv").read_bytes() == before


def test_open_and_extend_equals_the_cli_extend(sample_values, tmp_path):
    first = tmp_path / "first"
    mixband.sample(sample_values, out=first, seed=3, sampler=SHORT, report=False, quiet=True)
    by_cli = copy_run(first, tmp_path / "by-cli")
    r = mixband.open(first)
    r.extend(100, report=False, quiet=True)
    got = run_cli("extend", by_cli, "--draws", "100", "--quiet", "--no-report")
    assert got.returncode in (0, 3), got.stderr
    same_files(by_cli, first, OUTPUTS)
    assert all(len(d) == 300 for d in r.draws().values())
    assert r.bands.equals(pd.read_csv(by_cli / "bands.csv"))


def test_draws_and_density_draws(sample_values, tmp_path):
    r = mixband.sample(sample_values, out=tmp_path / "r", seed=4, sampler=SHORT, report=False, quiet=True)
    d = r.draws()
    assert sorted(d) == [1, 2]
    assert {"loglik", "occupied", "weight_1", "mean_1", "sd_1"} <= set(d[1].columns)
    dens = r.density_draws()
    assert dens.shape == (2, 200, len(r.bands))
    # The posterior mean density of bands.csv is the mean over every draw's density.
    np.testing.assert_allclose(dens.mean(axis=(0, 1)), r.bands["mean"], rtol=1e-12, atol=1e-300)
    with pytest.raises(ValueError, match="chain 9"):
        r.draws(chain=9)


def test_temporary_run_directory_lives_with_the_result(sample_values):
    r = mixband.sample(sample_values, seed=5, sampler=SHORT, report=False, quiet=True)
    path = r.run_dir
    assert (path / "bands.csv").is_file()
    del r
    import gc

    gc.collect()
    assert not path.exists()


def test_interrupt_leaves_a_resumable_run(sample_values, tmp_path):
    """Ctrl-C (SIGINT) during sampling raises KeyboardInterrupt; the run resumes to the
    same draws as an uninterrupted run (chain streams depend only on seed and chain)."""
    # Several seconds of sampling, so that the signal 0.5 s in arrives while it runs (3000
    # draws once did; with cheaper sweeps they finished first).
    long = dict(SHORT, warmup=500, draws=20000, max_draws=20000)
    out = tmp_path / "stopped"
    timer = threading.Timer(0.5, signal.raise_signal, args=(signal.SIGINT,))
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            mixband.sample(sample_values, out=out, seed=6, sampler=long, report=False, quiet=True)
    finally:
        timer.cancel()
    manifest = json.loads((out / "manifest.json").read_text())
    assert manifest["status"] == "incomplete"
    # Resumed to its configured length (as `mixband resume` does), it equals a straight run.
    r = mixband.open(out).resume(report=False, quiet=True)
    assert json.loads((out / "manifest.json").read_text())["status"] == "complete"
    straight = mixband.sample(
        sample_values, out=tmp_path / "straight", seed=6, sampler=long, report=False, quiet=True
    )
    same_files(straight.run_dir, r.run_dir, ["bands.csv", "cdf.csv", "summary.json"])
