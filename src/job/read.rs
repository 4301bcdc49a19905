//! File checks shared by the path-file readers: regular files only, the size cap, and the
//! line/column text of a byte offset. Knows no format.

use crate::error::Error;
use std::path::Path;

/// Input files larger than this are refused before reading: the whole YAML file is held in
/// memory together with its parsed events (several times its size), and a real path of even
/// a million waypoints takes well under 512 MiB, so a bigger file is a wrong file.
pub(super) const MAX_FILE_BYTES: u64 = 512 * 1024 * 1024;

/// Checks that `path` names a readable regular file of at most [`MAX_FILE_BYTES`]. `what` names
/// the kind of file ("path file"); `referenced_by` (may be empty) says where the name came from.
pub(super) fn check_file(path: &Path, what: &str, referenced_by: &str) -> Result<(), Error> {
    let from = if referenced_by.is_empty() {
        String::new()
    } else {
        format!(" ({referenced_by})")
    };
    let md = std::fs::metadata(path).map_err(|e| {
        let msg = if e.kind() == std::io::ErrorKind::NotFound {
            format!("the {what} does not exist{from}: check the file name and folder")
        } else {
            format!("the {what} cannot be read{from} ({e}): check that the file is readable")
        };
        Error::input(path, "file", msg)
    })?;
    if md.is_dir() {
        return Err(Error::input(
            path,
            "file",
            format!("is a folder, not a {what}{from}: give the path of the file itself"),
        ));
    }
    if !md.is_file() {
        // Reading a FIFO would block until some other program writes to it, and a device may
        // never end: only regular files are read.
        return Err(Error::input(
            path,
            "file",
            format!(
                "is not a regular file (a named pipe, device or socket), so it cannot be a \
                 {what}{from}: save the content to a file and give that file's path"
            ),
        ));
    }
    if md.len() > MAX_FILE_BYTES {
        return Err(Error::input(
            path,
            "file",
            format!(
                "is {} bytes ({:.1} MiB), larger than the {} MiB armpath reads: a {what} this \
                 large is almost certainly the wrong file; split a genuinely long path into \
                 several files",
                md.len(),
                md.len() as f64 / (1024.0 * 1024.0),
                MAX_FILE_BYTES / (1024 * 1024)
            ),
        ));
    }
    Ok(())
}

/// Reads a whole file of at most [`MAX_FILE_BYTES`]. The cap is applied while reading, as a
/// device or pipe (`/dev/zero`) reports length 0 and may never end. Call [`check_file`] first
/// for the friendlier messages on missing files and folders.
pub(super) fn read_file(path: &Path, what: &str) -> Result<Vec<u8>, Error> {
    use std::io::Read;
    let mut bytes = Vec::new();
    std::fs::File::open(path)
        .and_then(|f| f.take(MAX_FILE_BYTES + 1).read_to_end(&mut bytes))
        .map_err(|e| {
            Error::input(
                path,
                "file",
                format!("the {what} cannot be read ({e}): check that the file is readable"),
            )
        })?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err(Error::input(
            path,
            "file",
            format!(
                "is larger than the {} MiB armpath reads: a {what} this large is almost \
                 certainly the wrong file; split a genuinely long path into several files",
                MAX_FILE_BYTES / (1024 * 1024)
            ),
        ));
    }
    Ok(bytes)
}

/// True when `path` names a CSV waypoint file (extension `.csv`, any case).
pub(super) fn is_csv(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.to_string_lossy().eq_ignore_ascii_case("csv"))
}

/// `line L column C` (both 1-based, the column counted in characters) of byte `offset` of
/// `bytes`, whose first `offset` bytes are valid UTF-8.
pub(super) fn line_column(bytes: &[u8], offset: usize) -> String {
    let before = &bytes[..offset.min(bytes.len())];
    let line = before.iter().filter(|&&b| b == b'\n').count() + 1;
    let start = before
        .iter()
        .rposition(|&b| b == b'\n')
        .map_or(0, |i| i + 1);
    let column = String::from_utf8_lossy(&before[start..]).chars().count() + 1;
    format!("line {line} column {column}")
}
