//! Bounded load test of a running `polyflat serve` (loopback only).
//!
//! Submits `--requests` generated quad-grid meshes from `--concurrency` client threads,
//! polls every job to completion, and prints throughput and latency percentiles for
//! submissions (`POST /v1/jobs`), status reads (`GET /v1/jobs/{id}`) and whole jobs
//! (submission to observed `done`). Stops by itself after `--duration-cap` seconds.
//!
//! ```text
//! cargo build --release
//! target/release/polyflat serve --listen 127.0.0.1:7878 --data-dir /tmp/pf-load --quiet &
//! cargo run --release --example load_serve -- --addr 127.0.0.1:7878 --requests 200
//! ```

use std::net::SocketAddr;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

struct Options {
    addr: SocketAddr,
    requests: usize,
    concurrency: usize,
    grid: usize,
    duration_cap: Duration,
    query: String,
}

fn parse_options() -> Result<Options, String> {
    let mut o = Options {
        addr: SocketAddr::from(([127, 0, 0, 1], 7878)),
        requests: 200,
        concurrency: 8,
        grid: 12,
        duration_cap: Duration::from_secs(120),
        query: String::new(),
    };
    let mut args = std::env::args().skip(1);
    while let Some(flag) = args.next() {
        let value = args.next().ok_or(format!("{flag} needs a value"))?;
        let bad = |_| format!("{flag}: bad value '{value}'");
        match flag.as_str() {
            "--addr" => {
                o.addr = value
                    .parse()
                    .map_err(|_| format!("{flag}: bad value '{value}'"))?
            }
            "--requests" => o.requests = value.parse().map_err(bad)?,
            "--concurrency" => o.concurrency = value.parse().map_err(bad)?,
            "--grid" => o.grid = value.parse().map_err(bad)?,
            "--duration-cap" => o.duration_cap = Duration::from_secs(value.parse().map_err(bad)?),
            "--query" => o.query = value,
            _ => return Err(format!("unknown option {flag}")),
        }
    }
    if !o.addr.ip().is_loopback() {
        return Err(format!(
            "--addr {}: only loopback addresses are allowed",
            o.addr
        ));
    }
    if !(1..=10_000).contains(&o.requests) || !(1..=64).contains(&o.concurrency) {
        return Err("--requests must be 1–10000 and --concurrency 1–64".into());
    }
    if !(1..=400).contains(&o.grid) || o.duration_cap > Duration::from_secs(600) {
        return Err("--grid must be 1–400 and --duration-cap at most 600 s".into());
    }
    Ok(o)
}

/// A `grid`×`grid` quad mesh on a gently curved sheet, as OBJ text. `seed` shifts the
/// heights so every submission is a different file.
fn grid_obj(grid: usize, seed: usize) -> String {
    let mut s = format!("# load_serve mesh {seed}\n");
    let phase = seed as f64 * 0.01;
    for j in 0..=grid {
        for i in 0..=grid {
            let (x, y) = (i as f64 / grid as f64, j as f64 / grid as f64);
            let z = 0.15 * ((3.0 * x + phase).sin() * (2.0 * y).cos());
            s.push_str(&format!("v {x} {y} {z}\n"));
        }
    }
    let n = grid + 1;
    for j in 0..grid {
        for i in 0..grid {
            let a = j * n + i + 1;
            s.push_str(&format!("f {} {} {} {}\n", a, a + 1, a + n + 1, a + n));
        }
    }
    s
}

fn percentile(sorted: &[f64], p: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let rank = (p / 100.0 * (sorted.len() - 1) as f64).round() as usize;
    sorted[rank.min(sorted.len() - 1)]
}

fn summary(name: &str, mut ms: Vec<f64>) {
    ms.sort_by(f64::total_cmp);
    println!(
        "{name:<22} n={:<6} p50={:>8.2} ms  p90={:>8.2} ms  p99={:>8.2} ms  max={:>8.2} ms",
        ms.len(),
        percentile(&ms, 50.0),
        percentile(&ms, 90.0),
        percentile(&ms, 99.0),
        ms.last().copied().unwrap_or(f64::NAN)
    );
}

fn main() {
    let o = match parse_options() {
        Ok(o) => o,
        Err(e) => {
            eprintln!("load_serve: {e}");
            std::process::exit(2);
        }
    };
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(Duration::from_secs(30)))
        .build()
        .into();
    let base = format!("http://{}", o.addr);
    let start = Instant::now();
    let deadline = start + o.duration_cap;
    let next = AtomicUsize::new(0);
    let rejected = AtomicUsize::new(0);
    let submit_ms = Mutex::new(Vec::new());
    let status_ms = Mutex::new(Vec::new());
    let job_ms = Mutex::new(Vec::new());
    let failed = Mutex::new(Vec::new());
    let query = if o.query.is_empty() {
        String::new()
    } else {
        format!("?{}", o.query)
    };

    std::thread::scope(|s| {
        for _ in 0..o.concurrency {
            s.spawn(|| loop {
                let n = next.fetch_add(1, Ordering::Relaxed);
                if n >= o.requests || Instant::now() >= deadline {
                    return;
                }
                let body = grid_obj(o.grid, n);
                let submitted = Instant::now();
                let id = loop {
                    let t = Instant::now();
                    let Ok(mut r) = agent.post(format!("{base}/v1/jobs{query}")).send(&body) else {
                        failed
                            .lock()
                            .unwrap()
                            .push(format!("request {n}: connection error"));
                        return;
                    };
                    submit_ms
                        .lock()
                        .unwrap()
                        .push(t.elapsed().as_secs_f64() * 1e3);
                    let text = r.body_mut().read_to_string().unwrap_or_default();
                    match r.status().as_u16() {
                        202 => {
                            let v: serde_json::Value =
                                serde_json::from_str(&text).unwrap_or_default();
                            break v["id"].as_str().unwrap_or_default().to_owned();
                        }
                        429 if Instant::now() < deadline => {
                            rejected.fetch_add(1, Ordering::Relaxed);
                            std::thread::sleep(Duration::from_millis(200));
                        }
                        code => {
                            failed
                                .lock()
                                .unwrap()
                                .push(format!("request {n}: {code} {text}"));
                            break String::new();
                        }
                    }
                };
                if id.is_empty() {
                    continue;
                }
                loop {
                    if Instant::now() >= deadline {
                        failed
                            .lock()
                            .unwrap()
                            .push(format!("job {id}: unfinished at the duration cap"));
                        return;
                    }
                    let t = Instant::now();
                    let Ok(mut r) = agent.get(format!("{base}/v1/jobs/{id}")).call() else {
                        failed
                            .lock()
                            .unwrap()
                            .push(format!("job {id}: connection error"));
                        return;
                    };
                    status_ms
                        .lock()
                        .unwrap()
                        .push(t.elapsed().as_secs_f64() * 1e3);
                    let v: serde_json::Value =
                        serde_json::from_str(&r.body_mut().read_to_string().unwrap_or_default())
                            .unwrap_or_default();
                    match v["status"].as_str() {
                        Some("done") => {
                            job_ms
                                .lock()
                                .unwrap()
                                .push(submitted.elapsed().as_secs_f64() * 1e3);
                            break;
                        }
                        Some("failed") => {
                            failed
                                .lock()
                                .unwrap()
                                .push(format!("job {id}: {}", v["error"]));
                            break;
                        }
                        _ => std::thread::sleep(Duration::from_millis(20)),
                    }
                }
            });
        }
    });

    let elapsed = start.elapsed().as_secs_f64();
    let jobs = job_ms.lock().unwrap().clone();
    let submits = submit_ms.lock().unwrap().clone();
    let accepted = submits.len() - rejected.load(Ordering::Relaxed);
    println!(
        "load_serve: {} requests of a {}x{} quad grid, concurrency {}, {:.2} s",
        o.requests, o.grid, o.grid, o.concurrency, elapsed
    );
    println!(
        "accepted {accepted}, rejected with 429 {} (retried), jobs done {}, failures {}",
        rejected.load(Ordering::Relaxed),
        jobs.len(),
        failed.lock().unwrap().len()
    );
    println!(
        "throughput: {:.1} submissions/s, {:.2} jobs done/s",
        accepted as f64 / elapsed,
        jobs.len() as f64 / elapsed
    );
    summary("POST /v1/jobs", submits);
    summary("GET /v1/jobs/{id}", status_ms.lock().unwrap().clone());
    summary("submit to done", jobs);
    for f in failed.lock().unwrap().iter().take(5) {
        println!("failure: {f}");
    }
}
