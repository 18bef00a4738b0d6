//! `mixband compare RUN_A RUN_B …`: rank runs on the same data by PSIS-LOO and WAIC and
//! print a table (or JSON with `--json`); warnings for unreliable estimates go to stderr.

use std::path::PathBuf;

use serde::Serialize;

use crate::compare::{compare as score, run_loglik, Scored};
use crate::error::{Error, Result};

#[derive(Serialize)]
struct CompareFile<'a> {
    tool: &'static str,
    version: &'static str,
    data_sha256: &'a str,
    column: &'a str,
    n: u64,
    r_eff: f64,
    note: &'static str,
    runs: &'a [Scored],
}

const NOTE: &str = "elpd on the log scale, higher is better; diffs are best minus this run with the standard error \
of the pointwise differences; the log-likelihood is on the original data scale (Jacobian included under the log \
transform); draws are treated as independent (r_eff = 1)";

pub(super) fn compare(runs: &[PathBuf], json: bool) -> Result<i32> {
    let lls = runs
        .iter()
        .map(|r| run_loglik(r))
        .collect::<Result<Vec<_>>>()?;
    let scored = score(&lls)?;
    for s in &scored {
        if !s.loo.bad_k.is_empty() {
            let list: Vec<String> = s.loo.bad_k.iter().take(10).map(|i| i.to_string()).collect();
            eprintln!(
                "mixband: warning: {}: Pareto k above {:.2} for {} observation(s) (observations {}{}); the PSIS-LOO \
                 estimate is unreliable for them",
                s.run,
                s.loo.k_threshold,
                s.loo.bad_k.len(),
                list.join(", "),
                if s.loo.bad_k.len() > 10 { ", …" } else { "" }
            );
        }
        if !s.waic.high_variance.is_empty() {
            eprintln!(
                "mixband: warning: {}: the log-likelihood varies by more than 0.4 over draws for {} observation(s); \
                 WAIC may be unreliable, prefer PSIS-LOO",
                s.run,
                s.waic.high_variance.len()
            );
        }
    }
    let d = &lls[0].manifest.data;
    let mut out = String::new();
    if json {
        let file = CompareFile {
            tool: "mixband",
            version: env!("CARGO_PKG_VERSION"),
            data_sha256: &d.sha256,
            column: &d.column,
            n: lls[0].observations(),
            r_eff: 1.0,
            note: NOTE,
            runs: &scored,
        };
        let text = serde_json::to_string_pretty(&file)
            .map_err(|e| Error::internal(format!("cannot encode comparison: {e}")))?;
        out.push_str(&text);
        out.push('\n');
    } else {
        out.push_str(&format!(
            "data: column \"{}\" of {} (n = {}, SHA-256 {})\n",
            d.column,
            d.file,
            lls[0].observations(),
            &d.sha256[..12.min(d.sha256.len())]
        ));
        out.push_str(&format!(
            "{:<4} {:>11} {:>8} {:>8} {:>9} {:>8} {:>7} {:>11} {:>8} {:>9} {:>8}  run\n",
            "rank",
            "elpd_loo",
            "se",
            "p_loo",
            "diff",
            "se_diff",
            "k>thr",
            "elpd_waic",
            "p_waic",
            "diff",
            "se_diff"
        ));
        for s in &scored {
            out.push_str(&format!(
                "{:<4} {:>11.2} {:>8.2} {:>8.2} {:>9.2} {:>8.2} {:>7} {:>11.2} {:>8.2} {:>9.2} {:>8.2}  {}\n",
                s.rank,
                s.loo.elpd,
                s.loo.se,
                s.loo.p_loo,
                s.elpd_diff_loo,
                s.se_diff_loo,
                s.loo.bad_k.len(),
                s.waic.elpd,
                s.waic.p_waic,
                s.elpd_diff_waic,
                s.se_diff_waic,
                s.run
            ));
        }
        out.push_str(&format!("{NOTE}.\n"));
    }
    // A closed pipe (`| head`) is not an error worth a panic.
    let _ = std::io::Write::write_all(&mut std::io::stdout().lock(), out.as_bytes());
    Ok(0)
}
