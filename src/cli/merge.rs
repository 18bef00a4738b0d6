//! `mixband merge`: joins runs that sampled disjoint chains of one config
//! ([`crate::run::merge_job`]) and prints the joined run's verdict.

use std::path::{Path, PathBuf};

use crate::error::Result;
use crate::run::merge_job;

pub(super) fn merge(runs: &[PathBuf], out: &Path, no_report: bool) -> Result<i32> {
    let result = merge_job(runs, out, !no_report)?;
    if let Some(r) = &result.check {
        println!("mixband: model check: {}", r.verdict.summary);
    }
    let ids: Vec<String> = result
        .manifest
        .chains
        .iter()
        .map(|c| c.id.to_string())
        .collect();
    println!(
        "mixband: joined chains {} into {}",
        ids.join(", "),
        out.display()
    );
    if let Some(page) = &result.report_html {
        println!("mixband: report in {}", page.display());
    }
    Ok(super::diagnose::print_verdict(&result.diagnostics))
}
