"""Shared pieces of the Python package's tests: the command-line binary to compare with,
and a small invented sample (two groups of readings, made up for these tests)."""

import os
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

REPO = Path(__file__).resolve().parents[2]


def cli_binary() -> Path:
    """target/release/mixband of this checkout (built by `cargo test --release` or
    `cargo build --release`), or MIXBAND_BIN."""
    env = os.environ.get("MIXBAND_BIN")
    path = Path(env) if env else REPO / "target" / "release" / "mixband"
    if not path.is_file():
        pytest.skip(f"{path} is not built; run `cargo build --release` first")
    return path


def run_cli(*args, cwd=None):
    return subprocess.run(
        [str(cli_binary()), *map(str, args)], cwd=cwd, capture_output=True, text=True
    )


@pytest.fixture
def sample_values():
    # Invented readings: two overlapping groups, recorded to three decimals.
    rng = np.random.default_rng(20261203)
    x = np.concatenate([rng.normal(10.0, 1.0, 150), rng.normal(13.5, 0.8, 100)])
    return np.round(x, 3)


# A short run: these tests compare outputs, they do not need converged chains, and it
# must not grow to pass the gate (max_draws = draws; docs/outputs.md).
SHORT = {"warmup": 150, "draws": 200, "max_draws": 200, "chains": 2}


@pytest.fixture
def project(tmp_path, sample_values):
    """A folder holding the sample as values.csv and a config for it."""
    data = tmp_path / "values.csv"
    data.write_text("value\n" + "".join(f"{v!r}\n" for v in sample_values.tolist()))
    cfg = tmp_path / "run.toml"
    cfg.write_text(
        '[data]\nfile = "values.csv"\ncolumn = "value"\n\n'
        "[sampler]\nseed = 11\nwarmup = 150\ndraws = 200\nmax_draws = 200\nchains = 2\n"
    )
    return tmp_path


def same_files(a: Path, b: Path, names):
    for name in names:
        assert (a / name).read_bytes() == (b / name).read_bytes(), name


def copy_run(src: Path, dst: Path) -> Path:
    shutil.copytree(src, dst)
    return dst
