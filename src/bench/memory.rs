//! Peak resident memory of this process, from Linux's /proc/self/status (VmHWM), with a
//! reset between workloads through /proc/self/clear_refs. Elsewhere both report nothing.

/// Resets the peak to the current resident size; false where the system does not allow it.
pub fn reset_peak() -> bool {
    std::fs::write("/proc/self/clear_refs", "5").is_ok()
}

/// Peak resident memory in bytes since the start or the last successful [`reset_peak`].
pub fn peak_bytes() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = text.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}
