//! Writes an invented sample recorded to 0.01 units, for the memory figures of
//! docs/performance.md ("Rows recorded at a resolution"): N values (default 10^7) from an
//! equal mixture of N(20, 1.5²) and N(26, 1²), each printed to two decimals, one a row,
//! under the header `x`, with a config beside it that sets `[data] resolution = 0.01` and a
//! short run. The scenario is ours (no real measurements behind it); the seed is fixed, so
//! the file is the same on every machine.
//!
//!     cargo run --release --example rounded_sample -- DIR [N]
//!
//! writes DIR/rounded.csv and DIR/rounded.toml.

use std::io::Write;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let dir = std::path::PathBuf::from(args.next().ok_or("usage: rounded_sample DIR [N]")?);
    let n: u64 = match args.next() {
        Some(s) => s.parse()?,
        None => 10_000_000,
    };
    std::fs::create_dir_all(&dir)?;
    let mut rng = ChaCha8Rng::seed_from_u64(20261203);
    let groups = [Normal::new(20.0, 1.5)?, Normal::new(26.0, 1.0)?];
    let file = std::fs::File::create(dir.join("rounded.csv"))?;
    let mut out = std::io::BufWriter::new(file);
    writeln!(out, "x")?;
    for _ in 0..n {
        let g = usize::from(rng.random::<bool>());
        let x: f64 = groups[g].sample(&mut rng);
        writeln!(out, "{x:.2}")?;
    }
    out.flush()?;
    std::fs::write(
        dir.join("rounded.toml"),
        "[data]\nfile = \"rounded.csv\"\ncolumn = \"x\"\nresolution = 0.01\n\n\
         [sampler]\nchains = 2\nwarmup = 10\ndraws = 20\nseed = 7\nallocation = \"conditional\"\n",
    )?;
    eprintln!(
        "wrote {} ({n} rows) and rounded.toml",
        dir.join("rounded.csv").display()
    );
    Ok(())
}
