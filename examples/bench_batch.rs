//! Batch runner overhead: `cargo run --example bench_batch [ASSETS] [KIB]`.
//!
//! Runs a batch of ASSETS inputs of KIB KiB each through a job that does no
//! flattening (it echoes the input), so the figures are the runner's own cost:
//! reading and hashing inputs, atomic writes with fsync, stamps, summary.
//! Prints the first run, the all-skipped rerun and a `--force` rerun.

use polyflat::batch::{self, AssetJob, AssetOutput, BatchConfig, Status, Unobserved};
use polyflat::progress::Progress;
use polyflat::{Error, Settings};
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Echoes the input as all three outputs; no flattening.
struct Echo;

impl AssetJob for Echo {
    fn run(&self, input: &Path, _: &Settings, _: &dyn Progress) -> Result<AssetOutput, Error> {
        let bytes = std::fs::read(input).map_err(|e| Error::io(input, "read", e))?;
        Ok(AssetOutput {
            obj: bytes.clone(),
            report: bytes.clone(),
            atlas: bytes,
            metrics: serde_json::Map::new(),
        })
    }
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let assets: usize = args.next().map_or(Ok(200), |a| a.parse())?;
    let kib: usize = args.next().map_or(Ok(256), |a| a.parse())?;
    let tmp = tempfile::tempdir()?;
    let input = tmp.path().join("in");
    std::fs::create_dir_all(&input)?;
    let line = "v 0.123456 0.654321 0.333333\n";
    let body = line.repeat(kib * 1024 / line.len());
    for i in 0..assets {
        std::fs::write(input.join(format!("m{i:05}.obj")), &body)?;
    }
    let jobs = std::thread::available_parallelism().map_or(1, usize::from);
    println!("{assets} inputs of {kib} KiB, --jobs {jobs}");
    for (label, force) in [
        ("first run", false),
        ("rerun (skips)", false),
        ("--force", true),
    ] {
        let config = BatchConfig {
            out_dir: tmp.path().join("out"),
            jobs,
            force,
            settings: Settings::default(),
        };
        let start = Instant::now();
        let summary = batch::run(&[PathBuf::from(&input)], &config, &Echo, &Unobserved)?;
        let ms = start.elapsed().as_secs_f64() * 1e3;
        println!(
            "{label:>14}: {ms:8.1} ms total, {:6.2} ms per input ({} done, {} skipped)",
            ms / assets as f64,
            summary.count(Status::Done),
            summary.count(Status::Skipped)
        );
    }
    Ok(())
}
