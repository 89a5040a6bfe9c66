//! Writing output files so that nothing is lost or half-written, and
//! nothing but the file asked for is touched.
//!
//! What happens depends on what the path names (after following links):
//! - a regular file, or nothing yet: the bytes go to a temporary file in
//!   the same directory, renamed over the file when complete. A symbolic
//!   link stays a link: the file it points to is the one replaced.
//! - a seekable device (`/dev/null`, `/dev/full`): written straight into.
//! - a FIFO, a socket, a terminal, or a descriptor path (`/dev/stdout`,
//!   `/dev/stderr`, `/dev/fd/N`, `/proc/self/fd/N`): written into, never
//!   replaced; the bytes are held in an unnamed temporary file (which the
//!   system removes even if the run is killed) and sent when the output is
//!   complete, so a reader never sees a partial or restarted file.
//!
//! Temporary files beside a target are named `.NAME.PID@HOST.XXXXXX.partial`;
//! see [`super::leftovers`] for how a later run removes those of killed runs.

use std::fs::File;
use std::io::{self, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

use super::{ExportError, STDOUT_NAME, io_error, leftovers};

/// Temporary files beside targets that are still being written, so that a
/// process ending on a signal can remove them ([`discard_unfinished`]).
static UNFINISHED: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn unfinished() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    UNFINISHED.lock().unwrap_or_else(|p| p.into_inner())
}

/// Keeps a temporary file's path in [`UNFINISHED`] while it lives.
struct Registered(PathBuf);

impl Registered {
    fn new(path: &Path) -> Self {
        unfinished().push(path.to_path_buf());
        Registered(path.to_path_buf())
    }
}

impl Drop for Registered {
    fn drop(&mut self) {
        let mut list = unfinished();
        if let Some(i) = list.iter().position(|p| *p == self.0) {
            list.swap_remove(i);
        }
    }
}

/// Removes the temporary files of every output still being written, for a
/// process that is about to end without finishing them (after a signal).
/// Their targets keep their previous contents. Returns how many were removed.
pub fn discard_unfinished() -> usize {
    discard_where(|_| true)
}

/// Removes the unfinished temporary files whose path passes `which`.
fn discard_where(which: impl Fn(&Path) -> bool) -> usize {
    let list = unfinished();
    list.iter()
        .filter(|p| which(p) && std::fs::remove_file(p).is_ok())
        .count()
}

/// Most symbolic links followed from an output path (as the kernel's own
/// limit, `MAXSYMLINKS` = 40 on Linux).
const MAX_LINKS: usize = 40;

/// What an output path names, once links are followed.
#[derive(Debug)]
pub(crate) enum Target {
    /// A regular file, or a path where nothing exists yet (the final path,
    /// links resolved).
    Regular(PathBuf),
    /// A directory: not writable as a file.
    Directory,
    /// A FIFO, socket or device at this path.
    Special(PathBuf),
    /// An open descriptor of this process (`/dev/stdout` and friends).
    Descriptor(i32),
}

/// The descriptor a path stands for, if it is one of the names the system
/// gives a process's open files.
fn descriptor_of(path: &Path) -> Option<i32> {
    let s = path.to_str()?;
    match s {
        "/dev/stdin" => return Some(0),
        "/dev/stdout" => return Some(1),
        "/dev/stderr" => return Some(2),
        _ => {}
    }
    let n = s
        .strip_prefix("/dev/fd/")
        .or_else(|| s.strip_prefix("/proc/self/fd/"))?;
    n.parse().ok().filter(|n: &i32| *n >= 0)
}

/// Follows symbolic links from `path` to the path that is finally opened.
/// Stops at a descriptor name (whose link target is the kernel's, not a path).
pub(crate) fn resolve(path: &Path) -> io::Result<Target> {
    let mut p = path.to_path_buf();
    for _ in 0..=MAX_LINKS {
        if let Some(fd) = descriptor_of(&p) {
            return Ok(Target::Descriptor(fd));
        }
        match std::fs::symlink_metadata(&p) {
            Ok(m) if m.file_type().is_symlink() => {
                let link = std::fs::read_link(&p)?;
                p = match p.parent() {
                    Some(dir) if link.is_relative() => dir.join(link),
                    _ => link,
                };
            }
            Ok(m) if m.is_file() => return Ok(Target::Regular(p)),
            Ok(m) if m.is_dir() => return Ok(Target::Directory),
            Ok(_) => return Ok(Target::Special(p)),
            Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(Target::Regular(p)),
            Err(e) => return Err(e),
        }
    }
    Err(io::Error::other(format!(
        "more than {MAX_LINKS} symbolic links to follow"
    )))
}

/// Where a spooled output is finally sent.
#[derive(Debug)]
enum Sink {
    Path(PathBuf),
    Descriptor(i32),
}

/// How an [`AtomicFile`] reaches its target.
enum Mode {
    /// A temporary file beside `final_path`, renamed over it on commit.
    Replace {
        tmp: tempfile::TempPath,
        final_path: PathBuf,
        _registered: Registered,
    },
    /// Straight into a seekable device.
    Device,
    /// An unnamed temporary file, copied into the sink on commit.
    Spool(Sink),
}

/// A file being written. [`AtomicFile::commit`] completes it; dropping it
/// uncommitted leaves any existing target as it was (a regular file) or
/// sends nothing (a FIFO or descriptor). See the module doc for the rules.
pub struct AtomicFile {
    target: PathBuf,
    writer: io::BufWriter<File>,
    mode: Mode,
}

impl AtomicFile {
    /// Starts writing `path`.
    pub fn create(path: &Path) -> Result<Self, ExportError> {
        let err = |e| io_error(path, e);
        let (file, mode) = match resolve(path).map_err(err)? {
            Target::Regular(final_path) => replace_beside(path, &final_path)?,
            Target::Directory => return Err(err(io::Error::from(io::ErrorKind::IsADirectory))),
            Target::Descriptor(fd) => (spool().map_err(err)?, Mode::Spool(Sink::Descriptor(fd))),
            Target::Special(p) => special(&p).map_err(err)?,
        };
        Ok(AtomicFile {
            target: path.to_path_buf(),
            writer: io::BufWriter::with_capacity(1 << 16, file),
            mode,
        })
    }

    /// The file the user asked for.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Discards everything written so far (for a run that starts over).
    pub fn rewind(&mut self) -> Result<(), ExportError> {
        let target = self.target.clone();
        let err = |e| io_error(&target, e);
        self.writer.flush().map_err(err)?;
        let f = self.writer.get_mut();
        if !matches!(self.mode, Mode::Device) {
            f.set_len(0).map_err(err)?;
        }
        f.seek(SeekFrom::Start(0)).map_err(err)?;
        Ok(())
    }

    /// Completes the file: renames the temporary file over the target, or
    /// sends the spooled bytes into it.
    pub fn commit(self) -> Result<(), ExportError> {
        let AtomicFile {
            target,
            writer,
            mode,
        } = self;
        let err = |e| io_error(&target, e);
        let mut file = writer.into_inner().map_err(|e| err(e.into_error()))?;
        match mode {
            Mode::Replace {
                tmp, final_path, ..
            } => {
                file.sync_all().map_err(err)?;
                drop(file);
                tmp.persist(&final_path).map_err(|e| err(e.error))?;
            }
            Mode::Device => file.flush().map_err(err)?,
            Mode::Spool(sink) => {
                file.seek(SeekFrom::Start(0)).map_err(err)?;
                let mut dest = open_sink(&sink).map_err(err)?;
                io::copy(&mut file, &mut dest)
                    .and_then(|_| dest.flush())
                    .map_err(err)?;
            }
        }
        Ok(())
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.writer.write(buf)
    }
    fn flush(&mut self) -> io::Result<()> {
        self.writer.flush()
    }
}

/// A temporary file beside `final_path` (in its directory, so the rename
/// stays on one file system), with the permissions of the file it replaces.
fn replace_beside(asked: &Path, final_path: &Path) -> Result<(File, Mode), ExportError> {
    let err = |e| io_error(asked, e);
    let dir = match final_path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let name = leftovers::stem(final_path);
    leftovers::remove_stale(dir, &name);
    let tmp = tempfile::Builder::new()
        .prefix(&leftovers::prefix(&name))
        .suffix(leftovers::SUFFIX)
        .rand_bytes(6)
        .tempfile_in(dir)
        .map_err(err)?;
    let (file, tmp) = tmp.into_parts();
    let registered = Registered::new(&tmp);
    // Temporary files are created private (0600); give the result the
    // permissions of the file it replaces, or the usual 0644.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let perms = std::fs::metadata(final_path)
            .map(|m| m.permissions())
            .unwrap_or_else(|_| std::fs::Permissions::from_mode(0o644));
        file.set_permissions(perms).map_err(err)?;
    }
    Ok((
        file,
        Mode::Replace {
            tmp,
            final_path: final_path.to_path_buf(),
            _registered: registered,
        },
    ))
}

/// An unnamed temporary file (removed by the system when closed).
fn spool() -> io::Result<File> {
    tempfile::tempfile()
}

/// A FIFO, socket or device: written straight into when it can seek back
/// (a restarted run then overwrites from the start), spooled otherwise. A
/// FIFO is not opened here: opening waits for a reader, which may only
/// come once the run is done.
fn special(path: &Path) -> io::Result<(File, Mode)> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let kind = std::fs::metadata(path)?.file_type();
        if kind.is_char_device() || kind.is_block_device() {
            let mut f = std::fs::OpenOptions::new().write(true).open(path)?;
            if f.stream_position().is_ok() {
                return Ok((f, Mode::Device));
            }
        }
    }
    Ok((spool()?, Mode::Spool(Sink::Path(path.to_path_buf()))))
}

/// Opens where a spooled output goes: the path (no truncation: a FIFO or
/// device has no length), or a duplicate of the descriptor.
fn open_sink(sink: &Sink) -> io::Result<File> {
    match sink {
        Sink::Path(p) => std::fs::OpenOptions::new().write(true).open(p),
        Sink::Descriptor(fd) => duplicate(*fd),
    }
}

#[cfg(unix)]
fn duplicate(fd: i32) -> io::Result<File> {
    use std::os::fd::FromRawFd;
    // SAFETY: dup() either fails or returns a new descriptor that nothing
    // else owns; the File takes ownership and closes it.
    let new = unsafe { libc::dup(fd) };
    if new < 0 {
        return Err(io::Error::last_os_error());
    }
    Ok(unsafe { File::from_raw_fd(new) })
}

#[cfg(not(unix))]
fn duplicate(_fd: i32) -> io::Result<File> {
    Err(io::Error::other("descriptor paths exist only on Unix"))
}

/// Writes `path` as an [`AtomicFile`]: `fill` writes into it, and it is
/// committed only when `fill` succeeds. On any error an existing `path` is
/// left untouched and no temporary file remains.
pub fn write_atomic<E>(
    path: &Path,
    fill: impl FnOnce(&mut dyn Write) -> Result<(), E>,
) -> Result<(), E>
where
    E: From<ExportError>,
{
    let mut file = AtomicFile::create(path)?;
    fill(&mut file)?;
    file.commit()?;
    Ok(())
}

/// Writes to `path` with [`write_atomic`], or to stdout when `path` is
/// `None` or `-`.
pub fn write_to<E>(
    path: Option<&Path>,
    fill: impl FnOnce(&mut dyn Write) -> Result<(), E>,
) -> Result<(), E>
where
    E: From<ExportError>,
{
    match path {
        Some(p) if p != Path::new("-") => write_atomic(p, fill),
        _ if super::capturing() => {
            let mut buf = Vec::new();
            fill(&mut buf)?;
            super::capture(&buf);
            Ok(())
        }
        _ => {
            let stdout = io::stdout();
            let mut lock = io::BufWriter::new(stdout.lock());
            fill(&mut lock)?;
            lock.flush()
                .map_err(|source| io_error(Path::new(STDOUT_NAME), source))?;
            Ok(())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn a_failed_write_leaves_the_previous_file_and_no_partial_file() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "good\n").unwrap();
        let r: Result<(), ExportError> = write_atomic(&target, |w| {
            w.write_all(b"half").map_err(|e| io_error(&target, e))?;
            Err(io_error(&target, io::Error::other("simulated failure")))
        });
        assert!(r.is_err());
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "good\n");
        assert_eq!(names(dir.path()), ["out.csv"]);
    }

    #[test]
    fn a_successful_write_replaces_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("out.csv");
        std::fs::write(&target, "old\n").unwrap();
        write_atomic::<ExportError>(&target, |w| {
            w.write_all(b"new\n").map_err(|e| io_error(&target, e))
        })
        .unwrap();
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new\n");
    }

    #[test]
    fn a_rewound_file_holds_only_what_came_after() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("h.csv");
        let mut f = AtomicFile::create(&target).unwrap();
        f.write_all(b"first attempt, longer\n").unwrap();
        f.rewind().unwrap();
        f.write_all(b"second\n").unwrap();
        f.commit().unwrap();
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "second\n");
    }

    #[cfg(unix)]
    #[test]
    fn a_link_stays_a_link_and_its_target_is_replaced() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::create_dir(dir.path().join("real")).unwrap();
        let real = dir.path().join("real/out.csv");
        std::fs::write(&real, "old\n").unwrap();
        let link = dir.path().join("link.csv");
        std::os::unix::fs::symlink("real/out.csv", &link).unwrap();
        write_atomic::<ExportError>(&link, |w| {
            w.write_all(b"new\n").map_err(|e| io_error(&link, e))
        })
        .unwrap();
        assert!(
            std::fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(std::fs::read_to_string(&real).unwrap(), "new\n");
        assert_eq!(names(&dir.path().join("real")), ["out.csv"]);
        // A dangling link gets its target created.
        std::fs::remove_file(&real).unwrap();
        write_atomic::<ExportError>(&link, |w| {
            w.write_all(b"again\n").map_err(|e| io_error(&link, e))
        })
        .unwrap();
        assert_eq!(std::fs::read_to_string(&real).unwrap(), "again\n");
    }

    #[test]
    fn unfinished_outputs_can_be_discarded_and_finished_ones_are_forgotten() {
        let dir = tempfile::tempdir().unwrap();
        let done = AtomicFile::create(&dir.path().join("done.csv")).unwrap();
        done.commit().unwrap();
        let mut open = AtomicFile::create(&dir.path().join("open.csv")).unwrap();
        open.write_all(b"partial").unwrap();
        open.flush().unwrap();
        let ours = |name: &str| {
            unfinished()
                .iter()
                .any(|p| p.starts_with(dir.path()) && p.to_string_lossy().contains(name))
        };
        assert!(ours(".open.csv.") && !ours(".done.csv."));
        let tmp_count = || {
            names(dir.path())
                .iter()
                .filter(|n| n.ends_with(".partial"))
                .count()
        };
        assert_eq!(tmp_count(), 1);
        // Only this test's files: other tests write at the same time.
        assert_eq!(discard_where(|p| p.starts_with(dir.path())), 1);
        assert_eq!(tmp_count(), 0);
        drop(open);
        assert!(!ours(".open.csv."));
        assert_eq!(names(dir.path()), ["done.csv"]);
    }

    #[test]
    fn descriptor_names_are_recognised() {
        assert_eq!(descriptor_of(Path::new("/dev/stdout")), Some(1));
        assert_eq!(descriptor_of(Path::new("/dev/fd/7")), Some(7));
        assert_eq!(descriptor_of(Path::new("/proc/self/fd/3")), Some(3));
        assert_eq!(descriptor_of(Path::new("/dev/fd/x")), None);
        assert_eq!(descriptor_of(Path::new("out.csv")), None);
    }
}
