//! The library's error type. Every message is one sentence that names the place
//! (file and line, face, chart or option) and, where it helps, what to do.

use std::path::PathBuf;

/// Anything that can make a polyflat job fail.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A file could not be read or written.
    #[error("{}: cannot {action}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// What was attempted ("read", "write", "create the folder for", …).
        action: &'static str,
        /// The operating system's reason.
        source: std::io::Error,
    },
    /// A syntax or reference error in an input file.
    #[error("{file}:{line}: {message}")]
    Parse {
        /// File name as given by the user.
        file: String,
        /// 1-based line number.
        line: usize,
        /// What is wrong and, where it helps, what to do.
        message: String,
    },
    /// The mesh parsed but cannot be flattened; the message names the face or vertex.
    #[error("{file}: {message}")]
    Mesh {
        /// File name as given by the user.
        file: String,
        /// What is wrong, naming the face (and its line) or vertex.
        message: String,
    },
    /// An option has a value out of range; the message names the option.
    #[error("{0}")]
    Settings(String),
    /// Seams cannot be kept or chosen as asked; the message names a face and the option
    /// to change.
    #[error("{0}")]
    Seams(String),
    /// The charts cannot be packed; the message names the chart or the option to change.
    #[error("{0}")]
    Pack(String),
    /// The solver could not produce a valid layout for a chart.
    #[error("chart {chart}: {message}")]
    Solve {
        /// Chart id as listed in the report.
        chart: usize,
        /// What went wrong.
        message: String,
    },
    /// An image could not be drawn: its inputs disagree with the mesh or its size is
    /// out of range; the message names the face or option.
    #[error("{0}")]
    Image(String),
}

/// Result with the library's error type.
pub type Result<T, E = Error> = std::result::Result<T, E>;

impl Error {
    /// An I/O error on `path`.
    pub fn io(path: impl Into<PathBuf>, action: &'static str, source: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            action,
            source,
        }
    }
}
