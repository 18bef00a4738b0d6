//! The benchmark's rows and their two renderings: an aligned text table and JSON.

use serde::Serialize;

use super::KernelResult;

/// One case's figures.
#[derive(Debug, Clone, Serialize)]
pub struct BenchRow {
    pub n: usize,
    pub k: usize,
    pub chains: usize,
    /// Chains run at once.
    pub chain_workers: usize,
    /// Threads each running chain's allocation used.
    pub threads_per_chain: usize,
    /// Sweeps summed over chains (warm-up included).
    pub sweeps: u64,
    pub wall_s: f64,
    /// Core-nanoseconds per (observation × component) per sweep, whole sweep included.
    pub ns_per_pair: f64,
    /// CPU nanoseconds (all threads, user + system, 10 ms resolution) per pair per sweep:
    /// unlike `ns_per_pair`, not inflated when other processes share the cores.
    pub cpu_ns_per_pair: Option<f64>,
    /// Sweeps per second over all chains.
    pub sweeps_per_s: f64,
    /// Peak resident memory during the case (None where the system does not report it).
    pub peak_mib: Option<f64>,
    /// Lowest bulk-ESS of the density over the grid points.
    pub min_ess_bulk: Option<f64>,
    pub ess_per_s: Option<f64>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub kernels: Vec<KernelResult>,
}

impl Serialize for KernelResult {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeStruct;
        let mut st = s.serialize_struct("KernelResult", 2)?;
        st.serialize_field("kernel", &self.kernel)?;
        st.serialize_field("ns_per_pair", &self.ns_per_pair)?;
        st.end()
    }
}

fn opt(v: Option<f64>, digits: usize) -> String {
    v.map_or_else(|| "-".to_string(), |x| format!("{x:.digits$}"))
}

/// Header line of the table.
pub fn table_header() -> String {
    format!(
        "{:>9} {:>4} {:>6} {:>8} {:>9} {:>10} {:>10} {:>10} {:>9} {:>9} {:>9}",
        "N",
        "K",
        "chains",
        "threads",
        "sweeps",
        "ns/pair",
        "cpu ns/pr",
        "sweeps/s",
        "wall s",
        "peak MiB",
        "ESS/s"
    )
}

/// One row of the table (kernel figures on indented lines below it).
pub fn table_row(r: &BenchRow) -> String {
    let mut s = format!(
        "{:>9} {:>4} {:>6} {:>8} {:>9} {:>10.3} {:>10} {:>10.1} {:>9.2} {:>9} {:>9}",
        r.n,
        r.k,
        r.chains,
        format!("{}x{}", r.chain_workers, r.threads_per_chain),
        r.sweeps,
        r.ns_per_pair,
        opt(r.cpu_ns_per_pair, 3),
        r.sweeps_per_s,
        r.wall_s,
        opt(r.peak_mib, 0),
        opt(r.ess_per_s, 1),
    );
    for k in &r.kernels {
        s.push_str(&format!(
            "\n{:>14} allocation only, 1 thread: {:>8.3} ns/pair  {}",
            "", k.ns_per_pair, k.kernel
        ));
    }
    s
}

/// The whole table.
pub fn to_table(rows: &[BenchRow]) -> String {
    let mut s = table_header();
    s.push('\n');
    for r in rows {
        s.push_str(&table_row(r));
        s.push('\n');
    }
    s
}

/// The rows as pretty JSON, with the instruction set and the machine's core count.
pub fn to_json(rows: &[BenchRow]) -> String {
    let v = serde_json::json!({
        "simd": crate::sampler::allocate::Simd::detect().name(),
        "available_parallelism": std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1),
        "rows": rows,
    });
    serde_json::to_string_pretty(&v).unwrap_or_else(|_| "{}".into())
}
