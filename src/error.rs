//! One error type for the whole library. Every variant says where the problem is (file, and
//! line or field where known) and what to do about it; the binary maps them to exit code 2.

use std::path::PathBuf;

/// A failure that stops armpath before (or while) producing a report.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A file could not be read or written.
    #[error("{}: {action} failed: {source}", path.display())]
    Io {
        /// The file armpath tried to read or write.
        path: PathBuf,
        /// What armpath was doing, e.g. "reading" or "writing".
        action: &'static str,
        /// The operating system's reason.
        #[source]
        source: std::io::Error,
    },
    /// The robot description is unusable. `location` names the joint, link or line.
    #[error("{}: {location}: {message}", path.display())]
    Robot {
        /// The robot description file (URDF).
        path: PathBuf,
        /// Joint, link or line where the problem was found.
        location: String,
        /// What is wrong and what to do about it.
        message: String,
    },
    /// The path file, CSV waypoints or a setting are unusable. `location` is `line N`, a field
    /// path such as `waypoints[3].quat`, or a command-line option.
    #[error("{}: {location}: {message}", path.display())]
    Input {
        /// The path file or waypoint CSV the problem belongs to (also for a setting overridden
        /// on the command line).
        path: PathBuf,
        /// `line N`, a field path or a command-line option.
        location: String,
        /// What is wrong and what to do about it.
        message: String,
    },
    /// A command-line value is malformed (no file involved).
    #[error("{option}: {message}")]
    Usage {
        /// The command-line option (or argument) at fault, as the user typed it.
        option: String,
        /// What is wrong and what to do about it.
        message: String,
    },
}

impl Error {
    /// Shorthand for [`Error::Robot`].
    pub fn robot(
        path: impl Into<PathBuf>,
        location: impl Into<String>,
        message: impl Into<String>,
    ) -> Self {
        Error::Robot {
            path: path.into(),
            location: location.into(),
            message: message.into(),
        }
    }

    /// Shorthand for [`Error::Input`].
    pub fn input(
        path: impl Into<PathBuf>,
        location: impl Into<String>,
        message: impl Into<String>,
    ) -> Self {
        Error::Input {
            path: path.into(),
            location: location.into(),
            message: message.into(),
        }
    }

    /// Shorthand for [`Error::Usage`].
    pub fn usage(option: impl Into<String>, message: impl Into<String>) -> Self {
        Error::Usage {
            option: option.into(),
            message: message.into(),
        }
    }
}

/// Result with the library's [`Error`].
pub type Result<T> = std::result::Result<T, Error>;
