//! How `RUN/config.toml` names the data file: relative to the run directory where the two
//! share a folder below the filesystem root (so a project moved or copied whole, run
//! directory and data together, still resumes and extends), else absolute. `resume` and
//! every reader resolve the path against the config's folder, the run directory, and the
//! data's SHA-256 in the manifest still decides whether it is the same data.

use std::path::{Component, Path, PathBuf};

/// The path that leads from the directory `base` to `target`, both absolute and
/// canonical, when they share a folder below the root; `None` otherwise (different roots
/// or drives, or only `/` in common: unrelated trees are not expected to move together).
pub fn relative_path(target: &Path, base: &Path) -> Option<PathBuf> {
    if !target.is_absolute() || !base.is_absolute() {
        return None;
    }
    let t: Vec<Component> = target.components().collect();
    let b: Vec<Component> = base.components().collect();
    let common = t.iter().zip(&b).take_while(|(x, y)| x == y).count();
    let shared_folder = t[..common]
        .iter()
        .any(|c| matches!(c, Component::Normal(_)));
    if !shared_folder {
        return None;
    }
    let mut rel = PathBuf::new();
    for _ in common..b.len() {
        rel.push("..");
    }
    for c in &t[common..] {
        rel.push(c.as_os_str());
    }
    Some(rel)
}

/// The data path `data` (absolute, or relative to `run_dir` already) as `config.toml`
/// inside the existing directory `run_dir` is to record it.
pub fn for_run_dir(data: &str, run_dir: &Path) -> String {
    let p = Path::new(data);
    if !p.is_absolute() {
        return data.to_string();
    }
    let (Ok(target), Ok(base)) = (std::fs::canonicalize(p), std::fs::canonicalize(run_dir)) else {
        return data.to_string();
    };
    relative_path(&target, &base)
        .and_then(|r| r.to_str().map(str::to_string))
        .unwrap_or_else(|| data.to_string())
}

/// The data path `data` of the config in run directory `from`, for a config written into
/// run directory `to` (a merge). A file inside `from` (a copy the run carries, which the
/// merge copies too) keeps its name; any other path is re-expressed from `to`.
pub fn rebase(data: &str, from: &Path, to: &Path) -> String {
    let p = Path::new(data);
    if p.is_absolute() {
        return for_run_dir(data, to);
    }
    let (Ok(target), Ok(from_abs)) = (
        std::fs::canonicalize(from.join(p)),
        std::fs::canonicalize(from),
    ) else {
        return data.to_string();
    };
    if target.starts_with(&from_abs) {
        return data.to_string();
    }
    match target.to_str() {
        Some(abs) => for_run_dir(abs, to),
        None => data.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[cfg(unix)]
    #[test]
    fn relative_paths_climb_to_the_shared_folder() {
        // Exact results of the path arithmetic.
        let r = |t: &str, b: &str| relative_path(Path::new(t), Path::new(b));
        assert_eq!(
            r("/p/data.csv", "/p/run"),
            Some(PathBuf::from("../data.csv"))
        );
        assert_eq!(
            r("/p/in/d.csv", "/p/runs/a"),
            Some(PathBuf::from("../../in/d.csv"))
        );
        assert_eq!(r("/p/run/d.csv", "/p/run"), Some(PathBuf::from("d.csv")));
        // Only the root in common: kept absolute.
        assert_eq!(r("/data/d.csv", "/scratch/run"), None);
        assert_eq!(r("d.csv", "/p/run"), None);
    }

    #[test]
    fn a_moved_project_keeps_finding_its_data() {
        let root = std::env::temp_dir().join(format!("mixband-data-path-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&root);
        std::fs::create_dir_all(root.join("proj/run")).unwrap();
        std::fs::write(root.join("proj/d.csv"), "x\n1\n").unwrap();
        let abs = std::fs::canonicalize(root.join("proj/d.csv")).unwrap();
        let rel = for_run_dir(abs.to_str().unwrap(), &root.join("proj/run"));
        assert_eq!(Path::new(&rel), Path::new("..").join("d.csv"));
        // Merged elsewhere: re-expressed from the new directory.
        std::fs::create_dir_all(root.join("proj/out/joined")).unwrap();
        let moved = rebase(&rel, &root.join("proj/run"), &root.join("proj/out/joined"));
        assert_eq!(Path::new(&moved), Path::new("../../d.csv"));
        // A copy inside the run directory keeps its name.
        std::fs::write(root.join("proj/run/copy.csv"), "x\n1\n").unwrap();
        assert_eq!(
            rebase(
                "copy.csv",
                &root.join("proj/run"),
                &root.join("proj/out/joined")
            ),
            "copy.csv"
        );
        let _ = std::fs::remove_dir_all(&root);
    }
}
