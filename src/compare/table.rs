//! `comparison.md`: one table row per energy with the numbers of `comparison.json`,
//! a sentence naming the lowest L2 stretch and the lowest mean angle distortion,
//! and the suggested energy ([`super::suggestion`]).

use super::{first_min, suggestion, Row};
use crate::settings::Settings;
use std::fmt::Write;

/// Column headers, in table order.
pub const COLUMNS: [&str; 12] = [
    "energy",
    "iterations",
    "solve time (ms)",
    "stretch L2",
    "stretch L∞",
    "angle mean",
    "angle max",
    "area mean",
    "area max",
    "flipped faces",
    "overlapping pairs",
    "utilization",
];

/// The Markdown text of `comparison.md` for `rows` of the mesh `input_name`;
/// `settings` are the runs' (with `seams` the mode used, as reports state it).
pub fn markdown(input_name: &str, rows: &[Row], settings: &Settings) -> String {
    let mut out = String::new();
    let charts = rows.first().map_or(0, |r| r.global.charts);
    let charts = if charts == 1 {
        "1 chart".to_string()
    } else {
        format!("{charts} charts")
    };
    let seams = settings.seams.map_or("keep or auto", |m| m.as_str());
    let _ = writeln!(out, "# Energy comparison: {input_name}\n");
    let _ = writeln!(
        out,
        "Every energy flattened the same {charts} (seams: {seams}) and was packed at \
         {} px with {} px padding. Distortions are measured after the common rescale \
         (1 is ideal for stretch and angle, 0 for area); time is the solve stage's wall clock.\n",
        settings.resolution, settings.padding
    );
    let _ = writeln!(out, "| {} |", COLUMNS.join(" | "));
    let _ = writeln!(out, "|---|{}", "---:|".repeat(COLUMNS.len() - 1));
    for r in rows {
        let m = &r.global.metrics;
        let _ = writeln!(
            out,
            "| {} | {} | {:.1} | {:.6} | {:.4} | {:.4} | {:.4} | {:.4} | {:.4} | {} | {} | {:.3} |",
            r.global.energy,
            r.global.iterations,
            r.time_ms,
            m.stretch_l2,
            m.stretch_linf,
            m.angle_distortion_mean,
            m.angle_distortion_max,
            m.area_distortion_mean,
            m.area_distortion_max,
            m.flipped_faces,
            m.overlapping_face_pairs,
            m.utilization
        );
    }
    out.push('\n');
    if let Some(sentence) = lowest_sentence(rows) {
        let _ = writeln!(out, "{sentence}\n");
    }
    if let Some(sentence) = suggestion_sentence(rows) {
        let _ = writeln!(out, "{sentence}");
    }
    out
}

/// "X has the lowest L2 stretch (…) and Y the lowest mean angle distortion (…)."
pub fn lowest_sentence(rows: &[Row]) -> Option<String> {
    let stretch = first_min(rows, |r| r.global.metrics.stretch_l2)?;
    let angle = first_min(rows, |r| r.global.metrics.angle_distortion_mean)?;
    let (s, a) = (
        stretch.global.metrics.stretch_l2,
        angle.global.metrics.angle_distortion_mean,
    );
    Some(if stretch.global.energy == angle.global.energy {
        format!(
            "{} has both the lowest L2 stretch ({s:.6}) and the lowest mean angle distortion ({a:.4}).",
            stretch.global.energy
        )
    } else {
        format!(
            "{} has the lowest L2 stretch ({s:.6}) and {} the lowest mean angle distortion ({a:.4}).",
            stretch.global.energy, angle.global.energy
        )
    })
}

/// "Suggested energy: X — …", the line scripts look for.
pub fn suggestion_sentence(rows: &[Row]) -> Option<String> {
    let (r, clean) = suggestion(rows)?;
    Some(if clean {
        format!(
            "Suggested energy: {} (the lowest L2 stretch among the layouts without flipped faces or overlaps).",
            r.global.energy
        )
    } else {
        format!(
            "Suggested energy: {} (the lowest L2 stretch; every layout has flipped faces or overlaps, so check its atlas).",
            r.global.energy
        )
    })
}
