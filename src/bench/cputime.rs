//! CPU time, which unlike wall time is not inflated when other processes share the cores:
//! this thread's from /proc/thread-self/schedstat (nanoseconds), the whole process's from
//! /proc/self/stat (clock ticks, assumed 100 per second as on every current Linux). Where
//! neither file exists both report nothing.

/// Nanoseconds this thread has spent on a CPU.
pub fn thread_ns() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    s.split_whitespace().next()?.parse().ok()
}

/// Seconds of user + system time of the whole process (all threads).
pub fn process_s() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/stat").ok()?;
    // Fields after the command name, which is in parentheses and may hold spaces.
    let rest = &s[s.rfind(')')? + 2..];
    let f: Vec<&str> = rest.split_whitespace().collect();
    let utime: f64 = f.get(11)?.parse().ok()?;
    let stime: f64 = f.get(12)?.parse().ok()?;
    Some((utime + stime) / 100.0)
}
