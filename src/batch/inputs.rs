//! Turns the command line's inputs (files, folders, manifests) into the list of
//! assets, each with its effective settings.

use super::manifest::read_manifest;
use crate::settings::Settings;
use crate::Error;
use std::path::{Path, PathBuf};

/// One row of the batch, before it runs.
#[derive(Debug, Clone)]
pub struct Planned {
    /// The input as given (manifest entries: joined to the manifest's folder).
    pub input: PathBuf,
    /// The asset's effective settings, or why this input yields no asset.
    pub settings: Result<Settings, String>,
    /// The asset's output name ([`super::naming`]); empty until named.
    pub name: String,
}

/// Expands `inputs` in order: a folder gives its `*.obj` files (recursively,
/// sorted by path; hidden entries, symlinked folders and `out_dir` are left
/// out), a `*.toml` file gives its manifest's assets, any other path is one asset.
///
/// A path that cannot be read yields a failed row; a bad manifest fails the
/// whole batch (the error names the manifest line).
pub fn expand(inputs: &[PathBuf], base: &Settings, out_dir: &Path) -> Result<Vec<Planned>, Error> {
    let out_dir = std::fs::canonicalize(out_dir).ok();
    let asset = |input: PathBuf, settings: Settings| Planned {
        input,
        settings: Ok(settings),
        name: String::new(),
    };
    let mut planned = Vec::new();
    for input in inputs {
        let failed = |error: String| Planned {
            input: input.clone(),
            settings: Err(error),
            name: String::new(),
        };
        match std::fs::metadata(input) {
            Err(e) => planned.push(failed(Error::io(input, "read", e).to_string())),
            Ok(meta) if meta.is_dir() => {
                let mut files = Vec::new();
                match walk(input, out_dir.as_deref(), &mut files) {
                    Err(e) => planned.push(failed(e.to_string())),
                    Ok(()) if files.is_empty() => planned.push(failed(format!(
                        "{}: the folder holds no .obj files",
                        input.display()
                    ))),
                    Ok(()) => {
                        files.sort();
                        planned.extend(files.into_iter().map(|f| asset(f, base.clone())));
                    }
                }
            }
            Ok(_) if has_extension(input, "toml") => {
                for entry in read_manifest(input)? {
                    let mut settings = base.clone();
                    entry.options.apply(&mut settings);
                    settings.validate().map_err(|message| Error::Parse {
                        file: input.display().to_string(),
                        line: entry.line,
                        message,
                    })?;
                    planned.push(asset(entry.path, settings));
                }
            }
            Ok(_) => planned.push(asset(input.clone(), base.clone())),
        }
    }
    Ok(planned)
}

/// Collects the `*.obj` files under `dir` into `files`.
fn walk(dir: &Path, out_dir: Option<&Path>, files: &mut Vec<PathBuf>) -> Result<(), Error> {
    let list_error = |e| Error::io(dir, "list", e);
    for entry in std::fs::read_dir(dir).map_err(list_error)? {
        let entry = entry.map_err(list_error)?;
        if entry.file_name().to_string_lossy().starts_with('.') {
            continue;
        }
        let path = entry.path();
        let kind = entry.file_type().map_err(list_error)?;
        if kind.is_dir() {
            if out_dir.is_none() || std::fs::canonicalize(&path).ok().as_deref() != out_dir {
                walk(&path, out_dir, files)?;
            }
        } else if has_extension(&path, "obj") && std::fs::metadata(&path).is_ok_and(|m| m.is_file())
        {
            files.push(path);
        }
    }
    Ok(())
}

/// Whether `path` ends in `.ext`, ignoring case.
fn has_extension(path: &Path, ext: &str) -> bool {
    path.extension()
        .is_some_and(|e| e.to_string_lossy().eq_ignore_ascii_case(ext))
}
