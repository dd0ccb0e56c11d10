//! In-process tests of the HTTP job service with a scripted test runner (a test
//! double for the flattening pipeline): API answers, durability across restarts,
//! recovery rules, timeouts, the queue bound. Everything listens on 127.0.0.1:0.
//!
//! Expected values are the API contract of the task (status codes, JSON shapes) and
//! the bytes the scripted runner is defined to produce.

use polyflat::progress::Progress;
use polyflat::serve::{self, Config, JobFiles, JobId, JobRunner, Store};
use polyflat::{Error, Settings};
use serde_json::Value;
use std::net::SocketAddr;
use std::path::Path;
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// Test double driven by comment lines in the OBJ text:
/// `# sleep-ms N` makes the run take N ms (reported as 10 progress steps),
/// `# fail TEXT` makes the run fail with TEXT. Validation accepts only blank lines,
/// comments, `v` and `f` lines, naming the first other line like the OBJ reader.
/// A run returns: obj = input + "vt 0 0\n", report = `{"lines": N}`, atlas = PNG magic.
struct ScriptedRunner;

const PNG_MAGIC: &[u8] = b"\x89PNG\r\n\x1a\n";

fn directive<'a>(text: &'a str, key: &str) -> Option<&'a str> {
    text.lines()
        .find_map(|l| l.strip_prefix("# ")?.strip_prefix(key)?.strip_prefix(' '))
}

impl JobRunner for ScriptedRunner {
    fn run(&self, text: &str, _: &Settings, progress: &dyn Progress) -> Result<JobFiles, Error> {
        if let Some(ms) = directive(text, "sleep-ms").and_then(|v| v.parse::<u64>().ok()) {
            progress.begin("sleep", 10);
            for step in 1..=10 {
                std::thread::sleep(Duration::from_millis(ms / 10));
                progress.advance(step);
            }
            progress.end();
        }
        if let Some(message) = directive(text, "fail") {
            return Err(Error::Solve {
                chart: 0,
                message: message.to_owned(),
            });
        }
        Ok(JobFiles {
            obj: format!("{text}vt 0 0\n").into_bytes(),
            report: format!("{{\"lines\": {}}}", text.lines().count()).into_bytes(),
            atlas: PNG_MAGIC.to_vec(),
        })
    }

    fn validate(&self, text: &str, _: &Settings) -> Result<(), Error> {
        for (i, line) in text.lines().enumerate() {
            let t = line.trim();
            if !(t.is_empty() || t.starts_with('#') || t.starts_with("v ") || t.starts_with("f ")) {
                return Err(Error::Parse {
                    file: "upload.obj".into(),
                    line: i + 1,
                    message: format!("unknown record '{t}'"),
                });
            }
        }
        Ok(())
    }
}

const QUAD: &str = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nf 1 2 3 4\n";

fn slow_quad(ms: u64) -> String {
    format!("# sleep-ms {ms}\n{QUAD}")
}

struct TestServer {
    address: SocketAddr,
    stop: Option<tokio::sync::oneshot::Sender<()>>,
    thread: Option<JoinHandle<Result<(), Error>>>,
}

impl TestServer {
    fn start(config: Config) -> TestServer {
        let (ready_tx, ready_rx) = std::sync::mpsc::channel();
        let (stop_tx, stop_rx) = tokio::sync::oneshot::channel::<()>();
        let thread = std::thread::spawn(move || {
            serve::run_until(
                config,
                Arc::new(ScriptedRunner),
                move |a| {
                    let _ = ready_tx.send(a);
                },
                move || async move {
                    let _ = stop_rx.await;
                },
            )
        });
        let address = ready_rx
            .recv_timeout(Duration::from_secs(10))
            .expect("server did not start");
        TestServer {
            address,
            stop: Some(stop_tx),
            thread: Some(thread),
        }
    }

    fn url(&self, path: &str) -> String {
        format!("http://{}{path}", self.address)
    }

    fn stop(mut self) {
        self.shutdown();
    }

    fn shutdown(&mut self) {
        if let Some(stop) = self.stop.take() {
            let _ = stop.send(());
        }
        if let Some(t) = self.thread.take() {
            t.join()
                .expect("server thread panicked")
                .expect("server failed");
        }
    }
}

impl Drop for TestServer {
    fn drop(&mut self) {
        self.shutdown();
    }
}

fn config(dir: &Path) -> Config {
    let mut c = Config::new(dir.to_path_buf());
    c.listen = SocketAddr::from(([127, 0, 0, 1], 0));
    c.workers = 2;
    c.quiet = true;
    c.shutdown_grace = Duration::from_secs(5);
    c
}

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(Duration::from_secs(20)))
        .build()
        .into()
}

fn json_of(resp: &mut ureq::http::Response<ureq::Body>) -> Value {
    serde_json::from_str(&resp.body_mut().read_to_string().unwrap()).unwrap()
}

fn submit(server: &TestServer, query: &str, body: &str) -> (u16, Value) {
    let mut r = agent()
        .post(server.url(&format!("/v1/jobs{query}")))
        .send(body)
        .unwrap();
    (r.status().as_u16(), json_of(&mut r))
}

fn get_json(server: &TestServer, path: &str) -> (u16, Value) {
    let mut r = agent().get(server.url(path)).call().unwrap();
    (r.status().as_u16(), json_of(&mut r))
}

/// Sends only the head of a `POST /v1/jobs` declaring a `len`-byte body with
/// `Expect: 100-continue` (as curl does for large files) and returns the answer's text.
fn post_head_only(address: SocketAddr, len: usize) -> String {
    use std::io::{Read, Write};
    let mut stream = std::net::TcpStream::connect(address).unwrap();
    stream
        .set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    write!(
        stream,
        "POST /v1/jobs HTTP/1.1\r\nHost: {address}\r\nContent-Length: {len}\r\nExpect: 100-continue\r\nConnection: close\r\n\r\n"
    )
    .unwrap();
    let mut answer = Vec::new();
    let _ = stream.read_to_end(&mut answer);
    String::from_utf8_lossy(&answer).into_owned()
}

/// Sends a `POST /v1/jobs` whose `len`-byte body is one chunk of a chunked transfer
/// (no `Content-Length`) and returns the answer's text.
fn post_chunked(address: SocketAddr, len: usize) -> String {
    use std::io::{Read, Write};
    let mut stream = std::net::TcpStream::connect(address).unwrap();
    stream
        .set_read_timeout(Some(Duration::from_secs(10)))
        .unwrap();
    write!(
        stream,
        "POST /v1/jobs HTTP/1.1\r\nHost: {address}\r\nTransfer-Encoding: chunked\r\nConnection: close\r\n\r\n{len:x}\r\n{}\r\n0\r\n\r\n",
        "#".repeat(len)
    )
    .unwrap();
    let mut answer = Vec::new();
    let _ = stream.read_to_end(&mut answer);
    String::from_utf8_lossy(&answer).into_owned()
}

/// Polls the job until it is done or failed; returns its final JSON.
fn wait_finished(server: &TestServer, id: &str, limit: Duration) -> Value {
    let start = Instant::now();
    loop {
        let (code, job) = get_json(server, &format!("/v1/jobs/{id}"));
        assert_eq!(code, 200, "{job}");
        if job["status"] == "done" || job["status"] == "failed" {
            return job;
        }
        assert!(start.elapsed() < limit, "job {id} unfinished: {job}");
        std::thread::sleep(Duration::from_millis(25));
    }
}

fn accepted_id(code: u16, body: &Value) -> String {
    assert_eq!(code, 202, "{body}");
    assert_eq!(body["status"], "queued");
    body["id"].as_str().unwrap().to_owned()
}

#[test]
fn submit_poll_download() {
    let dir = tempfile::tempdir().unwrap();
    let server = TestServer::start(config(dir.path()));
    let (code, health) = get_json(&server, "/healthz");
    assert_eq!(code, 200);
    assert_eq!(health["status"], "ok");

    let (code, body) = submit(&server, "?energy=arap&padding=2", QUAD);
    let id = accepted_id(code, &body);
    assert!(JobId::parse(&id).is_some(), "{id}");
    let job = wait_finished(&server, &id, Duration::from_secs(10));
    assert_eq!(job["status"], "done", "{job}");
    assert_eq!(job["progress"], 1.0);
    assert_eq!(job["error"], Value::Null);

    let files: [(&str, &str, Vec<u8>); 3] = [
        (
            "result.obj",
            "model/obj",
            format!("{QUAD}vt 0 0\n").into_bytes(),
        ),
        (
            "report.json",
            "application/json",
            b"{\"lines\": 5}".to_vec(),
        ),
        ("atlas.png", "image/png", PNG_MAGIC.to_vec()),
    ];
    for (name, content_type, expected) in files {
        let mut r = agent()
            .get(server.url(&format!("/v1/jobs/{id}/{name}")))
            .call()
            .unwrap();
        assert_eq!(r.status(), 200, "{name}");
        assert_eq!(r.headers()["content-type"], content_type);
        assert_eq!(r.body_mut().read_to_vec().unwrap(), expected, "{name}");
    }
    // The upload and results live in the job's folder inside the data folder.
    let job_dir = dir.path().join("jobs").join(&id);
    assert_eq!(
        std::fs::read_to_string(job_dir.join("input.obj")).unwrap(),
        QUAD
    );
    server.stop();
}

#[test]
fn errors_have_status_codes_and_name_the_problem() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = config(dir.path());
    c.max_upload_bytes = 1024;
    let server = TestServer::start(c);

    let (code, body) = submit(&server, "", &format!("{QUAD}# fine\nbogus 1 2\n"));
    assert_eq!(code, 400);
    assert_eq!(body["error"], "upload.obj:7: unknown record 'bogus 1 2'");

    let (code, body) = submit(&server, "?energy=cotan", QUAD);
    assert_eq!(code, 400);
    assert!(
        body["error"]
            .as_str()
            .unwrap()
            .starts_with("option energy: 'cotan'"),
        "{body}"
    );
    let (code, body) = submit(&server, "?colour=red", QUAD);
    assert_eq!(code, 400);
    assert!(
        body["error"]
            .as_str()
            .unwrap()
            .contains("unknown option 'colour'"),
        "{body}"
    );

    let head = post_head_only(server.address, 1025);
    assert!(head.starts_with("HTTP/1.1 413"), "{head}");
    assert!(head.contains("--max-upload-mb"), "{head}");
    // Without Content-Length the limit applies while reading.
    let answer = post_chunked(server.address, 1025);
    assert!(answer.starts_with("HTTP/1.1 413"), "{answer}");

    let unknown = JobId::generate();
    for path in [
        format!("/v1/jobs/{unknown}"),
        format!("/v1/jobs/{unknown}/result.obj"),
        "/v1/jobs/not-an-id".to_owned(),
        "/v1/jobs/..%2F..%2Fjobs.sqlite".to_owned(),
        "/v1/jobs/..%2F..%2Fjobs.sqlite/result.obj".to_owned(),
        "/nowhere".to_owned(),
    ] {
        let (code, body) = get_json(&server, &path);
        assert_eq!(code, 404, "{path}: {body}");
        assert!(body["error"].is_string(), "{path}: {body}");
    }

    // 409 before done, and a file name outside the three results is 404.
    let (code, body) = submit(&server, "", &slow_quad(1500));
    let id = accepted_id(code, &body);
    let (code, body) = get_json(&server, &format!("/v1/jobs/{id}/report.json"));
    assert_eq!(code, 409, "{body}");
    let (code, _) = get_json(&server, &format!("/v1/jobs/{id}/input.obj"));
    assert_eq!(code, 404);
    server.stop();
}

#[test]
fn failed_job_reports_its_reason_and_has_no_files() {
    let dir = tempfile::tempdir().unwrap();
    let server = TestServer::start(config(dir.path()));
    let (code, body) = submit(&server, "", &format!("# fail no layout found\n{QUAD}"));
    let id = accepted_id(code, &body);
    let job = wait_finished(&server, &id, Duration::from_secs(10));
    assert_eq!(job["status"], "failed");
    assert_eq!(job["error"], "chart 0: no layout found");
    let (code, body) = get_json(&server, &format!("/v1/jobs/{id}/result.obj"));
    assert_eq!(code, 409);
    assert!(body["error"].as_str().unwrap().contains("no layout found"));
    server.stop();
}

#[test]
fn progress_is_reported_while_running() {
    let dir = tempfile::tempdir().unwrap();
    let server = TestServer::start(config(dir.path()));
    let (code, body) = submit(&server, "", &slow_quad(3000));
    let id = accepted_id(code, &body);
    let start = Instant::now();
    let mut seen = Vec::new();
    loop {
        let (_, job) = get_json(&server, &format!("/v1/jobs/{id}"));
        if job["status"] == "done" {
            break;
        }
        seen.push(job["progress"].as_f64().unwrap());
        assert!(start.elapsed() < Duration::from_secs(10));
        std::thread::sleep(Duration::from_millis(100));
    }
    // Throttled writes (every 500 ms) of a 3 s run: some value strictly between 0 and 1,
    // and never decreasing.
    assert!(seen.iter().any(|p| *p > 0.0 && *p < 1.0), "{seen:?}");
    assert!(seen.windows(2).all(|w| w[0] <= w[1]), "{seen:?}");
    server.stop();
}

#[test]
fn job_timeout_marks_failed_with_reason() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = config(dir.path());
    c.job_timeout = Duration::from_secs(1);
    let server = TestServer::start(c);
    let (code, body) = submit(&server, "", &slow_quad(2500));
    let id = accepted_id(code, &body);
    let job = wait_finished(&server, &id, Duration::from_secs(10));
    assert_eq!(job["status"], "failed");
    assert!(
        job["error"].as_str().unwrap().contains("--job-timeout"),
        "{job}"
    );
    // The abandoned run's later result is ignored: still failed after it ended.
    std::thread::sleep(Duration::from_millis(2000));
    let (_, job) = get_json(&server, &format!("/v1/jobs/{id}"));
    assert_eq!(job["status"], "failed");
    assert!(!dir
        .path()
        .join("jobs")
        .join(&id)
        .join("result.obj")
        .exists());
    server.stop();
}

#[test]
fn full_queue_answers_429_with_retry_after() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = config(dir.path());
    c.workers = 1;
    c.max_queue = 2;
    c.shutdown_grace = Duration::from_millis(100);
    let server = TestServer::start(c);
    let (code, body) = submit(&server, "", &slow_quad(3000));
    let first = accepted_id(code, &body);
    // Wait until the worker holds the first job, then fill the queue.
    let start = Instant::now();
    while get_json(&server, &format!("/v1/jobs/{first}")).1["status"] != "running" {
        assert!(start.elapsed() < Duration::from_secs(5));
        std::thread::sleep(Duration::from_millis(10));
    }
    for _ in 0..2 {
        let (code, body) = submit(&server, "", &slow_quad(3000));
        accepted_id(code, &body);
    }
    let mut r = agent()
        .post(server.url("/v1/jobs"))
        .send(slow_quad(3000))
        .unwrap();
    assert_eq!(r.status(), 429);
    assert_eq!(r.headers()["retry-after"], "5");
    assert!(json_of(&mut r)["error"]
        .as_str()
        .unwrap()
        .contains("--max-queue"));
    server.stop();
}

#[test]
fn eight_concurrent_submissions_all_finish() {
    let dir = tempfile::tempdir().unwrap();
    let server = TestServer::start(config(dir.path()));
    let ids: Vec<String> = std::thread::scope(|s| {
        let handles: Vec<_> = (0..8)
            .map(|i| {
                let server = &server;
                s.spawn(move || {
                    let (code, body) =
                        submit(server, "", &format!("# job {i}\n{}", slow_quad(200)));
                    accepted_id(code, &body)
                })
            })
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    let unique: std::collections::HashSet<_> = ids.iter().collect();
    assert_eq!(unique.len(), 8);
    for (i, id) in ids.iter().enumerate() {
        let job = wait_finished(&server, id, Duration::from_secs(20));
        assert_eq!(job["status"], "done", "{job}");
        let mut r = agent()
            .get(server.url(&format!("/v1/jobs/{id}/result.obj")))
            .call()
            .unwrap();
        let obj = r.body_mut().read_to_string().unwrap();
        assert!(obj.starts_with(&format!("# job {i}\n")), "{obj}");
    }
    server.stop();
}

#[test]
fn shutdown_requeues_running_job_and_restart_finishes_it() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = config(dir.path());
    c.shutdown_grace = Duration::from_millis(200);
    let server = TestServer::start(c.clone());
    let (code, body) = submit(&server, "", &slow_quad(2000));
    let id = accepted_id(code, &body);
    let start = Instant::now();
    while get_json(&server, &format!("/v1/jobs/{id}")).1["status"] != "running" {
        assert!(start.elapsed() < Duration::from_secs(5));
        std::thread::sleep(Duration::from_millis(10));
    }
    server.stop();
    // The grace period (0.2 s) is shorter than the job (2 s): it went back to the queue.
    let (store, recovery) = Store::open(dir.path()).unwrap();
    assert_eq!(
        recovery.interrupted, 0,
        "shutdown should have re-queued it itself"
    );
    let job = store.get(&JobId::parse(&id).unwrap()).unwrap().unwrap();
    assert_eq!(job.status.as_str(), "queued");
    drop(store);

    let server = TestServer::start(c);
    let job = wait_finished(&server, &id, Duration::from_secs(10));
    assert_eq!(job["status"], "done", "{job}");
    server.stop();
}

#[test]
fn grace_period_lets_a_short_job_finish() {
    let dir = tempfile::tempdir().unwrap();
    let server = TestServer::start(config(dir.path()));
    let (code, body) = submit(&server, "", &slow_quad(600));
    let id = accepted_id(code, &body);
    let start = Instant::now();
    while get_json(&server, &format!("/v1/jobs/{id}")).1["status"] != "running" {
        assert!(start.elapsed() < Duration::from_secs(5));
        std::thread::sleep(Duration::from_millis(10));
    }
    server.stop();
    let (store, _) = Store::open(dir.path()).unwrap();
    let job = store.get(&JobId::parse(&id).unwrap()).unwrap().unwrap();
    assert_eq!(job.status.as_str(), "done");
}

#[test]
fn recovery_requeues_interrupted_and_incomplete_jobs() {
    let dir = tempfile::tempdir().unwrap();
    let settings = Settings::default();
    let (running, done_ok, done_broken, lost_input, orphan) = (
        JobId::generate(),
        JobId::generate(),
        JobId::generate(),
        JobId::generate(),
        JobId::generate(),
    );
    {
        let (store, _) = Store::open(dir.path()).unwrap();
        for id in [&running, &done_ok, &done_broken, &lost_input] {
            store.save_input(id, QUAD.as_bytes()).unwrap();
            store.insert_queued(id, &settings, 64).unwrap();
        }
        let files = JobFiles {
            obj: b"o".to_vec(),
            report: b"{}".to_vec(),
            atlas: PNG_MAGIC.to_vec(),
        };
        for _ in 0..3 {
            let claim = store.claim_next().unwrap().unwrap();
            if claim.id != running {
                store.save_results(&claim.id, &files).unwrap();
                assert!(store.mark_done(&claim.id, claim.attempt, &files).unwrap());
            }
        }
        // Simulated crash damage: a result file gone, an upload gone, an upload
        // stored without its row, a temporary file left by an interrupted write.
        std::fs::remove_file(store.job_dir(&done_broken).join("atlas.png")).unwrap();
        std::fs::remove_file(store.job_dir(&lost_input).join("input.obj")).unwrap();
        store.save_input(&orphan, QUAD.as_bytes()).unwrap();
        std::fs::write(store.job_dir(&done_ok).join(".tmpXYZ"), b"partial").unwrap();
    } // dropped without any shutdown, like a killed process

    let (store, recovery) = Store::open(dir.path()).unwrap();
    assert_eq!(recovery.interrupted, 1);
    assert_eq!(recovery.missing_results, 1);
    assert_eq!(recovery.missing_input, 1);
    assert_eq!(recovery.orphans_removed, 1);
    let status = |id: &JobId| store.get(id).unwrap().unwrap().status.as_str();
    assert_eq!(status(&running), "queued");
    assert_eq!(status(&done_ok), "done");
    assert_eq!(status(&done_broken), "queued");
    assert_eq!(status(&lost_input), "failed");
    assert!(!store.job_dir(&orphan).exists());
    assert!(!store.job_dir(&done_ok).join(".tmpXYZ").exists());
    // A stale attempt can no longer write: the interrupted run was attempt 1.
    assert!(!store.mark_done(&running, 1, &JobFiles::default()).unwrap());
    let claim = store.claim_next().unwrap().unwrap();
    assert_eq!((claim.id.clone(), claim.attempt), (running.clone(), 2));
}
