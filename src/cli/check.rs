//! `mixband check RUN`: checks the model of a finished run against its data (posterior
//! predictive p-values, LOO-PIT, verdict), writes RUN/checks.json and prints the table.
//! The check never fails a run: the exit code is 0 whatever it finds.

use std::path::Path;

use crate::check::CheckReport;
use crate::error::{Error, Result};
use crate::report::html::sig4;
use crate::run::check_run_dir;

pub(super) fn check(run: &Path, json: bool) -> Result<i32> {
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let r = check_run_dir(run, threads)?;
    if json {
        let text = serde_json::to_string_pretty(&r)
            .map_err(|e| Error::internal(format!("cannot encode checks: {e}")))?;
        println!("{text}");
    } else {
        print!("{}", table(&r));
    }
    eprintln!(
        "mixband: wrote {}{}",
        run.join(crate::check::CHECKS_FILE).display(),
        if run.join("summary.json").exists() {
            format!(
                "; summary.json and report.html carry the check after `mixband bands {}` and `mixband report {}`",
                run.display(),
                run.display()
            )
        } else {
            String::new()
        }
    );
    Ok(0)
}

/// The printed table: one row per statistic, then LOO-PIT and the verdict.
pub fn table(r: &CheckReport) -> String {
    let mut out = String::new();
    let rep = &r.replicates;
    out.push_str(&format!(
        "Posterior predictive checks: {} replicated data sets of {} observations (one per evenly spaced kept draw of {}){}\n",
        rep.draws_used,
        rep.size,
        rep.draws_total,
        if rep.subsampled {
            format!("; the data ({} observations) are compared on a random subsample", rep.observations)
        } else {
            String::new()
        }
    ));
    out.push_str(&format!(
        "{:<10} {:>12} {:>12} {:>25} {:>7} {:>6}  {}\n",
        "statistic", "observed", "rep. median", "rep. 95% interval", "p", "mcse", "tail"
    ));
    for s in &r.statistics {
        out.push_str(&format!(
            "{:<10} {:>12} {:>12} {:>25} {:>7.3} {:>6.3}  {}\n",
            s.name,
            sig4(s.observed),
            sig4(s.replicated.median),
            format!(
                "[{}, {}]",
                sig4(s.replicated.lower_95),
                sig4(s.replicated.upper_95)
            ),
            s.p_value,
            s.p_value_mcse,
            match s.tail {
                Some(crate::check::Tail::ObservedHigh) => "data above the replicates",
                Some(crate::check::Tail::ObservedLow) => "data below the replicates",
                None => "",
            }
        ));
    }
    out.push_str(&format!(
        "p = P(T(rep) >= T(obs)); in a tail when p < {} or P(T(rep) <= T(obs)) < {}\n",
        r.tail_low,
        ((1.0 - r.tail_high) * 1e12).round() / 1e12
    ));
    let l = &r.loo_pit;
    out.push_str(&format!(
        "LOO-PIT over {} draws and {} of {} {}: ECDF {} its {}% simultaneous band (uniformity p = {:.3}, largest |ECDF - z| = {:.3}); {:.1}% of observations with Pareto k > 0.7\n",
        l.draws_used,
        l.rows_used,
        l.rows_total,
        l.unit,
        if l.within_band { "inside" } else { "OUTSIDE" },
        l.band.level * 100.0,
        l.uniformity_p_value,
        l.max_abs_deviation,
        100.0 * l.share_k_above_0_7
    ));
    out.push_str(&format!("Verdict: {}\n", r.verdict.summary));
    for a in &r.verdict.advice {
        out.push_str(&format!("  - {a}\n"));
    }
    out
}
