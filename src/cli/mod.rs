//! The command line: argument definitions and dispatch to the library. Each subcommand
//! lives in its own file and does little beyond calling library functions and printing.

mod bands;
mod bench;
mod check;
mod compare;
mod demo;
mod diagnose;
mod merge;
mod plot;
mod report;
mod sample;
mod template;

use std::path::PathBuf;
use std::sync::atomic::AtomicBool;

use clap::{Parser, Subcommand};

use crate::error::Result;

/// Raised by the SIGINT handler.
pub static STOP: AtomicBool = AtomicBool::new(false);

const EXIT_CODES: &str = "Exit codes: 0 success; 1 internal error; 2 bad input (config, data, arguments); \
3 convergence gate failed (outputs written, marked NOT CONVERGED); 130 interrupted (resume with `mixband resume RUN`).";

#[derive(Debug, Parser)]
#[command(
    name = "mixband",
    version,
    about = "Bayesian density estimation with mixtures of normals: posterior mean density and credible bands by Gibbs sampling",
    after_help = EXIT_CODES
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// Options shared by every command that samples.
#[derive(Debug, Clone, clap::Args)]
pub struct SampleOpts {
    /// Worker threads for chains (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// No progress bars.
    #[arg(long, short)]
    pub quiet: bool,
    /// Skip the figures (RUN/plots/) and RUN/report.html.
    #[arg(long)]
    pub no_report: bool,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Sample the posterior described by a config file and summarise it.
    #[command(after_help = EXIT_CODES)]
    Sample {
        /// The run's TOML config.
        config: PathBuf,
        /// Run directory to create.
        #[arg(long)]
        out: PathBuf,
        /// Replace an earlier mixband run in --out.
        #[arg(long)]
        force: bool,
        /// Run only these chains, comma separated (overrides `[sampler] chain_ids`); join
        /// the parts with `mixband merge`.
        #[arg(long, value_delimiter = ',')]
        chains: Option<Vec<i64>>,
        #[command(flatten)]
        opts: SampleOpts,
    },
    /// Join runs that sampled different chains of one config into one run directory.
    Merge {
        /// Run directories to join (same config and data, disjoint chain ids).
        #[arg(required = true, num_args = 2..)]
        runs: Vec<PathBuf>,
        /// Run directory to create.
        #[arg(long)]
        out: PathBuf,
        /// Skip the figures (RUN/plots/) and RUN/report.html.
        #[arg(long)]
        no_report: bool,
    },
    /// Run the built-in demo (invented wing-length data) end to end.
    #[command(after_help = EXIT_CODES)]
    Demo {
        /// Run directory to create.
        #[arg(long, default_value = "mixband-demo")]
        out: PathBuf,
        /// Replace an earlier mixband run in --out.
        #[arg(long)]
        force: bool,
        #[command(flatten)]
        opts: SampleOpts,
    },
    /// Continue an interrupted run to its configured length.
    Resume {
        run: PathBuf,
        #[command(flatten)]
        opts: SampleOpts,
    },
    /// Add draws to every chain of a finished run.
    Extend {
        run: PathBuf,
        /// Draws to add per chain.
        #[arg(long)]
        draws: usize,
        #[command(flatten)]
        opts: SampleOpts,
    },
    /// Recompute the density bands of a run from its stored draws.
    Bands {
        run: PathBuf,
        /// Grid points.
        #[arg(long)]
        points: Option<usize>,
        /// Grid start.
        #[arg(long, allow_hyphen_values = true)]
        from: Option<f64>,
        /// Grid end.
        #[arg(long, allow_hyphen_values = true)]
        to: Option<f64>,
        /// Credible levels, comma separated (e.g. 0.5,0.9).
        #[arg(long, value_delimiter = ',')]
        levels: Option<Vec<f64>>,
    },
    /// Draw the figures of a run into RUN/plots/ (SVG).
    Plot {
        run: PathBuf,
        /// Add a Gaussian kernel estimate at Silverman's bandwidth for comparison.
        #[arg(long)]
        with_kde: bool,
    },
    /// Write RUN/report.html: one self-contained page with the figures and diagnostics.
    Report {
        run: PathBuf,
        /// Add a Gaussian kernel estimate at Silverman's bandwidth to the density figure.
        #[arg(long)]
        with_kde: bool,
    },
    /// Compare runs on the same data by PSIS-LOO and WAIC (expected log predictive density).
    Compare {
        /// Two or more run directories.
        #[arg(required = true, num_args = 2..)]
        runs: Vec<PathBuf>,
        /// Print JSON instead of a table.
        #[arg(long)]
        json: bool,
    },
    /// Check a run's convergence: R-hat, ESS and MCSE of label-invariant quantities
    /// against the gate; exit 3 when it fails.
    #[command(after_help = EXIT_CODES)]
    Diagnose {
        run: PathBuf,
        /// Print the report as JSON (the format of RUN/diagnostics.json).
        #[arg(long)]
        json: bool,
        /// Also list per-component parameters (not label-invariant; never gated).
        #[arg(long)]
        components: bool,
        /// Largest R-hat that passes (default: the run's [gate] max_rhat).
        #[arg(long)]
        max_rhat: Option<f64>,
        /// Smallest bulk and tail ESS that pass (default: the run's [gate] min_ess).
        #[arg(long)]
        min_ess: Option<f64>,
        /// Fewest chains that pass (default: the run's [gate] min_chains).
        #[arg(long)]
        min_chains: Option<usize>,
    },
    /// Check the model against the data: posterior predictive p-values, LOO-PIT and a
    /// verdict; writes RUN/checks.json (never fails the run).
    Check {
        run: PathBuf,
        /// Print the result as JSON (the format of RUN/checks.json).
        #[arg(long)]
        json: bool,
    },
    /// Print a commented starter config listing every key.
    Template,
    /// Time the sampler on synthetic workloads (ns per pair, sweeps/s, memory, ESS/s).
    Bench(bench::BenchArgs),
}

/// Runs the parsed command; returns the process exit code.
pub fn run(cli: Cli) -> Result<i32> {
    match cli.command {
        Command::Sample {
            config,
            out,
            force,
            chains,
            opts,
        } => sample::sample(&config, &out, force, chains.as_deref(), &opts),
        Command::Merge {
            runs,
            out,
            no_report,
        } => merge::merge(&runs, &out, no_report),
        Command::Demo { out, force, opts } => demo::demo(&out, force, &opts),
        Command::Resume { run, opts } => sample::resume(&run, None, &opts),
        Command::Extend { run, draws, opts } => sample::resume(&run, Some(draws), &opts),
        Command::Bands {
            run,
            points,
            from,
            to,
            levels,
        } => bands::bands(&run, points, from, to, levels),
        Command::Plot { run, with_kde } => plot::plot(&run, with_kde),
        Command::Report { run, with_kde } => report::report(&run, with_kde),
        Command::Compare { runs, json } => compare::compare(&runs, json),
        Command::Check { run, json } => check::check(&run, json),
        Command::Bench(a) => bench::bench(&a),
        Command::Diagnose {
            run,
            json,
            components,
            max_rhat,
            min_ess,
            min_chains,
        } => diagnose::diagnose(
            &run,
            json,
            components,
            &crate::gate::ThresholdOverrides {
                max_rhat,
                min_ess,
                min_chains,
            },
        ),
        Command::Template => {
            print!("{}", crate::config::TEMPLATE);
            Ok(0)
        }
    }
}

/// Entry point used by `main`: parses arguments, installs the SIGINT handler, runs, and
/// prints errors. Returns the exit code.
pub fn main_with_args(args: impl IntoIterator<Item = std::ffi::OsString>) -> i32 {
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    // First Ctrl-C: chains stop after their current sweep and the run is saved; a second
    // one quits at once (the store then reads like a killed run's: resume still works).
    let _ = ctrlc::set_handler(|| {
        if STOP.swap(true, std::sync::atomic::Ordering::SeqCst) {
            std::process::exit(130);
        }
        eprintln!(
            "mixband: stopping after the current sweep and saving; Ctrl-C again quits at once"
        );
    });
    match run(cli) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("mixband: error: {e}");
            e.exit_code()
        }
    }
}
