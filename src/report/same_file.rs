//! Refusing, before a command runs, output paths that would destroy one of
//! its inputs or another of its outputs.
//!
//! Files are compared by identity, not by spelling: two paths are the same
//! file when, after following links, they have the same device and inode
//! (so `r.csv`, `./r.csv`, a link to it and a hard link all match). An
//! output that does not exist yet is identified by its directory's device
//! and inode and its name. FIFOs, devices and descriptor paths are never
//! in conflict (`--history /dev/null --rainflow /dev/null` is fine).

use std::ffi::OsString;
use std::path::{Path, PathBuf};

use super::ExportError;
use super::files::{Target, resolve};

/// A file's identity.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Identity {
    /// An existing regular file: device and inode.
    File(u64, u64),
    /// A file still to be created: its directory's device and inode, and its name.
    New(u64, u64, OsString),
}

/// The files one command reads and writes, named by their options.
#[derive(Debug, Default)]
pub struct FilePlan<'a> {
    inputs: Vec<(&'a str, &'a Path)>,
    outputs: Vec<(&'a str, &'a Path)>,
}

impl<'a> FilePlan<'a> {
    /// An empty plan.
    pub fn new() -> Self {
        FilePlan::default()
    }

    /// A file the command reads, given with `option` (e.g. `--profile`).
    pub fn input(mut self, option: &'a str, path: &'a Path) -> Self {
        self.inputs.push((option, path));
        self
    }

    /// Several files read with the same option.
    pub fn inputs(mut self, option: &'a str, paths: &'a [PathBuf]) -> Self {
        self.inputs
            .extend(paths.iter().map(|p| (option, p.as_path())));
        self
    }

    /// A file the command writes, if the option was given (`-` is stdout).
    pub fn output(mut self, option: &'a str, path: Option<&'a Path>) -> Self {
        if let Some(p) = path.filter(|p| *p != Path::new("-")) {
            self.outputs.push((option, p));
        }
        self
    }

    /// Refuses an output that is an input, that another output also names,
    /// that is a directory, or whose directory does not exist. The message
    /// names both options and both paths as given.
    pub fn check(&self) -> Result<(), ExportError> {
        let inputs: Vec<_> = self
            .inputs
            .iter()
            .filter_map(|&(o, p)| existing(p).map(|id| (o, p, id)))
            .collect();
        let mut outputs = Vec::new();
        for &(o, p) in &self.outputs {
            if let Some(id) = output_identity(o, p)? {
                outputs.push((o, p, id));
            }
        }
        for (i, (o, p, id)) in outputs.iter().enumerate() {
            if let Some((io, ip, _)) = inputs.iter().find(|(_, _, x)| x == id) {
                return Err(refused(format!(
                    "{o} {} is the same file as {io} {}: the run would overwrite its own input; write the output elsewhere",
                    p.display(),
                    ip.display()
                )));
            }
            if let Some((o2, p2, _)) = outputs[..i].iter().find(|(_, _, x)| x == id) {
                return Err(refused(format!(
                    "{o2} {} and {o} {} are the same file: one output would replace the other; give each its own file",
                    p2.display(),
                    p.display()
                )));
            }
        }
        Ok(())
    }
}

fn refused(message: String) -> ExportError {
    ExportError::Refused(message)
}

/// Device and inode of what `path` names (links followed), when it is an
/// existing regular file.
fn existing(path: &Path) -> Option<Identity> {
    let m = std::fs::metadata(path).ok()?;
    m.is_file().then(|| file_id(path, &m))?
}

/// The identity of an output path, `None` for special files (or what
/// cannot be examined: writing it will then report why).
fn output_identity(option: &str, path: &Path) -> Result<Option<Identity>, ExportError> {
    let shown = || format!("{option} {}", path.display());
    let final_path = match resolve(path) {
        Ok(Target::Regular(p)) => p,
        Ok(Target::Directory) => {
            return Err(refused(format!(
                "{}: is a directory; name a file to write",
                shown()
            )));
        }
        Ok(Target::Special(_) | Target::Descriptor(_)) | Err(_) => return Ok(None),
    };
    if let Ok(m) = std::fs::metadata(&final_path) {
        return Ok(file_id(&final_path, &m));
    }
    let dir = match final_path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let name = final_path
        .file_name()
        .map(OsString::from)
        .ok_or_else(|| refused(format!("{}: not a file name", shown())))?;
    match std::fs::metadata(dir) {
        Ok(m) if m.is_dir() => Ok(file_id(dir, &m).map(|id| match id {
            Identity::File(d, i) | Identity::New(d, i, _) => Identity::New(d, i, name),
        })),
        _ => Err(refused(format!(
            "{}: the directory {} does not exist",
            shown(),
            dir.display()
        ))),
    }
}

#[cfg(unix)]
fn file_id(_path: &Path, m: &std::fs::Metadata) -> Option<Identity> {
    use std::os::unix::fs::MetadataExt;
    Some(Identity::File(m.dev(), m.ino()))
}

/// Without inodes: the canonical path, hashed into the same shape.
#[cfg(not(unix))]
fn file_id(path: &Path, _m: &std::fs::Metadata) -> Option<Identity> {
    use std::hash::{Hash, Hasher};
    let c = std::fs::canonicalize(path).ok()?;
    let mut h = std::collections::hash_map::DefaultHasher::new();
    c.hash(&mut h);
    Some(Identity::File(0, h.finish()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_output_spelled_differently_from_its_input_is_still_refused() {
        let dir = tempfile::tempdir().unwrap();
        let road = dir.path().join("r.csv");
        std::fs::write(&road, "x").unwrap();
        let other = dir.path().join(".").join("r.csv");
        let e = FilePlan::new()
            .input("--profile", &road)
            .output("--history", Some(&other))
            .check()
            .unwrap_err()
            .to_string();
        assert!(e.contains("--history") && e.contains("--profile"), "{e}");
        FilePlan::new()
            .input("--profile", &road)
            .output("--history", Some(&dir.path().join("h.csv")))
            .check()
            .unwrap();
    }

    #[test]
    fn two_outputs_to_one_new_file_are_refused_and_devices_are_not() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("x.csv");
        let b = dir.path().join("sub/../x.csv");
        std::fs::create_dir(dir.path().join("sub")).unwrap();
        let e = FilePlan::new()
            .output("--history", Some(&a))
            .output("--rainflow", Some(&b))
            .check()
            .unwrap_err();
        assert!(e.to_string().contains("--history") && e.to_string().contains("--rainflow"));
        #[cfg(unix)]
        FilePlan::new()
            .output("--history", Some(Path::new("/dev/null")))
            .output("--rainflow", Some(Path::new("/dev/null")))
            .check()
            .unwrap();
    }

    #[test]
    fn a_directory_or_a_missing_directory_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let e = FilePlan::new()
            .output("-o", Some(dir.path()))
            .check()
            .unwrap_err();
        assert!(e.to_string().contains("is a directory"), "{e}");
        let missing = dir.path().join("no/such/x.csv");
        let e = FilePlan::new()
            .output("-o", Some(&missing))
            .check()
            .unwrap_err();
        assert!(e.to_string().contains("does not exist"), "{e}");
    }
}
