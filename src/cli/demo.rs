//! `mixband demo`: the shipped demo config and data (built into the library), sampled and
//! summarised as `sample` does.

use std::path::Path;

use super::SampleOpts;
use crate::error::Result;
use crate::run::{demo_prepared, Mode};

pub(super) fn demo(out: &Path, force: bool, opts: &SampleOpts) -> Result<i32> {
    let (prep, files) = demo_prepared()?;
    super::sample::finish(&prep, out, Mode::Fresh { force }, opts, &files)
}
