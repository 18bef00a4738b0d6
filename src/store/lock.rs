//! The writer's lock of a run directory: one process at a time may sample into, continue,
//! or join into a run directory. The lock is the file `RUN/.mixband-lock`, created
//! atomically (create-new, so of two processes racing for it exactly one succeeds) and
//! holding, as JSON, who holds it: process id, host, command line, what it is doing and
//! when it started. [`RunLock`] removes the file when dropped, so a writer that finishes,
//! fails or is stopped by the first Ctrl-C releases it.
//!
//! A lock left behind by a process that died without releasing it (killed, or a second
//! Ctrl-C, which quits at once) is *stale*: on the same host, a holder whose process id is
//! no longer alive (Linux: no `/proc/<pid>`, a zombie, or a different process start time,
//! so a reused pid is not mistaken for the holder) is taken over with a note on stderr.
//! A holder on another host, or on a system without `/proc`, cannot be checked and is
//! treated as alive; the refusal says which file to delete if the holder is known to be
//! gone.

use std::io::Write;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// Name of the lock file inside a run directory.
pub const LOCK_FILE: &str = ".mixband-lock";

/// Who holds (or held) a run directory's lock: the content of the lock file.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct LockHolder {
    pub pid: u32,
    pub host: String,
    /// The holder's command line.
    pub command: String,
    /// What the holder is doing to the run directory ("sample", "continue", "merge").
    pub action: String,
    /// Seconds since the Unix epoch when the lock was taken.
    pub started_unix: u64,
    /// The process's start time in clock ticks after boot (field 22 of
    /// `/proc/<pid>/stat`), to tell the holder from a later process given the same pid;
    /// absent where there is no `/proc`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub process_start: Option<u64>,
}

impl LockHolder {
    /// The current process, about to do `action`.
    fn this_process(action: &str) -> LockHolder {
        let pid = std::process::id();
        LockHolder {
            pid,
            host: host_name(),
            command: std::env::args_os()
                .map(|a| a.to_string_lossy().into_owned())
                .collect::<Vec<_>>()
                .join(" "),
            action: action.to_string(),
            started_unix: std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map(|d| d.as_secs())
                .unwrap_or(0),
            process_start: process_start(pid),
        }
    }

    /// One line naming the holder, for messages.
    pub fn describe(&self) -> String {
        format!(
            "pid {} on host {}, `{}` ({}), started {}",
            self.pid,
            self.host,
            self.command,
            self.action,
            utc_text(self.started_unix)
        )
    }

    /// Whether the holder may still be running: false only when it is known to be gone.
    pub fn may_be_alive(&self) -> bool {
        if self.host != host_name() {
            return true;
        }
        if self.pid == std::process::id() {
            return self.process_start == process_start(self.pid);
        }
        match proc_stat(self.pid) {
            ProcStat::NoProc => true,
            ProcStat::Gone => false,
            ProcStat::Running { start } => match (self.process_start, start) {
                (Some(a), Some(b)) => a == b,
                _ => true,
            },
        }
    }
}

/// The held lock of one run directory; released (the file removed) on drop.
#[derive(Debug)]
pub struct RunLock {
    path: PathBuf,
    holder: LockHolder,
}

impl RunLock {
    /// Takes the lock of the run directory `root` (which must exist) for `action`.
    /// Refuses, naming the holder, when another live process holds it; takes over a
    /// stale lock with a note on stderr.
    pub fn acquire(root: &Path, action: &str) -> Result<RunLock> {
        let path = root.join(LOCK_FILE);
        let holder = LockHolder::this_process(action);
        let body = serde_json::to_vec_pretty(&holder)
            .map_err(|e| Error::internal(format!("cannot encode the lock: {e}")))?;
        // Further rounds follow taking over a stale lock or a lock released meanwhile.
        for _ in 0..3 {
            match create_with(&path, &body) {
                Ok(()) => return Ok(RunLock { path, holder }),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    // Released in the meantime: try again.
                    let Some(other) = read_lock(&path)? else {
                        continue;
                    };
                    refuse_if_alive(root, &path, &other)?;
                    take_over(&path, &other)?;
                    eprintln!(
                        "mixband: note: took over the stale lock of {} (held by {}, no longer running)",
                        root.display(),
                        other.describe()
                    );
                }
                Err(e) => return Err(Error::io(&path, e)),
            }
        }
        Err(Error::input(format!(
            "{}: another process took the lock of {} while a stale one was being cleared; try again",
            path.display(),
            root.display()
        )))
    }

    /// Refuses, naming the holder, when a live process holds the lock of `root`; takes
    /// nothing. For checks made before anything is written.
    pub fn check_free(root: &Path) -> Result<()> {
        let path = root.join(LOCK_FILE);
        if !path.exists() {
            return Ok(());
        }
        match read_lock(&path)? {
            Some(other) => refuse_if_alive(root, &path, &other),
            None => Ok(()),
        }
    }

    pub fn holder(&self) -> &LockHolder {
        &self.holder
    }

    pub fn path(&self) -> &Path {
        &self.path
    }
}

impl Drop for RunLock {
    fn drop(&mut self) {
        // Remove the file only while it still names this holder.
        let ours = std::fs::read(&self.path)
            .ok()
            .and_then(|b| serde_json::from_slice::<LockHolder>(&b).ok())
            .is_some_and(|h| h == self.holder);
        if ours {
            let _ = std::fs::remove_file(&self.path);
        }
    }
}

/// Creates `path` holding `body`, failing with `AlreadyExists` when it exists. The body is
/// written to a temporary file first and hard-linked into place, so no other process ever
/// reads a half-written lock; where hard links are not supported the file is created
/// exclusively and then written.
fn create_with(path: &Path, body: &[u8]) -> std::io::Result<()> {
    let tmp = path.with_file_name(format!("{LOCK_FILE}.{}.tmp", std::process::id()));
    let write = |p: &Path, new: bool| -> std::io::Result<()> {
        let mut o = std::fs::OpenOptions::new();
        o.write(true);
        if new {
            o.create_new(true);
        } else {
            o.create(true).truncate(true);
        }
        let mut f = o.open(p)?;
        f.write_all(body)?;
        f.write_all(b"\n")?;
        f.sync_all()
    };
    write(&tmp, false)?;
    let linked = std::fs::hard_link(&tmp, path);
    let _ = std::fs::remove_file(&tmp);
    match linked {
        Err(e) if e.kind() != std::io::ErrorKind::AlreadyExists => {
            // No hard links here (some network or FUSE filesystems): create exclusively.
            write(path, true).inspect_err(|e| {
                if e.kind() != std::io::ErrorKind::AlreadyExists {
                    let _ = std::fs::remove_file(path);
                }
            })
        }
        other => other,
    }
}

/// The holder named in the lock file at `path`, or `None` when there is no such file. An
/// unreadable lock (e.g. a process killed between creating and writing it) is reported so
/// the user can delete it.
fn read_lock(path: &Path) -> Result<Option<LockHolder>> {
    let parse = || -> Result<Option<std::result::Result<LockHolder, serde_json::Error>>> {
        match std::fs::read(path) {
            Ok(bytes) => Ok(Some(serde_json::from_slice(&bytes))),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
            Err(e) => Err(Error::io(path, e)),
        }
    };
    let parsed = match parse()? {
        None => return Ok(None),
        Some(Ok(h)) => return Ok(Some(h)),
        // Where the lock was created before being written, its writer may be mid-way.
        Some(Err(_)) => {
            std::thread::sleep(std::time::Duration::from_millis(200));
            match parse()? {
                None => return Ok(None),
                Some(p) => p,
            }
        }
    };
    parsed.map(Some).map_err(|e| {
        Error::input(format!(
            "{} is not a readable mixband lock ({e}); if no mixband process is writing this run \
             directory, delete the file and try again",
            path.display()
        ))
    })
}

fn refuse_if_alive(root: &Path, path: &Path, other: &LockHolder) -> Result<()> {
    if other.may_be_alive() {
        return Err(Error::input(format!(
            "{} is being written by another mixband process ({}); wait for it to finish or \
             choose another directory. If that process is no longer running, delete {} and \
             try again",
            root.display(),
            other.describe(),
            path.display()
        )));
    }
    Ok(())
}

/// Removes the stale lock at `path` held by `stale`. The file is first renamed to a name of
/// this process's own, so of two processes clearing one stale lock only one removes it,
/// and a live lock created meanwhile under `path` is put back, never deleted.
fn take_over(path: &Path, stale: &LockHolder) -> Result<()> {
    let aside = path.with_file_name(format!("{LOCK_FILE}.stale.{}", std::process::id()));
    match std::fs::rename(path, &aside) {
        Ok(()) => {}
        // Another process cleared it first; the caller tries to create it again.
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => return Err(Error::io(path, e)),
    }
    let moved = std::fs::read(&aside)
        .ok()
        .and_then(|b| serde_json::from_slice::<LockHolder>(&b).ok());
    if moved.as_ref() != Some(stale) {
        // Someone else's fresh lock was moved: put it back unless yet another one is there.
        let _ = std::fs::hard_link(&aside, path);
    }
    std::fs::remove_file(&aside).map_err(|e| Error::io(&aside, e))
}

/// This machine's name (Linux: /proc/sys/kernel/hostname; else $HOSTNAME; else "unknown").
pub fn host_name() -> String {
    std::fs::read_to_string("/proc/sys/kernel/hostname")
        .ok()
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .or_else(|| std::env::var("HOSTNAME").ok().filter(|s| !s.is_empty()))
        .unwrap_or_else(|| "unknown".into())
}

/// What `/proc` says about a process.
enum ProcStat {
    /// No `/proc` on this system: liveness cannot be checked.
    NoProc,
    /// No such process, or a zombie (exited, not yet reaped).
    Gone,
    /// Running, with its start time in clock ticks after boot when readable.
    Running { start: Option<u64> },
}

fn proc_stat(pid: u32) -> ProcStat {
    if !Path::new("/proc/self/stat").exists() {
        return ProcStat::NoProc;
    }
    let Ok(text) = std::fs::read_to_string(format!("/proc/{pid}/stat")) else {
        return ProcStat::Gone;
    };
    // "pid (comm) state ... starttime(22) ..."; comm may hold spaces and parentheses,
    // so the fields are counted after the last ')'. See proc(5).
    let after = text.rsplit_once(')').map(|(_, r)| r).unwrap_or("");
    let fields: Vec<&str> = after.split_whitespace().collect();
    match fields.first() {
        Some(&"Z") | Some(&"X") | Some(&"x") => ProcStat::Gone,
        _ => ProcStat::Running {
            start: fields.get(19).and_then(|s| s.parse().ok()),
        },
    }
}

/// The start time of process `pid` in clock ticks after boot, where `/proc` gives it.
fn process_start(pid: u32) -> Option<u64> {
    match proc_stat(pid) {
        ProcStat::Running { start } => start,
        _ => None,
    }
}

/// `secs` after the Unix epoch as "YYYY-MM-DD HH:MM:SS UTC" (days to a civil date by the
/// proleptic Gregorian calendar; common practice, no source).
pub fn utc_text(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    // Shift the epoch to 0000-03-01 so each 400-year era ends with a leap day.
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!(
        "{year:04}-{month:02}-{day:02} {:02}:{:02}:{:02} UTC",
        rem / 3600,
        rem % 3600 / 60,
        rem % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("mixband-lock-{tag}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    #[test]
    fn utc_text_matches_known_dates() {
        // Exact: 0 is the epoch; 951_782_400 is 2000-02-29 00:00:00 UTC and 1_709_164_800
        // is 2024-02-29 (leap days), 4_102_444_799 is 2099-12-31 23:59:59 (date(1) -u -d @N).
        assert_eq!(utc_text(0), "1970-01-01 00:00:00 UTC");
        assert_eq!(utc_text(951_782_400), "2000-02-29 00:00:00 UTC");
        assert_eq!(utc_text(1_709_164_800), "2024-02-29 00:00:00 UTC");
        assert_eq!(utc_text(4_102_444_799), "2099-12-31 23:59:59 UTC");
    }

    #[test]
    fn a_second_acquire_is_refused_and_drop_releases() {
        let d = scratch("twice");
        let lock = RunLock::acquire(&d, "sample").unwrap();
        assert!(d.join(LOCK_FILE).exists());
        let err = RunLock::acquire(&d, "sample").unwrap_err().to_string();
        assert!(
            err.contains(&format!("pid {}", std::process::id())),
            "{err}"
        );
        assert!(err.contains(&host_name()), "{err}");
        assert!(RunLock::check_free(&d).is_err());
        drop(lock);
        assert!(!d.join(LOCK_FILE).exists());
        RunLock::check_free(&d).unwrap();
        let _again = RunLock::acquire(&d, "sample").unwrap();
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn a_reused_pid_is_not_the_holder() {
        // This process's own pid with another start time is a different process.
        let mut h = LockHolder::this_process("sample");
        assert!(h.may_be_alive());
        h.process_start = h.process_start.map(|s| s + 1);
        assert!(!h.may_be_alive());
        // A holder on another host cannot be checked: alive.
        let mut other = LockHolder::this_process("sample");
        other.host.push_str("-elsewhere");
        other.process_start = Some(0);
        assert!(other.may_be_alive());
    }

    #[test]
    fn an_unreadable_lock_is_reported_not_removed() {
        let d = scratch("garbled");
        std::fs::write(d.join(LOCK_FILE), b"{not json").unwrap();
        let err = RunLock::acquire(&d, "sample").unwrap_err().to_string();
        assert!(err.contains("not a readable mixband lock"), "{err}");
        assert!(d.join(LOCK_FILE).exists());
    }
}
