//! Rerun bookkeeping and atomic output writes.
//!
//! After an asset's three outputs are in place, its stamp
//! `DIR/.polyflat-batch/<name>.json` is written last. It records the job key
//! (SHA-256 of tool version, input path, effective settings and input bytes) and
//! the SHA-256 of each output. A rerun skips the asset only when the key is the
//! same and every output still exists with the recorded hash; anything else —
//! no stamp, a run killed between outputs, an edited output — redoes it.

use super::job::AssetOutput;
use super::summary::KeyMetrics;
use crate::settings::Settings;
use crate::Error;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::io::Write;
use std::path::{Path, PathBuf};

/// Folder inside DIR holding the stamps.
pub const STAMP_DIR: &str = ".polyflat-batch";
/// Prefix of temporary files; leftovers of a killed run are removed by the next run.
pub const TEMP_PREFIX: &str = ".polyflat-tmp-";
/// Output file suffixes, in the order they are written.
pub const OUTPUT_SUFFIXES: [&str; 3] = [".obj", ".report.json", ".atlas.png"];

/// What a finished asset leaves behind for the next run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Stamp {
    /// `polyflat <version>`.
    pub tool: String,
    /// The input as given.
    pub input: String,
    /// [`job_key`] of the run that wrote the outputs.
    pub key: String,
    /// SHA-256 (hex) of each output, in [`OUTPUT_SUFFIXES`] order.
    pub outputs: [String; 3],
    /// The summary metrics of that run.
    pub metrics: KeyMetrics,
}

/// The tool name and version recorded in stamps and hashed into keys.
pub fn tool_version() -> String {
    format!("polyflat {}", env!("CARGO_PKG_VERSION"))
}

/// Identifies one asset's work: SHA-256 (hex) over the tool version, the input
/// label, the settings and the input bytes, each length-prefixed.
///
/// `threads` is left out: it changes how fast the job runs, not what it writes.
pub fn job_key(input: &str, bytes: &[u8], settings: &Settings) -> String {
    let settings = Settings {
        threads: None,
        ..settings.clone()
    };
    let settings = serde_json::to_vec(&settings).unwrap_or_default();
    let mut h = Sha256::new();
    for part in [
        tool_version().as_bytes(),
        input.as_bytes(),
        &settings,
        bytes,
    ] {
        h.update((part.len() as u64).to_le_bytes());
        h.update(part);
    }
    hex(&h.finalize())
}

/// SHA-256 of `bytes`, as lowercase hex.
fn sha256(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Paths of an asset's outputs and stamp inside `dir`.
#[derive(Debug, Clone)]
pub struct OutputPaths {
    /// `<name>.obj`, `<name>.report.json`, `<name>.atlas.png`.
    pub outputs: [PathBuf; 3],
    /// `.polyflat-batch/<name>.json`.
    pub stamp: PathBuf,
}

impl OutputPaths {
    /// The paths for output `name` in `dir`.
    pub fn new(dir: &Path, name: &str) -> Self {
        OutputPaths {
            outputs: OUTPUT_SUFFIXES.map(|s| dir.join(format!("{name}{s}"))),
            stamp: dir.join(STAMP_DIR).join(format!("{name}.json")),
        }
    }

    /// The metrics of an earlier run when its stamp has `key` and every output
    /// still has the recorded hash; `None` means the asset must be redone.
    pub fn up_to_date(&self, key: &str) -> Option<KeyMetrics> {
        let stamp: Stamp = serde_json::from_slice(&std::fs::read(&self.stamp).ok()?).ok()?;
        if stamp.key != key {
            return None;
        }
        for (path, hash) in self.outputs.iter().zip(&stamp.outputs) {
            if sha256(&std::fs::read(path).ok()?) != *hash {
                return None;
            }
        }
        Some(stamp.metrics)
    }

    /// Writes the three outputs, then the stamp, each atomically (temporary file
    /// in the same folder, flushed, renamed; the folder flushed after the renames).
    /// A stale stamp is removed first, so an interruption at any point leaves no
    /// stamp that vouches for other files.
    pub fn write(
        &self,
        input: &str,
        key: &str,
        output: &AssetOutput,
        metrics: &KeyMetrics,
    ) -> Result<(), Error> {
        let contents = [&output.obj, &output.report, &output.atlas];
        let temps = self
            .outputs
            .iter()
            .zip(contents)
            .map(|(path, bytes)| temp_with(path, bytes))
            .collect::<Result<Vec<_>, _>>()?;
        match std::fs::remove_file(&self.stamp) {
            Err(e) if e.kind() != std::io::ErrorKind::NotFound => {
                return Err(Error::io(&self.stamp, "remove", e));
            }
            _ => {}
        }
        for (temp, path) in temps.into_iter().zip(&self.outputs) {
            persist(temp, path)?;
        }
        sync_folder(&self.outputs[0])?;
        let stamp = Stamp {
            tool: tool_version(),
            input: input.to_owned(),
            key: key.to_owned(),
            outputs: contents.map(|b| sha256(b)),
            metrics: metrics.clone(),
        };
        let bytes = serde_json::to_vec_pretty(&stamp).unwrap_or_default();
        persist(temp_with(&self.stamp, &bytes)?, &self.stamp)?;
        sync_folder(&self.stamp)
    }
}

/// Makes the renames into `file`'s folder durable, so that after a power loss the
/// stamp never survives without the outputs it vouches for (Unix; elsewhere the
/// rename is all there is).
fn sync_folder(file: &Path) -> Result<(), Error> {
    #[cfg(unix)]
    {
        let dir = file.parent().unwrap_or(Path::new("."));
        std::fs::File::open(dir)
            .and_then(|d| d.sync_all())
            .map_err(|e| Error::io(dir, "flush", e))?;
    }
    #[cfg(not(unix))]
    let _ = file;
    Ok(())
}

/// Writes `bytes` to a flushed temporary file beside `path`.
fn temp_with(path: &Path, bytes: &[u8]) -> Result<tempfile::NamedTempFile, Error> {
    let dir = path.parent().unwrap_or(Path::new("."));
    let mut builder = tempfile::Builder::new();
    builder.prefix(TEMP_PREFIX);
    // Outputs get the permissions of any new file (0o666 less the umask), not the
    // owner-only default of temporary files.
    #[cfg(unix)]
    builder.permissions(std::os::unix::fs::PermissionsExt::from_mode(0o666));
    let mut temp = builder
        .tempfile_in(dir)
        .map_err(|e| Error::io(path, "create a temporary file for", e))?;
    temp.write_all(bytes)
        .and_then(|()| temp.as_file().sync_all())
        .map_err(|e| Error::io(path, "write", e))?;
    Ok(temp)
}

/// Renames a temporary file onto `path`.
fn persist(temp: tempfile::NamedTempFile, path: &Path) -> Result<(), Error> {
    temp.persist(path)
        .map(drop)
        .map_err(|e| Error::io(path, "write", e.error))
}

/// Writes `bytes` to `path` atomically.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    persist(temp_with(path, bytes)?, path)
}

/// Removes temporary files a killed run left in `dir` (not recursive).
pub fn remove_stale_temps(dir: &Path) -> Result<(), Error> {
    let entries = std::fs::read_dir(dir).map_err(|e| Error::io(dir, "list", e))?;
    for entry in entries {
        let entry = entry.map_err(|e| Error::io(dir, "list", e))?;
        if entry.file_name().to_string_lossy().starts_with(TEMP_PREFIX) {
            let path = entry.path();
            std::fs::remove_file(&path).map_err(|e| Error::io(&path, "remove", e))?;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_changes_with_input_settings_and_bytes_but_not_threads() {
        let s = Settings::default();
        let k = job_key("a.obj", b"v 0 0 0\n", &s);
        assert_eq!(k.len(), 64);
        assert_ne!(k, job_key("b.obj", b"v 0 0 0\n", &s));
        assert_ne!(k, job_key("a.obj", b"v 0 0 1\n", &s));
        let padded = Settings {
            padding: 5,
            ..Settings::default()
        };
        assert_ne!(k, job_key("a.obj", b"v 0 0 0\n", &padded));
        let threaded = Settings {
            threads: Some(3),
            ..Settings::default()
        };
        assert_eq!(k, job_key("a.obj", b"v 0 0 0\n", &threaded));
    }

    #[test]
    fn sha256_matches_the_published_test_vector() {
        // FIPS 180-2 appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
