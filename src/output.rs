//! Writing output files so that nothing is ever half-written: data goes to a temporary file in
//! the target's folder and is renamed into place only when complete. A failure or an input
//! error leaves no report behind and does not touch an older one. Targets that are not
//! regular files (`-` for standard output, `/dev/null`, a pipe) are written directly.

use crate::error::{Error, Result};
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

enum Target {
    Stdout(std::io::Stdout),
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
            Target::Stdout(std::io::stdout())
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
                    let file = File::create(&temp).map_err(io_err)?;
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

    /// Finish: flush and move the data into place.
    pub fn commit(mut self) -> Result<()> {
        let path = self.path.clone();
        let io_err = |source| Error::Io {
            path: path.clone(),
            action: "writing",
            source,
        };
        match self.target.take() {
            Some(Target::Stdout(mut s)) => s.flush().map_err(io_err),
            Some(Target::Direct(mut f)) => f.flush().map_err(io_err),
            Some(Target::Temp { file, temp }) => {
                let file = file.into_inner().map_err(|e| io_err(e.into_error()))?;
                file.sync_all().map_err(io_err)?;
                drop(file);
                std::fs::rename(&temp, &self.path).map_err(|e| {
                    let _ = std::fs::remove_file(&temp);
                    io_err(e)
                })
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
        if let Some(Target::Temp { temp, .. }) = self.target.take() {
            let _ = std::fs::remove_file(temp);
        }
    }
}

/// Write a whole buffer to `path` atomically (see the module doc).
pub fn write_all(path: &Path, bytes: &[u8]) -> Result<()> {
    let mut out = OutputFile::create(path)?;
    out.write_all(bytes).map_err(|source| Error::Io {
        path: path.to_path_buf(),
        action: "writing",
        source,
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
    fn special_files_are_written_directly() {
        // source: common practice (/dev/null must never be replaced by a regular file)
        write_all(Path::new("/dev/null"), b"x").unwrap();
        assert!(!std::fs::metadata("/dev/null").unwrap().is_file());
    }
}
