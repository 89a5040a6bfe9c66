//! Temporary files of runs that were killed (SIGKILL, a power cut) before
//! they could clean up.
//!
//! A temporary file beside a target `NAME` is called
//! `.NAME.PID@HOST.XXXXXX.partial`: the process id and host name of the run
//! writing it, then six random characters. Before a run starts a temporary
//! file for `NAME`, it removes those of earlier runs for the same `NAME` in
//! the same directory that were written on this host by a process that no
//! longer exists (`kill(PID, 0)` fails with ESRCH). Files of live runs, of
//! other hosts (a shared file system) and of any other form are left alone.
//! A process id reused by an unrelated process only delays the cleanup.

use std::path::Path;
use std::sync::OnceLock;

/// The end of every temporary file's name.
pub(crate) const SUFFIX: &str = ".partial";

/// Longest part of the target's name carried into the temporary name,
/// bytes (file names are limited to 255 bytes).
const MAX_STEM_BYTES: usize = 120;

/// The target's file name as used in its temporary files (cut to
/// [`MAX_STEM_BYTES`] at a character boundary).
pub(crate) fn stem(target: &Path) -> String {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    let mut end = name.len().min(MAX_STEM_BYTES);
    while !name.is_char_boundary(end) {
        end -= 1;
    }
    name[..end].to_string()
}

/// `.NAME.PID@HOST.`: the start of this process's temporary files for `stem`.
pub(crate) fn prefix(stem: &str) -> String {
    format!(".{stem}.{}@{}.", std::process::id(), host())
}

/// This machine's name, reduced to letters, digits and `-` (at most 32),
/// or `host` when it has none.
fn host() -> &'static str {
    static HOST: OnceLock<String> = OnceLock::new();
    HOST.get_or_init(|| {
        let name: String = raw_host_name()
            .chars()
            .filter(|c| c.is_ascii_alphanumeric() || *c == '-')
            .take(32)
            .collect();
        if name.is_empty() {
            "host".to_string()
        } else {
            name
        }
    })
}

#[cfg(unix)]
fn raw_host_name() -> String {
    let mut buf = [0u8; 256];
    // SAFETY: the buffer is valid for its whole length; gethostname writes
    // at most that many bytes.
    let r = unsafe { libc::gethostname(buf.as_mut_ptr().cast(), buf.len()) };
    if r != 0 {
        return String::new();
    }
    let end = buf.iter().position(|&b| b == 0).unwrap_or(buf.len());
    String::from_utf8_lossy(&buf[..end]).into_owned()
}

#[cfg(not(unix))]
fn raw_host_name() -> String {
    std::env::var("COMPUTERNAME").unwrap_or_default()
}

/// The process id in a temporary file's name, when the name is one of
/// ours for `stem` written on this host.
pub(crate) fn owner_pid(file_name: &str, stem: &str) -> Option<u32> {
    let rest = file_name
        .strip_prefix('.')?
        .strip_prefix(stem)?
        .strip_prefix('.')?
        .strip_suffix(SUFFIX)?;
    let (owner, random) = rest.rsplit_once('.')?;
    if random.len() != 6 || !random.chars().all(|c| c.is_ascii_alphanumeric()) {
        return None;
    }
    let (pid, h) = owner.split_once('@')?;
    if h != host() || pid.is_empty() || !pid.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    pid.parse().ok()
}

/// Whether process `pid` exists on this machine (a process of another user
/// counts as existing).
#[cfg(unix)]
fn alive(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return true;
    };
    if pid <= 0 {
        return true;
    }
    // SAFETY: signal 0 only checks that the process exists.
    let r = unsafe { libc::kill(pid, 0) };
    r == 0 || std::io::Error::last_os_error().raw_os_error() != Some(libc::ESRCH)
}

#[cfg(not(unix))]
fn alive(_pid: u32) -> bool {
    true // no way to tell here: keep the file
}

/// Removes the temporary files for `stem` in `dir` left by runs on this
/// host that no longer exist. Best effort: what cannot be read or removed
/// is left as it is.
pub(crate) fn remove_stale(dir: &Path, stem: &str) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(pid) = name.to_str().and_then(|n| owner_pid(n, stem)) else {
            continue;
        };
        let is_file = entry.file_type().is_ok_and(|t| t.is_file());
        if is_file && pid != std::process::id() && !alive(pid) {
            let _ = std::fs::remove_file(entry.path());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_carry_the_owner_and_read_back() {
        let p = prefix("out.csv");
        let name = format!("{p}a1B2c3{SUFFIX}");
        assert_eq!(owner_pid(&name, "out.csv"), Some(std::process::id()));
        assert_eq!(owner_pid(&name, "out"), None);
        assert_eq!(owner_pid(".out.csv.a1B2c3.partial", "out.csv"), None);
        assert_eq!(
            owner_pid(".out.csv.12@elsewhere.a1B2c3.partial", "out.csv"),
            None
        );
        assert_eq!(
            owner_pid(&format!(".out.csv.12@{}.a1B2c3.partial", host()), "out.csv"),
            Some(12)
        );
    }

    #[test]
    fn long_names_are_cut_at_a_character_boundary() {
        let long = "é".repeat(100);
        let s = stem(Path::new(&long));
        assert!(s.len() <= MAX_STEM_BYTES && long.starts_with(&s));
    }

    #[cfg(unix)]
    #[test]
    fn only_leftovers_of_dead_processes_of_this_host_are_removed() {
        let dir = tempfile::tempdir().unwrap();
        // A child that has exited and been reaped: its pid is free.
        let dead = std::process::Command::new("true").spawn().unwrap();
        let dead_pid = dead.id();
        let mut dead = dead;
        dead.wait().unwrap();
        let h = host();
        let files = [
            (format!(".out.csv.{dead_pid}@{h}.abcdef.partial"), false),
            (
                format!(".out.csv.{}@{h}.abcdef.partial", std::process::id()),
                true,
            ),
            (
                format!(".out.csv.{dead_pid}@otherhost.abcdef.partial"),
                true,
            ),
            (".out.csv.Xy12Zq.partial".to_string(), true),
            (format!(".other.csv.{dead_pid}@{h}.abcdef.partial"), true),
            ("out.csv".to_string(), true),
        ];
        for (name, _) in &files {
            std::fs::write(dir.path().join(name), "x").unwrap();
        }
        remove_stale(dir.path(), "out.csv");
        for (name, kept) in &files {
            assert_eq!(dir.path().join(name).exists(), *kept, "{name}");
        }
    }
}
