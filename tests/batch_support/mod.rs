//! Shared by the batch tests: a test double for the per-asset job and small OBJ files.

#![allow(dead_code)] // each test file uses a different part

use polyflat::batch::{AssetJob, AssetOutput};
use polyflat::progress::Progress;
use polyflat::{Error, Settings};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// Test double for the flattening pipeline. Its outputs are simple functions of
/// the input text and settings, so tests can predict every byte:
/// - obj: `# flattened energy=E padding=P\n` + the input text;
/// - report: `{"energy":E,"padding":P,"faces":F}`;
/// - atlas: `PNG:` + the input's stem;
/// - metrics: stretch_l2 = 1 + F/100, charts = 1, flipped_faces = 0 (F = number of `f ` lines).
///
/// A line `BROKEN` makes it fail like a parse error on that line; `panic_on`
/// and `block_on` name stems on which it panics, or signals (creates the marker
/// file) and then sleeps for a minute.
#[derive(Default)]
pub struct FakeJob {
    pub calls: AtomicUsize,
    pub panic_on: Option<&'static str>,
    pub block_on: Option<(&'static str, PathBuf)>,
}

impl FakeJob {
    pub fn calls(&self) -> usize {
        self.calls.load(Ordering::SeqCst)
    }
}

pub const BROKEN_MESSAGE: &str = "face refers to vertex 9, but the file defines only 4 vertices";

impl AssetJob for FakeJob {
    fn run(
        &self,
        input: &Path,
        settings: &Settings,
        progress: &dyn Progress,
    ) -> Result<AssetOutput, Error> {
        self.calls.fetch_add(1, Ordering::SeqCst);
        progress.begin("flatten", 1);
        let stem = input.file_stem().unwrap().to_string_lossy().into_owned();
        if self.panic_on == Some(stem.as_str()) {
            panic!("test double panics on {stem}");
        }
        if let Some((name, marker)) = &self.block_on {
            if *name == stem {
                std::fs::write(marker, b"started").unwrap();
                std::thread::sleep(Duration::from_secs(60));
            }
        }
        let text = std::fs::read_to_string(input).map_err(|e| Error::io(input, "read", e))?;
        if let Some(line) = text.lines().position(|l| l == "BROKEN") {
            return Err(Error::Parse {
                file: input.display().to_string(),
                line: line + 1,
                message: BROKEN_MESSAGE.into(),
            });
        }
        Ok(expected_output(&text, &stem, settings))
    }
}

/// What [`FakeJob`] returns for `text` (file stem `stem`) under `settings`.
pub fn expected_output(text: &str, stem: &str, settings: &Settings) -> AssetOutput {
    let faces = text.lines().filter(|l| l.starts_with("f ")).count();
    let report = serde_json::json!({
        "energy": settings.energy.as_str(), "padding": settings.padding, "faces": faces,
    });
    let metrics = serde_json::json!({
        "stretch_l2": 1.0 + faces as f64 / 100.0, "charts": 1, "flipped_faces": 0,
    });
    AssetOutput {
        obj: format!(
            "# flattened energy={} padding={}\n{text}",
            settings.energy, settings.padding
        )
        .into_bytes(),
        report: report.to_string().into_bytes(),
        atlas: format!("PNG:{stem}").into_bytes(),
        metrics: metrics.as_object().unwrap().clone(),
    }
}

/// A planar `n`×`n` quad grid (unit spacing) as OBJ text.
pub fn grid_obj(n: usize) -> String {
    let mut s = String::new();
    for j in 0..=n {
        for i in 0..=n {
            s += &format!("v {i} {j} 0\n");
        }
    }
    for j in 0..n {
        for i in 0..n {
            let a = j * (n + 1) + i + 1;
            s += &format!("f {} {} {} {}\n", a, a + 1, a + n + 2, a + n + 1);
        }
    }
    s
}

/// An OBJ whose third line is broken (for [`FakeJob`]: `BROKEN`; for the real
/// parser: a face naming a vertex that does not exist).
pub fn broken_obj() -> String {
    "v 0 0 0\nv 1 0 0\nBROKEN\nv 1 1 0\nv 0 1 0\nf 1 2 9\n".into()
}

/// Writes `text` to `dir/rel`, creating folders.
pub fn write(dir: &Path, rel: &str, text: &str) -> PathBuf {
    let path = dir.join(rel);
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(&path, text).unwrap();
    path
}

/// Every file under `dir` (relative paths, sorted) with its bytes.
pub fn snapshot(dir: &Path) -> Vec<(PathBuf, Vec<u8>)> {
    fn walk(root: &Path, dir: &Path, out: &mut Vec<(PathBuf, Vec<u8>)>) {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(root, &p, out);
            } else {
                out.push((
                    p.strip_prefix(root).unwrap().to_owned(),
                    std::fs::read(&p).unwrap(),
                ));
            }
        }
    }
    let mut out = Vec::new();
    walk(dir, dir, &mut out);
    out.sort();
    out
}

/// File names (not folders) directly in `dir`, sorted.
pub fn names_in(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap())
        .filter(|e| e.file_type().unwrap().is_file())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// Waits up to `limit` for `path` to exist.
pub fn wait_for(path: &Path, limit: Duration) -> bool {
    let start = Instant::now();
    while start.elapsed() < limit {
        if path.exists() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    false
}
