//! End-to-end tests of `polyflat serve` as a separate process over loopback, with the
//! real flattening pipeline: submit → poll → download, error codes, concurrency, and
//! restarts after SIGTERM and after `kill -9` mid-job with nothing lost.
//!
//! Inputs are quad grids generated here; a big grid stands in for a slow job (no
//! test-only knobs in the binary). Expected values: the HTTP contract of the task and
//! the OBJ contract of DESIGN.md §4 (every `v` line and face kept, `vt` added).

use serde_json::Value;
use std::io::{BufRead, BufReader, Read, Write};
use std::net::SocketAddr;
use std::path::Path;
use std::process::{Child, ChildStdout, Command, Stdio};
use std::time::{Duration, Instant};

/// Quads per side of the mesh used when a job must still be running when we look.
const BIG_GRID: usize = 160;

struct Service {
    child: Child,
    address: SocketAddr,
    _stdout: BufReader<ChildStdout>,
}

impl Service {
    fn start(data_dir: &Path, extra: &[&str]) -> Service {
        let mut child = Command::new(env!("CARGO_BIN_EXE_polyflat"))
            .args(["serve", "--listen", "127.0.0.1:0", "--quiet", "--data-dir"])
            .arg(data_dir)
            .args(extra)
            .stdout(Stdio::piped())
            .stderr(Stdio::inherit())
            .spawn()
            .expect("cannot start polyflat");
        let mut stdout = BufReader::new(child.stdout.take().unwrap());
        let mut line = String::new();
        stdout.read_line(&mut line).unwrap();
        let address = line
            .trim()
            .strip_prefix("listening on http://")
            .unwrap_or_else(|| {
                panic!("`polyflat serve` printed {line:?} instead of its address; is the serve command built in?")
            })
            .parse()
            .unwrap();
        Service {
            child,
            address,
            _stdout: stdout,
        }
    }

    fn url(&self, path: &str) -> String {
        format!("http://{}{path}", self.address)
    }

    /// Sends SIGTERM and returns the exit code.
    fn terminate(mut self) -> Option<i32> {
        let status = Command::new("kill")
            .args(["-TERM", &self.child.id().to_string()])
            .status()
            .unwrap();
        assert!(status.success());
        let start = Instant::now();
        loop {
            if let Some(status) = self.child.try_wait().unwrap() {
                return status.code();
            }
            assert!(
                start.elapsed() < Duration::from_secs(20),
                "no exit after SIGTERM"
            );
            std::thread::sleep(Duration::from_millis(20));
        }
    }

    /// SIGKILL, like a crash or an out-of-memory kill.
    fn kill_hard(mut self) {
        self.child.kill().unwrap();
        self.child.wait().unwrap();
    }
}

impl Drop for Service {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(Duration::from_secs(30)))
        .build()
        .into()
}

/// A `grid`×`grid` quad mesh on a gently curved sheet (a disk, so one chart).
fn grid_obj(grid: usize) -> String {
    let mut s = String::new();
    for j in 0..=grid {
        for i in 0..=grid {
            let (x, y) = (i as f64 / grid as f64, j as f64 / grid as f64);
            let z = 0.15 * (3.0 * x).sin() * (2.0 * y).cos();
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

fn submit(service: &Service, query: &str, body: &str) -> (u16, Value) {
    let mut r = agent()
        .post(service.url(&format!("/v1/jobs{query}")))
        .send(body)
        .unwrap();
    let code = r.status().as_u16();
    (
        code,
        serde_json::from_str(&r.body_mut().read_to_string().unwrap()).unwrap(),
    )
}

fn get(service: &Service, path: &str) -> (u16, Vec<u8>) {
    let mut r = agent().get(service.url(path)).call().unwrap();
    let code = r.status().as_u16();
    let body = r
        .body_mut()
        .with_config()
        .limit(1 << 30)
        .read_to_vec()
        .unwrap();
    (code, body)
}

fn get_json(service: &Service, path: &str) -> (u16, Value) {
    let (code, body) = get(service, path);
    (code, serde_json::from_slice(&body).unwrap())
}

fn accepted(code: u16, body: &Value) -> String {
    assert_eq!(code, 202, "{body}");
    body["id"].as_str().unwrap().to_owned()
}

fn wait_status(service: &Service, id: &str, wanted: &[&str], limit: Duration) -> Value {
    let start = Instant::now();
    loop {
        let (code, job) = get_json(service, &format!("/v1/jobs/{id}"));
        assert_eq!(code, 200, "{job}");
        if wanted.iter().any(|w| job["status"] == *w) {
            return job;
        }
        assert!(start.elapsed() < limit, "job {id} not {wanted:?}: {job}");
        std::thread::sleep(Duration::from_millis(10));
    }
}

/// Downloads and checks the three results of a done job made from `grid_obj(grid)`.
fn check_results(service: &Service, id: &str, grid: usize) {
    let (code, obj) = get(service, &format!("/v1/jobs/{id}/result.obj"));
    assert_eq!(code, 200);
    let obj = String::from_utf8(obj).unwrap();
    let count = |prefix: &str| obj.lines().filter(|l| l.starts_with(prefix)).count();
    assert_eq!(count("v "), (grid + 1) * (grid + 1));
    assert_eq!(count("f "), grid * grid);
    assert!(count("vt ") >= (grid + 1) * (grid + 1));
    assert!(obj
        .lines()
        .filter(|l| l.starts_with("f "))
        .all(|l| l.contains('/')));
    let (code, report) = get_json(service, &format!("/v1/jobs/{id}/report.json"));
    assert_eq!(code, 200);
    assert_eq!(report["input"]["faces"], grid * grid, "{report}");
    let (code, png) = get(service, &format!("/v1/jobs/{id}/atlas.png"));
    assert_eq!(code, 200);
    assert!(image::load_from_memory(&png).is_ok());
}

#[test]
fn submit_poll_download_and_error_codes() {
    let dir = tempfile::tempdir().unwrap();
    let service = Service::start(dir.path(), &["--workers", "2", "--max-upload-mb", "4"]);
    let (code, _) = get(&service, "/healthz");
    assert_eq!(code, 200);

    let (code, body) = submit(
        &service,
        "?energy=arap&resolution=256&padding=2",
        &grid_obj(6),
    );
    let id = accepted(code, &body);
    let job = wait_status(&service, &id, &["done", "failed"], Duration::from_secs(20));
    assert_eq!(job["status"], "done", "{job}");
    assert_eq!(job["progress"], 1.0);
    check_results(&service, &id, 6);

    // A face naming a vertex that does not exist, on line 11 (9 `v` lines + 1 face).
    let bad = format!(
        "{}f 1 2 99\n",
        grid_obj(2).lines().take(10).collect::<Vec<_>>().join("\n") + "\n"
    );
    let (code, body) = submit(&service, "", &bad);
    assert_eq!(code, 400, "{body}");
    assert!(
        body["error"]
            .as_str()
            .unwrap()
            .starts_with("upload.obj:11:"),
        "{body}"
    );

    let (code, body) = submit(&service, "?seams=sideways", &grid_obj(2));
    assert_eq!(code, 400);
    assert!(
        body["error"].as_str().unwrap().contains("option seams"),
        "{body}"
    );

    // 5 MiB declared against --max-upload-mb 4.
    let mut stream = std::net::TcpStream::connect(service.address).unwrap();
    stream
        .set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    write!(
        stream,
        "POST /v1/jobs HTTP/1.1\r\nHost: x\r\nContent-Length: 5242880\r\nExpect: 100-continue\r\nConnection: close\r\n\r\n"
    )
    .unwrap();
    let mut answer = String::new();
    let _ = stream.read_to_string(&mut answer);
    assert!(answer.starts_with("HTTP/1.1 413"), "{answer}");

    let (code, _) = get_json(&service, "/v1/jobs/00000000000000000000000000000000");
    assert_eq!(code, 404);
    let (code, _) = get_json(
        &service,
        "/v1/jobs/00000000000000000000000000000000/atlas.png",
    );
    assert_eq!(code, 404);

    let (code, body) = submit(&service, "", &grid_obj(BIG_GRID));
    let big = accepted(code, &body);
    let (code, body) = get_json(&service, &format!("/v1/jobs/{big}/result.obj"));
    assert_eq!(code, 409, "{body}");
    drop(service);
}

#[test]
fn eight_concurrent_submissions_all_finish() {
    let dir = tempfile::tempdir().unwrap();
    let service = Service::start(dir.path(), &["--workers", "2"]);
    let ids: Vec<String> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..8)
            .map(|_| {
                s.spawn(|| {
                    let (code, body) = submit(&service, "?energy=arap", &grid_obj(8));
                    accepted(code, &body)
                })
            })
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    for id in &ids {
        let job = wait_status(&service, id, &["done", "failed"], Duration::from_secs(40));
        assert_eq!(job["status"], "done", "{job}");
        check_results(&service, id, 8);
    }
}

#[test]
fn restarts_after_sigterm_and_kill_lose_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let args = ["--workers", "1", "--shutdown-grace", "0"];

    // A finished job, then a big one interrupted by SIGTERM while running.
    let service = Service::start(dir.path(), &args);
    let (code, body) = submit(&service, "?energy=arap", &grid_obj(6));
    let small = accepted(code, &body);
    wait_status(&service, &small, &["done"], Duration::from_secs(20));
    let (code, body) = submit(&service, "", &grid_obj(BIG_GRID));
    let big = accepted(code, &body);
    wait_status(&service, &big, &["running"], Duration::from_secs(10));
    assert_eq!(service.terminate(), Some(0));

    // Restarted, the big job runs again; kill -9 it mid-run.
    let service = Service::start(dir.path(), &args);
    let job = wait_status(
        &service,
        &big,
        &["running", "done"],
        Duration::from_secs(10),
    );
    assert_eq!(
        job["status"], "running",
        "the job should still be running: {job}"
    );
    let (code, body) = submit(&service, "?energy=arap", &grid_obj(5));
    let queued = accepted(code, &body);
    service.kill_hard();

    // After the crash every acknowledged job completes and the old results remain.
    let service = Service::start(dir.path(), &args);
    check_results(&service, &small, 6);
    for (id, grid) in [(&big, BIG_GRID), (&queued, 5)] {
        let job = wait_status(&service, id, &["done", "failed"], Duration::from_secs(40));
        assert_eq!(job["status"], "done", "{job}");
        check_results(&service, id, grid);
    }
    assert_eq!(service.terminate(), Some(0));
}
