//! `DIR/summary.json` and `DIR/summary.csv`: one row per input, in input order.

use serde::{Deserialize, Serialize};

/// What happened to one input.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    /// Flattened and written by this run.
    Done,
    /// Not flattened or not written; `error` says why.
    Failed,
    /// Outputs from an earlier run match the input, settings and tool version.
    Skipped,
}

/// The metrics the summary lists (DESIGN.md §3 names); `None` when failed or absent.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct KeyMetrics {
    /// Area-weighted L2 stretch (≥ 1).
    pub stretch_l2: Option<f64>,
    /// Largest per-face L∞ stretch.
    pub stretch_linf: Option<f64>,
    /// Area-weighted mean of σ1/σ2.
    pub angle_distortion_mean: Option<f64>,
    /// Area-weighted mean of |ln(σ1'σ2')|.
    pub area_distortion_mean: Option<f64>,
    /// Faces with non-positive orientation in UV.
    pub flipped_faces: Option<u64>,
    /// Pairs of faces whose UV polygons overlap.
    pub overlapping_face_pairs: Option<u64>,
    /// UV polygon area over the unit square.
    pub utilization: Option<f64>,
    /// Number of charts.
    pub charts: Option<u64>,
}

impl KeyMetrics {
    /// Picks the summary metrics out of a job's global metrics.
    pub fn from_map(map: &serde_json::Map<String, serde_json::Value>) -> Self {
        let f = |k: &str| map.get(k).and_then(serde_json::Value::as_f64);
        let n = |k: &str| map.get(k).and_then(serde_json::Value::as_u64);
        KeyMetrics {
            stretch_l2: f("stretch_l2"),
            stretch_linf: f("stretch_linf"),
            angle_distortion_mean: f("angle_distortion_mean"),
            area_distortion_mean: f("area_distortion_mean"),
            flipped_faces: n("flipped_faces"),
            overlapping_face_pairs: n("overlapping_face_pairs"),
            utilization: f("utilization"),
            charts: n("charts"),
        }
    }
}

/// One input's line in the summary.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SummaryRow {
    /// The input path as given (manifest entries: joined to the manifest's folder).
    pub input: String,
    /// The OBJ output's file name inside DIR (`<name>.obj`; the report and atlas
    /// share `<name>`), written when the status is done or skipped; `None` when
    /// the input is not an asset (a missing path, a folder without OBJ files).
    pub output: Option<String>,
    /// The input's own stem when a name clash gave it another `<name>`.
    pub renamed_from: Option<String>,
    /// What happened.
    pub status: Status,
    /// The one-sentence reason when failed.
    pub error: Option<String>,
    /// Wall time spent on this input, in milliseconds.
    pub time_ms: u64,
    /// The metrics (of the run that wrote the outputs, for skipped inputs).
    #[serde(flatten)]
    pub metrics: KeyMetrics,
}

/// Column order of `summary.csv` (the JSON rows have the same keys).
pub const COLUMNS: [&str; 14] = [
    "input",
    "output",
    "renamed_from",
    "status",
    "error",
    "time_ms",
    "stretch_l2",
    "stretch_linf",
    "angle_distortion_mean",
    "area_distortion_mean",
    "flipped_faces",
    "overlapping_face_pairs",
    "utilization",
    "charts",
];

/// The outcome of a batch run.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Summary {
    /// One row per input, in input order.
    pub rows: Vec<SummaryRow>,
}

impl Summary {
    /// How many rows have `status`.
    pub fn count(&self, status: Status) -> usize {
        self.rows.iter().filter(|r| r.status == status).count()
    }

    /// The process exit code: 1 if any input failed, else 0.
    pub fn exit_code(&self) -> i32 {
        i32::from(self.count(Status::Failed) > 0)
    }

    /// `summary.json`: a pretty-printed JSON list of the rows.
    pub fn to_json(&self) -> Vec<u8> {
        let mut out = serde_json::to_vec_pretty(&self.rows).unwrap_or_default();
        out.push(b'\n');
        out
    }

    /// `summary.csv`: a header and one line per row, quoted per RFC 4180
    /// (empty cell for null, `\n` line ends).
    pub fn to_csv(&self) -> Vec<u8> {
        let mut out = COLUMNS.join(",");
        out.push('\n');
        for row in &self.rows {
            let value = serde_json::to_value(row).unwrap_or_default();
            let cells: Vec<String> = COLUMNS
                .iter()
                .map(|c| match value.get(c) {
                    None | Some(serde_json::Value::Null) => String::new(),
                    Some(serde_json::Value::String(s)) => csv_cell(s),
                    Some(other) => csv_cell(&other.to_string()),
                })
                .collect();
            out.push_str(&cells.join(","));
            out.push('\n');
        }
        out.into_bytes()
    }
}

/// Quotes a cell when it holds a comma, quote, line break or edge space.
fn csv_cell(s: &str) -> String {
    let needs = s.contains([',', '"', '\n', '\r']) || s.starts_with(' ') || s.ends_with(' ');
    if needs {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_owned()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(input: &str, error: Option<&str>) -> SummaryRow {
        SummaryRow {
            input: input.into(),
            output: Some("a.obj".into()),
            renamed_from: None,
            status: if error.is_some() {
                Status::Failed
            } else {
                Status::Done
            },
            error: error.map(str::to_owned),
            time_ms: 12,
            metrics: KeyMetrics {
                stretch_l2: error.is_none().then_some(1.5),
                charts: error.is_none().then_some(3),
                ..KeyMetrics::default()
            },
        }
    }

    #[test]
    fn json_rows_carry_exactly_the_csv_columns() {
        let s = Summary {
            rows: vec![row("a.obj", None)],
        };
        let v: serde_json::Value = serde_json::from_slice(&s.to_json()).unwrap();
        let keys: Vec<&String> = v[0].as_object().unwrap().keys().collect();
        let mut cols: Vec<&str> = COLUMNS.to_vec();
        cols.sort_unstable();
        assert_eq!(keys, cols);
        assert_eq!(v[0]["status"], "done");
        assert_eq!(v[0]["stretch_l2"], 1.5);
        assert_eq!(v[0]["utilization"], serde_json::Value::Null);
    }

    #[test]
    fn csv_quotes_commas_quotes_and_line_breaks() {
        let s = Summary {
            rows: vec![
                row("plain.obj", None),
                row("we,ird \"x\".obj", Some("x.obj:3: bad\nline")),
            ],
        };
        let csv = String::from_utf8(s.to_csv()).unwrap();
        let lines: Vec<&str> = csv.split('\n').collect();
        assert_eq!(lines[0], COLUMNS.join(","));
        assert_eq!(lines[1], "plain.obj,a.obj,,done,,12,1.5,,,,,,,3");
        assert_eq!(
            lines[2],
            "\"we,ird \"\"x\"\".obj\",a.obj,,failed,\"x.obj:3: bad"
        );
        assert_eq!(lines[3], "line\",12,,,,,,,,");
        assert_eq!(s.exit_code(), 1);
        assert_eq!(s.count(Status::Done), 1);
    }
}
