//! Writing outputs so that no data is ever destroyed.
//!
//! - Files: data goes to a temporary file in the target's folder and is renamed into place
//!   only when complete. A failure, an input error or a signal (see
//!   [`remove_temp_files_on_signal`]) leaves no temporary file behind and does not touch an
//!   older report. Targets that are not regular files (`/dev/null`, a pipe) are written
//!   directly.
//! - No output may replace an input or another output ([`refuse_overwrite`]): paths are
//!   compared after resolving symbolic links, and files by device and inode (hard links).
//! - Standard output (`-`, and the text reports through [`print()`]): a reader that has gone
//!   away (a closed pipe) ends the writing quietly; any other write error is an [`Error`].

use crate::error::{Error, Result};
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};

/// Temporary files being written, removed by the signal handler. Touched only when an output
/// is opened, committed or dropped, never per sample.
static LIVE_TEMPS: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn live_temps() -> MutexGuard<'static, Vec<PathBuf>> {
    LIVE_TEMPS.lock().unwrap_or_else(|p| p.into_inner())
}

fn forget_temp(list: &mut Vec<PathBuf>, temp: &Path) {
    list.retain(|t| t != temp);
}

/// Exit code after SIGINT (128 + 2, common practice for a process ended by a signal).
pub const EXIT_SIGINT: i32 = 130;
/// Exit code after SIGTERM (128 + 15, common practice).
pub const EXIT_SIGTERM: i32 = 143;

/// Install handlers for SIGINT and SIGTERM that remove every temporary output file still
/// being written and end the process with [`EXIT_SIGINT`] or [`EXIT_SIGTERM`]. Older files
/// at the targets are untouched. The handler runs on a thread of its own (not in signal
/// context), so it may take the registry's lock; it keeps the lock until the process ends,
/// so no output can be renamed into place after the signal.
pub fn remove_temp_files_on_signal() -> Result<()> {
    use signal_hook::consts::{SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM]).map_err(|e| {
        Error::usage(
            "signal handling",
            format!("could not install the SIGINT/SIGTERM handler: {e}"),
        )
    })?;
    std::thread::Builder::new()
        .name("armpath-signals".into())
        .spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let list = live_temps();
                for temp in list.iter() {
                    let _ = std::fs::remove_file(temp);
                }
                let code = if signal == SIGINT {
                    EXIT_SIGINT
                } else {
                    EXIT_SIGTERM
                };
                let _ = writeln!(
                    std::io::stderr(),
                    "armpath: stopped by signal {signal}; unfinished output files removed, older ones kept"
                );
                std::process::exit(code);
            }
        })
        .map_err(|e| {
            Error::usage(
                "signal handling",
                format!("could not start the signal thread: {e}"),
            )
        })?;
    Ok(())
}

/// Standard output that treats a reader gone away (`EPIPE`) as the end of the output: later
/// writes are dropped and succeed. Other errors are returned.
struct Stdout {
    closed: bool,
}

impl Write for Stdout {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        if self.closed {
            return Ok(buf.len());
        }
        match std::io::stdout().lock().write_all(buf) {
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(buf.len())
            }
            Err(e) => Err(e),
            Ok(()) => Ok(buf.len()),
        }
    }
    fn flush(&mut self) -> std::io::Result<()> {
        if self.closed {
            return Ok(());
        }
        match std::io::stdout().lock().flush() {
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {
                self.closed = true;
                Ok(())
            }
            other => other,
        }
    }
}

/// How standard output is named in messages.
const STDOUT_NAME: &str = "standard output";

fn stdout_error(source: std::io::Error) -> Error {
    Error::Io {
        path: PathBuf::from(STDOUT_NAME),
        action: "writing",
        source,
    }
}

/// Write a text report to standard output. A closed pipe (`| head -1`) ends it quietly;
/// another failure (a full disk) is an error naming standard output.
pub fn print(text: &str) -> Result<()> {
    let mut out = Stdout { closed: false };
    out.write_all(text.as_bytes()).map_err(stdout_error)?;
    out.flush().map_err(stdout_error)
}

/// True when the output option is `-` (standard output).
pub fn is_stdout(path: Option<&Path>) -> bool {
    path.is_some_and(|p| p.as_os_str() == "-")
}

/// Refuse an output path that cannot be written before any work is done: a folder, or a file
/// in a folder that does not exist. `-` (standard output) and no path always pass.
pub fn check_target(option: &str, path: Option<&Path>) -> Result<()> {
    let Some(p) = path.filter(|p| p.as_os_str() != "-") else {
        return Ok(());
    };
    if p.is_dir() {
        return Err(Error::usage(
            option,
            format!(
                "{} is a folder: give a file name for the output",
                p.display()
            ),
        ));
    }
    if let Some(dir) = p.parent().filter(|d| !d.as_os_str().is_empty()) {
        if !dir.is_dir() {
            return Err(Error::usage(
                option,
                format!(
                    "the folder {} does not exist: create it or write the output elsewhere",
                    dir.display()
                ),
            ));
        }
    }
    Ok(())
}

/// Write `value` as pretty JSON (with a final newline) to `path` (`-` = standard output);
/// `option` names the flag in messages.
pub fn write_json<T: serde::Serialize>(option: &str, path: &Path, value: &T) -> Result<()> {
    let mut text = serde_json::to_string_pretty(value)
        .map_err(|e| Error::usage(option, format!("could not serialise the result: {e}")))?;
    text.push('\n');
    write_all(path, text.as_bytes())
}

/// What a file is, for comparing inputs and outputs: its device and inode when it exists (hard
/// links and symbolic links to one file share them), and its path with symbolic links and
/// `..` resolved (for an output not yet written: the resolved folder plus the file name).
struct FileKey {
    inode: Option<(u64, u64)>,
    path: Option<PathBuf>,
    /// An existing file that is not a regular file (`/dev/null`, a pipe): many outputs may
    /// go there.
    special: bool,
}

impl FileKey {
    fn of(p: &Path) -> FileKey {
        let meta = std::fs::metadata(p).ok();
        let path = std::fs::canonicalize(p).ok().or_else(|| {
            let name = p.file_name()?;
            let dir = match p.parent() {
                Some(d) if !d.as_os_str().is_empty() => d,
                _ => Path::new("."),
            };
            Some(std::fs::canonicalize(dir).ok()?.join(name))
        });
        FileKey {
            inode: meta.as_ref().and_then(inode),
            special: meta.as_ref().is_some_and(|m| !m.is_file()),
            path,
        }
    }

    fn same(&self, other: &FileKey) -> bool {
        let by_inode = matches!((self.inode, other.inode), (Some(a), Some(b)) if a == b);
        let by_path = matches!((&self.path, &other.path), (Some(a), Some(b)) if a == b);
        by_inode || by_path
    }
}

#[cfg(unix)]
fn inode(m: &std::fs::Metadata) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    Some((m.dev(), m.ino()))
}

#[cfg(not(unix))]
fn inode(_: &std::fs::Metadata) -> Option<(u64, u64)> {
    None
}

/// The files a job was read from, named for messages: the path file (or the CSV waypoint
/// file given directly), a CSV waypoint file the path file names, and the URDF.
pub fn job_inputs(job: &crate::job::Job) -> Vec<(&'static str, &Path)> {
    let csv = |p: &Path| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    let mut inputs = vec![(
        if csv(&job.source) {
            "the CSV waypoint file"
        } else {
            "the path file"
        },
        job.source.as_path(),
    )];
    if job.waypoints_file != job.source {
        inputs.push(("the CSV waypoint file", job.waypoints_file.as_path()));
    }
    inputs.push(("the URDF", job.robot.as_path()));
    if let Some(cell) = &job.cell {
        inputs.push(("the cell file", cell.path.as_path()));
    }
    let cell_bodies = job.cell.iter().flat_map(|c| c.bodies.iter());
    for b in job.tool.geometry.iter().chain(cell_bodies) {
        if let Some((mesh, _)) = &b.mesh {
            inputs.push(("a mesh file", mesh.as_path()));
        }
    }
    inputs
}

/// Refuse outputs that would replace an input or each other, before any work is done.
/// `inputs` are (what it is, path), e.g. `("the URDF", robot)`; `outputs` are (option, path)
/// with `None` for an output not asked for. Two outputs onto standard output are refused
/// too (they would interleave); special files such as `/dev/null` may take many outputs.
pub fn refuse_overwrite(inputs: &[(&str, &Path)], outputs: &[(&str, Option<&Path>)]) -> Result<()> {
    let outputs: Vec<(&str, &Path)> = outputs
        .iter()
        .filter_map(|(o, p)| p.map(|p| (*o, p)))
        .collect();
    let input_keys: Vec<FileKey> = inputs.iter().map(|(_, p)| FileKey::of(p)).collect();
    let mut seen: Vec<(&str, &Path, Option<FileKey>)> = Vec::new();
    for &(option, path) in &outputs {
        let key = (path.as_os_str() != "-").then(|| FileKey::of(path));
        if let Some(k) = &key {
            if let Some(i) = input_keys.iter().position(|ik| k.same(ik)) {
                let (what, input) = inputs[i];
                return Err(Error::usage(
                    option,
                    format!(
                        "{} is {what} {} (the same file): the output would destroy an input; \
                         write it to another file",
                        path.display(),
                        input.display()
                    ),
                ));
            }
        }
        for (other, other_path, other_key) in &seen {
            let clash = match (&key, other_key) {
                (None, None) => true,
                (Some(a), Some(b)) => !a.special && a.same(b),
                _ => false,
            };
            if clash {
                let target = if key.is_none() {
                    STDOUT_NAME.to_string()
                } else if path == *other_path {
                    path.display().to_string()
                } else {
                    format!(
                        "{} and {} (the same file)",
                        other_path.display(),
                        path.display()
                    )
                };
                return Err(Error::usage(
                    format!("{other}/{option}"),
                    format!("both write to {target}: give each output its own file"),
                ));
            }
        }
        seen.push((option, path, key));
    }
    Ok(())
}

enum Target {
    Stdout(Stdout),
    Direct(BufWriter<File>),
    Temp {
        file: BufWriter<File>,
        temp: PathBuf,
    },
}

/// An output being written; call [`OutputFile::commit`] when complete. Dropping it without
/// committing removes the temporary file.
pub struct OutputFile {
    target: Option<Target>,
    path: PathBuf,
}

impl OutputFile {
    /// Open `path` for writing (`-` = standard output).
    pub fn create(path: &Path) -> Result<Self> {
        let io_err = |source| Error::Io {
            path: path.to_path_buf(),
            action: "opening for writing",
            source,
        };
        let target = if path.as_os_str() == "-" {
            Target::Stdout(Stdout { closed: false })
        } else {
            match std::fs::metadata(path) {
                Ok(m) if !m.is_file() => {
                    if m.is_dir() {
                        return Err(Error::usage(
                            path.display().to_string(),
                            "is a folder: give a file name for the output",
                        ));
                    }
                    Target::Direct(BufWriter::new(
                        std::fs::OpenOptions::new()
                            .write(true)
                            .open(path)
                            .map_err(io_err)?,
                    ))
                }
                _ => {
                    let dir = match path.parent() {
                        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                        _ => PathBuf::from("."),
                    };
                    let name = path
                        .file_name()
                        .map(|n| n.to_string_lossy().into_owned())
                        .unwrap_or_else(|| "output".into());
                    let temp = dir.join(format!(".{name}.armpath-{}.tmp", std::process::id()));
                    let mut live = live_temps();
                    let file = File::create(&temp).map_err(io_err)?;
                    live.push(temp.clone());
                    drop(live);
                    Target::Temp {
                        file: BufWriter::new(file),
                        temp,
                    }
                }
            }
        };
        Ok(OutputFile {
            target: Some(target),
            path: path.to_path_buf(),
        })
    }

    /// The final path (as given).
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Whether [`OutputFile::rewind`] can take back what was written: only a temporary
    /// file can be; standard output and a device or pipe given as the output cannot.
    pub fn rewindable(&self) -> bool {
        matches!(self.target, Some(Target::Temp { .. }))
    }

    /// Throw away everything written so far (buffered or in the temporary file) and write
    /// from the start again. An error when the output is not [`OutputFile::rewindable`] or
    /// the file cannot be truncated.
    pub fn rewind(&mut self) -> std::io::Result<()> {
        use std::io::{Seek, SeekFrom};
        match self.target.take() {
            Some(Target::Temp { file, temp }) => {
                // `into_parts` hands back the unwritten buffer instead of flushing it.
                let (mut f, _unwritten) = file.into_parts();
                let cut = f.set_len(0).and_then(|()| f.seek(SeekFrom::Start(0)));
                self.target = Some(Target::Temp {
                    file: BufWriter::new(f),
                    temp,
                });
                cut.map(|_| ())
            }
            other => {
                self.target = other;
                Err(std::io::Error::new(
                    std::io::ErrorKind::Unsupported,
                    "this output cannot be rewound",
                ))
            }
        }
    }

    /// Finish: flush and move the data into place.
    pub fn commit(mut self) -> Result<()> {
        let path = self.path.clone();
        let io_err = |source| Error::Io {
            path: path.clone(),
            action: "writing",
            source,
        };
        match self.target.take() {
            Some(Target::Stdout(mut s)) => s.flush().map_err(stdout_error),
            Some(Target::Direct(mut f)) => f.flush().map_err(io_err),
            Some(Target::Temp { file, temp }) => {
                let flushed = file
                    .into_inner()
                    .map_err(|e| e.into_error())
                    .and_then(|f| f.sync_all());
                // Under the registry's lock, so that a signal either finds the temporary
                // file (and removes it) or finds the output complete and in place.
                let mut live = live_temps();
                let result = flushed.and_then(|()| std::fs::rename(&temp, &self.path));
                if result.is_err() {
                    let _ = std::fs::remove_file(&temp);
                }
                forget_temp(&mut live, &temp);
                result.map_err(io_err)
            }
            None => Ok(()),
        }
    }
}

impl Write for OutputFile {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        match self.target.as_mut() {
            Some(Target::Stdout(s)) => s.write(buf),
            Some(Target::Direct(f)) | Some(Target::Temp { file: f, .. }) => f.write(buf),
            None => Ok(0),
        }
    }
    fn flush(&mut self) -> std::io::Result<()> {
        match self.target.as_mut() {
            Some(Target::Stdout(s)) => s.flush(),
            Some(Target::Direct(f)) | Some(Target::Temp { file: f, .. }) => f.flush(),
            None => Ok(()),
        }
    }
}

impl Drop for OutputFile {
    fn drop(&mut self) {
        if let Some(Target::Temp { file, temp }) = self.target.take() {
            let mut live = live_temps();
            drop(file);
            let _ = std::fs::remove_file(&temp);
            forget_temp(&mut live, &temp);
        }
    }
}

/// Write a whole buffer to `path` atomically (see the module doc).
pub fn write_all(path: &Path, bytes: &[u8]) -> Result<()> {
    let mut out = OutputFile::create(path)?;
    out.write_all(bytes).map_err(|source| {
        if path.as_os_str() == "-" {
            stdout_error(source)
        } else {
            Error::Io {
                path: path.to_path_buf(),
                action: "writing",
                source,
            }
        }
    })?;
    out.commit()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uncommitted_output_leaves_nothing_and_keeps_the_old_file() {
        // source: common practice (write to a temporary file, rename on success)
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("r.json");
        std::fs::write(&p, "old").unwrap();
        {
            let mut o = OutputFile::create(&p).unwrap();
            o.write_all(b"new, half").unwrap();
        }
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "old");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
        write_all(&p, b"new").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "new");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
    }

    #[test]
    fn a_rewound_output_holds_only_what_follows() {
        // source: common practice (truncate and seek to 0 empties a file); a write larger
        // than the buffer reaches the file before the rewind, a small one stays buffered.
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("j.csv");
        let mut o = OutputFile::create(&p).unwrap();
        assert!(o.rewindable());
        o.write_all(&vec![b'x'; 64 * 1024]).unwrap();
        o.write_all(b"buffered").unwrap();
        o.rewind().unwrap();
        o.write_all(b"a,b\n").unwrap();
        o.commit().unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "a,b\n");
        let mut out = OutputFile::create(Path::new("-")).unwrap();
        assert!(!out.rewindable());
        assert!(out.rewind().is_err());
    }

    #[test]
    fn overwrite_refusal_sees_through_links_and_unwritten_names() {
        // source: common practice (a file is its device and inode; a name is its resolved path)
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let input = d.join("in.yaml");
        std::fs::write(&input, "x").unwrap();
        std::fs::hard_link(&input, d.join("hard")).unwrap();
        std::fs::create_dir(d.join("sub")).unwrap();
        let inputs = [("the path file", input.as_path())];
        let refused = |out: &Path| {
            refuse_overwrite(&inputs, &[("--json", Some(out))])
                .unwrap_err()
                .to_string()
        };
        assert!(refused(&d.join("hard")).contains("the path file"));
        assert!(refused(&d.join("sub/../in.yaml")).contains("the same file"));
        assert!(refuse_overwrite(&inputs, &[("--json", Some(&d.join("new.json")))]).is_ok());
        let new = d.join("sub/new.json");
        let spelt = d.join("sub/../sub/new.json");
        let e = refuse_overwrite(&inputs, &[("--json", Some(&new)), ("--html", Some(&spelt))])
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("--json/--html: both write to"), "{e}");
        let null = Path::new("/dev/null");
        assert!(
            refuse_overwrite(&inputs, &[("--json", Some(null)), ("--html", Some(null))]).is_ok()
        );
    }

    #[test]
    fn special_files_are_written_directly() {
        // source: common practice (/dev/null must never be replaced by a regular file)
        write_all(Path::new("/dev/null"), b"x").unwrap();
        assert!(!std::fs::metadata("/dev/null").unwrap().is_file());
    }
}
