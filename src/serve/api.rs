//! HTTP routes. Every answer except a file download is JSON; errors are
//! `{"error": "one sentence"}` with a fitting status code.

use super::id::JobId;
use super::runner::JobRunner;
use super::store::{Admission, JobStatus, Store, RESULT_FILES};
use super::worker::Doorbell;
use crate::settings::Settings;
use axum::body::{Body, Bytes, HttpBody};
use axum::extract::{Path, Query, Request, State};
use axum::http::{header, HeaderMap, HeaderValue, StatusCode};
use axum::response::{IntoResponse, Response};
use axum::routing::{get, post};
use axum::{Json, Router};
use serde_json::json;
use std::collections::HashSet;
use std::sync::Arc;

/// Seconds a client is asked to wait after a `429` (queue full).
const RETRY_AFTER_SECS: u64 = 5;

/// The options a submission accepts, as query parameters with the CLI's names.
const OPTIONS: [&str; 7] = [
    "energy",
    "seams",
    "resolution",
    "padding",
    "projection-weight",
    "atlas-metric",
    "max-iterations",
];

/// What every handler needs.
#[derive(Clone)]
pub(crate) struct AppState {
    pub(crate) store: Arc<Store>,
    pub(crate) runner: Arc<dyn JobRunner>,
    pub(crate) doorbell: Doorbell,
    pub(crate) max_queue: usize,
    pub(crate) max_upload_bytes: usize,
    pub(crate) quiet: bool,
}

/// The service's routes.
pub(crate) fn router(state: AppState) -> Router {
    Router::new()
        .route("/healthz", get(healthz))
        .route("/v1/jobs", post(submit))
        .route("/v1/jobs/{id}", get(job_status))
        .route("/v1/jobs/{id}/{file}", get(download))
        .fallback(|| async { ApiError::new(StatusCode::NOT_FOUND, "no such route") })
        .with_state(state)
}

/// An error answer.
struct ApiError {
    status: StatusCode,
    message: String,
}

impl ApiError {
    fn new(status: StatusCode, message: impl Into<String>) -> Self {
        ApiError {
            status,
            message: message.into(),
        }
    }

    fn bad_request(message: impl Into<String>) -> Self {
        ApiError::new(StatusCode::BAD_REQUEST, message)
    }

    /// A server-side failure: the detail goes to the log, the client gets a sentence
    /// that reveals no paths.
    fn internal(state: &AppState, detail: impl std::fmt::Display) -> Self {
        if !state.quiet {
            eprintln!("polyflat serve: {detail}");
        }
        ApiError::new(
            StatusCode::INTERNAL_SERVER_ERROR,
            "the server could not complete the request; its log has the details",
        )
    }

    fn queue_full(max_queue: usize) -> Response {
        let mut response = ApiError::new(
            StatusCode::TOO_MANY_REQUESTS,
            format!("the queue already holds {max_queue} jobs (--max-queue); retry later"),
        )
        .into_response();
        response
            .headers_mut()
            .insert(header::RETRY_AFTER, HeaderValue::from(RETRY_AFTER_SECS));
        response
    }
}

impl IntoResponse for ApiError {
    fn into_response(self) -> Response {
        (self.status, Json(json!({ "error": self.message }))).into_response()
    }
}

async fn healthz(State(state): State<AppState>) -> Result<Response, ApiError> {
    let store = Arc::clone(&state.store);
    let counts = tokio::task::spawn_blocking(move || store.counts())
        .await
        .map_err(|e| ApiError::internal(&state, e))?
        .map_err(|e| ApiError::internal(&state, e))?;
    Ok(Json(json!({
        "status": "ok",
        "jobs": {
            "queued": counts.queued,
            "running": counts.running,
            "done": counts.done,
            "failed": counts.failed,
        }
    }))
    .into_response())
}

/// Builds [`Settings`] from query parameters; the error names the option.
fn parse_settings(pairs: &[(String, String)]) -> Result<Settings, String> {
    fn number<T: std::str::FromStr>(name: &str, value: &str, kind: &str) -> Result<T, String> {
        value
            .parse()
            .map_err(|_| format!("option {name}: '{value}' is not {kind}"))
    }
    let mut settings = Settings::default();
    let mut seen = HashSet::new();
    for (name, value) in pairs {
        if !seen.insert(name.as_str()) {
            return Err(format!("option {name} is given more than once"));
        }
        let named = |e: String| format!("option {name}: {e}");
        match name.as_str() {
            "energy" => settings.energy = value.parse().map_err(named)?,
            "seams" => settings.seams = Some(value.parse().map_err(named)?),
            "atlas-metric" => settings.atlas_metric = value.parse().map_err(named)?,
            "resolution" => settings.resolution = number(name, value, "a whole number of texels")?,
            "padding" => settings.padding = number(name, value, "a whole number of texels")?,
            "projection-weight" => settings.projection_weight = number(name, value, "a number")?,
            "max-iterations" => settings.max_iterations = number(name, value, "a whole number")?,
            _ => {
                return Err(format!(
                    "unknown option '{name}'; the options are {}",
                    OPTIONS.join(", ")
                ))
            }
        }
    }
    settings.validate()?;
    Ok(settings)
}

/// Reads the body, refusing more than `limit` bytes with `413` (from the
/// `Content-Length` header when there is one, before reading anything).
async fn read_body(request: Request, limit: usize) -> Result<Bytes, ApiError> {
    let too_large = || {
        ApiError::new(
            StatusCode::PAYLOAD_TOO_LARGE,
            format!(
                "the mesh is larger than the server's upload limit of {} MB (--max-upload-mb)",
                limit / (1024 * 1024)
            ),
        )
    };
    let declared = request
        .headers()
        .get(header::CONTENT_LENGTH)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.parse::<u64>().ok());
    if declared.is_some_and(|n| n > limit as u64) {
        return Err(too_large());
    }
    let mut body = std::pin::pin!(request.into_body());
    let mut bytes = Vec::with_capacity(declared.map_or(0, |n| n as usize));
    while let Some(frame) = std::future::poll_fn(|cx| body.as_mut().poll_frame(cx)).await {
        let frame = frame
            .map_err(|e| ApiError::bad_request(format!("could not read the request body: {e}")))?;
        if let Ok(data) = frame.into_data() {
            if bytes.len() + data.len() > limit {
                return Err(too_large());
            }
            bytes.extend_from_slice(&data);
        }
    }
    Ok(Bytes::from(bytes))
}

/// `POST /v1/jobs?OPTIONS` with the OBJ text as body: validates, stores the upload,
/// commits a `queued` row, then answers `202`.
async fn submit(State(state): State<AppState>, request: Request) -> Result<Response, ApiError> {
    let Query(pairs) = Query::<Vec<(String, String)>>::try_from_uri(request.uri())
        .map_err(|e| ApiError::bad_request(format!("the query string is malformed: {e}")))?;
    let settings = parse_settings(&pairs).map_err(ApiError::bad_request)?;
    let body = read_body(request, state.max_upload_bytes).await?;
    // Like the command line's OBJ reader: bytes that are not UTF-8 (possible only in
    // comments and names) become U+FFFD.
    let text = String::from_utf8_lossy(&body).into_owned();

    let store = Arc::clone(&state.store);
    let counts = tokio::task::spawn_blocking(move || store.counts())
        .await
        .map_err(|e| ApiError::internal(&state, e))?
        .map_err(|e| ApiError::internal(&state, e))?;
    if usize::try_from(counts.queued).unwrap_or(usize::MAX) >= state.max_queue {
        return Ok(ApiError::queue_full(state.max_queue));
    }

    let runner = Arc::clone(&state.runner);
    let check_settings = settings.clone();
    let checked =
        tokio::task::spawn_blocking(move || runner.validate(&text, &check_settings).map(|()| text))
            .await
            .map_err(|e| ApiError::internal(&state, e))?;
    let text = checked.map_err(|e| ApiError::bad_request(e.to_string()))?;

    let id = JobId::generate();
    let store = Arc::clone(&state.store);
    let max_queue = state.max_queue;
    let job = id.clone();
    let admitted = tokio::task::spawn_blocking(move || -> Result<Admission, crate::Error> {
        store.save_input(&job, text.as_bytes())?;
        let admission = store.insert_queued(&job, &settings, max_queue);
        if !matches!(admission, Ok(Admission::Accepted)) {
            store.remove_job_dir(&job)?;
        }
        admission
    })
    .await
    .map_err(|e| ApiError::internal(&state, e))?
    .map_err(|e| ApiError::internal(&state, e))?;
    if admitted == Admission::QueueFull {
        return Ok(ApiError::queue_full(max_queue));
    }
    state.doorbell.ring();

    let location = format!("/v1/jobs/{id}");
    let mut response = (
        StatusCode::ACCEPTED,
        Json(json!({ "id": id.as_str(), "status": JobStatus::Queued.as_str() })),
    )
        .into_response();
    if let Ok(value) = HeaderValue::from_str(&location) {
        response.headers_mut().insert(header::LOCATION, value);
    }
    Ok(response)
}

/// Parses a path id; a malformed id is as unknown as a missing one.
fn path_id(text: &str) -> Result<JobId, ApiError> {
    JobId::parse(text).ok_or_else(|| {
        ApiError::new(
            StatusCode::NOT_FOUND,
            "no such job (job ids are 32 lowercase hex digits)",
        )
    })
}

async fn lookup(state: &AppState, id: &JobId) -> Result<super::store::JobView, ApiError> {
    let store = Arc::clone(&state.store);
    let job = id.clone();
    tokio::task::spawn_blocking(move || store.get(&job))
        .await
        .map_err(|e| ApiError::internal(state, e))?
        .map_err(|e| ApiError::internal(state, e))?
        .ok_or_else(|| ApiError::new(StatusCode::NOT_FOUND, format!("no job has the id {id}")))
}

/// `GET /v1/jobs/{id}`.
async fn job_status(
    State(state): State<AppState>,
    Path(id): Path<String>,
) -> Result<Response, ApiError> {
    let id = path_id(&id)?;
    let job = lookup(&state, &id).await?;
    Ok(Json(json!({
        "id": job.id.as_str(),
        "status": job.status.as_str(),
        "progress": job.progress,
        "error": job.error,
    }))
    .into_response())
}

/// `GET /v1/jobs/{id}/{file}` for `result.obj`, `report.json` or `atlas.png`.
async fn download(
    State(state): State<AppState>,
    Path((id, file)): Path<(String, String)>,
) -> Result<Response, ApiError> {
    let id = path_id(&id)?;
    let Some(name) = RESULT_FILES.iter().find(|n| **n == file) else {
        return Err(ApiError::new(
            StatusCode::NOT_FOUND,
            format!("no such file; a job offers {}", RESULT_FILES.join(", ")),
        ));
    };
    let job = lookup(&state, &id).await?;
    match job.status {
        JobStatus::Done => {}
        JobStatus::Failed => {
            return Err(ApiError::new(
                StatusCode::CONFLICT,
                format!(
                    "job {id} failed, so it has no results: {}",
                    job.error.unwrap_or_default()
                ),
            ))
        }
        status => {
            return Err(ApiError::new(
                StatusCode::CONFLICT,
                format!(
                    "job {id} is {}; its results are ready when its status is done",
                    status.as_str()
                ),
            ))
        }
    }
    let path = state.store.job_dir(&id).join(name);
    let read_path = path.clone();
    let bytes = tokio::task::spawn_blocking(move || std::fs::read(read_path))
        .await
        .map_err(|e| ApiError::internal(&state, e))?
        .map_err(|e| ApiError::internal(&state, format!("{}: {e}", path.display())))?;
    let content_type = match *name {
        "result.obj" => "model/obj",
        "report.json" => "application/json",
        _ => "image/png",
    };
    let mut headers = HeaderMap::new();
    headers.insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    if let Ok(value) = HeaderValue::from_str(&format!("attachment; filename=\"{id}-{name}\"")) {
        headers.insert(header::CONTENT_DISPOSITION, value);
    }
    Ok((headers, Body::from(bytes)).into_response())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pairs(items: &[(&str, &str)]) -> Vec<(String, String)> {
        items
            .iter()
            .map(|(k, v)| ((*k).to_owned(), (*v).to_owned()))
            .collect()
    }

    #[test]
    fn options_use_cli_names_and_defaults() {
        let s = parse_settings(&[]).unwrap();
        assert_eq!(s, Settings::default());
        let s = parse_settings(&pairs(&[
            ("energy", "arap"),
            ("seams", "auto"),
            ("resolution", "512"),
            ("padding", "2"),
            ("projection-weight", "0.5"),
        ]))
        .unwrap();
        assert_eq!(s.energy.as_str(), "arap");
        assert_eq!(s.seams.map(|m| m.as_str()), Some("auto"));
        assert_eq!((s.resolution, s.padding), (512, 2));
        assert_eq!(s.projection_weight, 0.5);
    }

    #[test]
    fn bad_options_are_named() {
        let cases: [(&[(&str, &str)], &str); 5] = [
            (&[("energy", "cotan")], "option energy"),
            (&[("colour", "red")], "unknown option 'colour'"),
            (&[("resolution", "big")], "option resolution"),
            (&[("padding", "300")], "--padding"),
            (
                &[("seams", "keep"), ("seams", "auto")],
                "option seams is given more than once",
            ),
        ];
        for (query, expected) in cases {
            let err = parse_settings(&pairs(query)).unwrap_err();
            assert!(
                err.contains(expected),
                "{err:?} should contain {expected:?}"
            );
        }
    }
}
