//! OBJ reader.
//!
//! Input: OBJ text (UTF-8; `\n` or `\r\n` line ends; `\` at the end of a line joins it
//! with the next; `#` starts a comment). Output: an [`ObjFile`].
//!
//! Statements read:
//! - `v x y z [w]` or `v x y z r g b [a]`: a position (extra numbers are kept verbatim
//!   on write-back, not used);
//! - `vt u [v [w]]`: a texture coordinate (`v` defaults to 0, `w` is ignored);
//! - `vn x y z`: a normal (kept verbatim; faces keep their normal indices);
//! - `f c1 c2 c3 …` with corners `v`, `v/vt`, `v//vn` or `v/vt/vn`; indices are 1-based,
//!   negative ones count back from the last record read so far;
//! - everything else (`o`, `g`, `usemtl`, `mtllib`, `s`, comments, blank lines, `l`, `p`,
//!   free-form statements …) is kept verbatim for write-back and otherwise ignored;
//!   `l` and `p` (lines and points are not faces) and unknown statements are listed in
//!   [`ObjFile::notes`]. Texture references inside `l` statements are dropped because the
//!   old `vt` records are not written back.
//!
//! Texture coordinates are kept only when every face has them on every corner; otherwise
//! [`PolyMesh::corner_uvs`] is `None` and a note says how many faces lack them.
//!
//! Errors (one sentence, `file:line: …`): a bad number, a non-finite coordinate, a
//! position with other than 3, 4, 6 or 7 numbers, a malformed corner, index 0, an index
//! beyond the records the file defines, a face with fewer than 3 corners or the same
//! vertex twice, and a face of zero area.

use crate::error::{Error, Result};
use crate::mesh::{PolyMesh, Problem};
use crate::operators::face::area_normal;
use nalgebra::{Point2, Point3};
use std::borrow::Cow;
use std::path::{Path, PathBuf};

/// Marks a face corner without a normal (or a texture coordinate) reference.
pub(crate) const NONE: u32 = u32::MAX;

/// One statement of the source, in order, as needed for write-back.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Statement {
    /// A line written back verbatim: `kept[start..end]`.
    Kept { start: usize, end: usize },
    /// The next face of the mesh (faces appear in mesh order).
    Face,
}

/// An OBJ file as read: the mesh plus everything needed to write it back.
#[derive(Debug, Clone, PartialEq)]
pub struct ObjFile {
    /// The polygon mesh: every `v` record, every face, and UVs when every face has them.
    pub mesh: PolyMesh,
    /// The path the file was read from (as given), `None` for text parsed from memory.
    /// Writing refuses to overwrite this file.
    pub source: Option<PathBuf>,
    /// Observations that do not stop flattening (lines and points ignored, faces
    /// without texture coordinates, unknown statements).
    pub notes: Vec<Problem>,
    /// Text of the statements kept for write-back, one after another.
    pub(crate) kept: String,
    /// Every statement except `vt`, in input order.
    pub(crate) statements: Vec<Statement>,
    /// Number of `vn` records.
    pub(crate) normal_count: usize,
    /// Normal index (0-based) of every face corner, [`NONE`] when the corner has none.
    pub(crate) corner_normals: Vec<u32>,
}

impl ObjFile {
    /// Number of `vn` records in the file.
    pub fn normal_count(&self) -> usize {
        self.normal_count
    }

    /// Whether any face corner refers to a normal.
    pub fn has_normals(&self) -> bool {
        self.corner_normals.iter().any(|&n| n != NONE)
    }
}

/// Reads the OBJ file at `path`; error messages name the file as `path` is written.
///
/// Bytes that are not valid UTF-8 (possible only in comments and names) are replaced
/// by U+FFFD.
pub fn read_obj(path: &Path) -> Result<ObjFile> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, "read", e))?;
    let text = String::from_utf8_lossy(&bytes);
    let mut obj = parse_obj(&text, &path.display().to_string())?;
    obj.source = Some(path.to_path_buf());
    Ok(obj)
}

/// Parses OBJ text; `file_name` is used in error messages.
pub fn parse_obj(text: &str, file_name: &str) -> Result<ObjFile> {
    let mut p = Parser::new(file_name);
    let mut lines = text.split('\n').enumerate().peekable();
    while let Some((index, first)) = lines.next() {
        let line_no = index + 1;
        let mut logical: Cow<'_, str> = Cow::Borrowed(strip_cr(first));
        while logical.trim_end().ends_with('\\') {
            let mut joined = logical.trim_end().to_string();
            joined.pop();
            match lines.next() {
                Some((_, next)) => {
                    joined.push(' ');
                    joined.push_str(strip_cr(next));
                }
                None => {
                    logical = Cow::Owned(joined);
                    break;
                }
            }
            logical = Cow::Owned(joined);
        }
        // The split yields one empty piece after a final newline; it is not a line.
        if logical.is_empty() && lines.peek().is_none() {
            break;
        }
        p.statement(&logical, line_no)?;
    }
    p.finish()
}

fn strip_cr(line: &str) -> &str {
    line.strip_suffix('\r').unwrap_or(line)
}

/// Parser state while reading statements in order.
struct Parser<'a> {
    file: &'a str,
    positions: Vec<Point3<f64>>,
    uvs: Vec<Point2<f64>>,
    normal_count: usize,
    face_offsets: Vec<usize>,
    face_vertices: Vec<u32>,
    corner_uvs: Vec<u32>,
    corner_normals: Vec<u32>,
    face_lines: Vec<usize>,
    kept: String,
    statements: Vec<Statement>,
    /// Counts of `l`, `p` and unknown statements, in first-seen order.
    ignored: Vec<(String, usize)>,
}

impl<'a> Parser<'a> {
    fn new(file: &'a str) -> Self {
        Parser {
            file,
            positions: Vec::new(),
            uvs: Vec::new(),
            normal_count: 0,
            face_offsets: vec![0],
            face_vertices: Vec::new(),
            corner_uvs: Vec::new(),
            corner_normals: Vec::new(),
            face_lines: Vec::new(),
            kept: String::new(),
            statements: Vec::new(),
            ignored: Vec::new(),
        }
    }

    fn error(&self, line: usize, message: String) -> Error {
        Error::Parse {
            file: self.file.to_string(),
            line,
            message,
        }
    }

    fn keep(&mut self, text: &str) {
        let start = self.kept.len();
        self.kept.push_str(text.trim_end());
        self.statements.push(Statement::Kept {
            start,
            end: self.kept.len(),
        });
    }

    fn note_ignored(&mut self, keyword: &str) {
        match self.ignored.iter_mut().find(|(k, _)| k == keyword) {
            Some((_, n)) => *n += 1,
            None => self.ignored.push((keyword.to_string(), 1)),
        }
    }

    fn statement(&mut self, line: &str, line_no: usize) -> Result<()> {
        let content = match line.bytes().position(|b| b == b'#') {
            Some(i) => &line[..i],
            None => line,
        };
        let mut tokens = content.split_ascii_whitespace();
        let Some(keyword) = tokens.next() else {
            self.keep(line);
            return Ok(());
        };
        match keyword {
            "v" => {
                let mut xyz = [0.0; 3];
                let mut count = 0;
                for token in tokens {
                    let value = self.number(token, "vertex coordinate", line_no)?;
                    if let Some(slot) = xyz.get_mut(count) {
                        *slot = value;
                    }
                    count += 1;
                }
                if !matches!(count, 3 | 4 | 6 | 7) {
                    return Err(self.error(
                        line_no,
                        format!(
                            "vertex has {count} numbers; expected x y z, x y z w or x y z r g b"
                        ),
                    ));
                }
                self.positions.push(Point3::from(xyz));
                self.keep(line);
            }
            "vt" => {
                let mut uv = [0.0; 2];
                let mut count = 0;
                for token in tokens {
                    let value = self.number(token, "texture coordinate", line_no)?;
                    if let Some(slot) = uv.get_mut(count) {
                        *slot = value;
                    }
                    count += 1;
                }
                if !(1..=3).contains(&count) {
                    return Err(self.error(
                        line_no,
                        format!("texture coordinate has {count} numbers; expected u, u v or u v w"),
                    ));
                }
                self.uvs.push(Point2::from(uv));
            }
            "vn" => {
                let mut count = 0;
                for token in tokens {
                    self.number(token, "normal coordinate", line_no)?;
                    count += 1;
                }
                if count != 3 {
                    return Err(self.error(
                        line_no,
                        format!("normal has {count} numbers; expected x y z"),
                    ));
                }
                self.normal_count += 1;
                self.keep(line);
            }
            "f" => {
                self.face(tokens, line_no)?;
                self.statements.push(Statement::Face);
            }
            "l" => {
                self.note_ignored("l");
                let mut rebuilt = String::from("l");
                for token in tokens {
                    rebuilt.push(' ');
                    rebuilt.push_str(token.split('/').next().unwrap_or(token));
                }
                self.keep(&rebuilt);
            }
            "o" | "g" | "usemtl" | "mtllib" | "s" => self.keep(line),
            other => {
                self.note_ignored(other);
                self.keep(line);
            }
        }
        Ok(())
    }

    fn number(&self, token: &str, what: &str, line_no: usize) -> Result<f64> {
        match token.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(v),
            Ok(_) => Err(self.error(line_no, format!("{what} `{token}` is not a finite number"))),
            Err(_) => Err(self.error(line_no, format!("{what} `{token}` is not a number"))),
        }
    }

    /// Resolves a 1-based (or negative, relative) index to 0-based. Positive indices
    /// are range-checked in [`Parser::finish`] so that forward references work.
    fn index(&self, token: &str, what: &str, defined: usize, line_no: usize) -> Result<u32> {
        let value = parse_int(token).ok_or_else(|| {
            self.error(
                line_no,
                format!("face corner `{token}` has a {what} index that is not a whole number"),
            )
        })?;
        if value == 0 {
            return Err(self.error(
                line_no,
                format!("face refers to {what} 0; OBJ indices start at 1"),
            ));
        }
        let resolved = if value > 0 {
            value - 1
        } else {
            let r = defined as i64 + value;
            if r < 0 {
                return Err(self.error(
                    line_no,
                    format!(
                        "face refers to {what} {value}, but the file defines only {} before this line",
                        count_of(defined, what)
                    ),
                ));
            }
            r
        };
        u32::try_from(resolved)
            .ok()
            .filter(|&r| r != NONE)
            .ok_or_else(|| {
                self.error(
                    line_no,
                    format!("face refers to {what} {value}, more than polyflat supports"),
                )
            })
    }

    fn face<'t>(&mut self, tokens: impl Iterator<Item = &'t str>, line_no: usize) -> Result<()> {
        let start = self.face_vertices.len();
        for token in tokens {
            let (v, vt, vn, extra) = split_corner(token);
            let malformed =
                v.is_empty() || extra || (vt == Some("") && vn.is_none()) || vn == Some("");
            if malformed {
                return Err(self.error(
                    line_no,
                    format!("face corner `{token}` is not one of v, v/vt, v//vn or v/vt/vn"),
                ));
            }
            let vi = self.index(v, "vertex", self.positions.len(), line_no)?;
            let ti = match vt {
                Some(t) if !t.is_empty() => {
                    self.index(t, "texture coordinate", self.uvs.len(), line_no)?
                }
                _ => NONE,
            };
            let ni = match vn {
                Some(n) => self.index(n, "normal", self.normal_count, line_no)?,
                None => NONE,
            };
            self.face_vertices.push(vi);
            self.corner_uvs.push(ti);
            self.corner_normals.push(ni);
        }
        let corners = &self.face_vertices[start..];
        if corners.len() < 3 {
            return Err(self.error(
                line_no,
                format!(
                    "face has {} corners; a face needs at least 3",
                    corners.len()
                ),
            ));
        }
        if let Some(v) = repeated(corners) {
            return Err(self.error(
                line_no,
                format!(
                    "face uses vertex {} twice; each corner of a face must be a different vertex",
                    v as u64 + 1
                ),
            ));
        }
        self.face_offsets.push(self.face_vertices.len());
        self.face_lines.push(line_no);
        Ok(())
    }

    fn finish(self) -> Result<ObjFile> {
        let face_count = self.face_lines.len();
        let mut faces_without_uvs = 0usize;
        for f in 0..face_count {
            let (Some(&a), Some(&b), Some(&line)) = (
                self.face_offsets.get(f),
                self.face_offsets.get(f + 1),
                self.face_lines.get(f),
            ) else {
                continue;
            };
            let mut has_uvs = true;
            for c in a..b {
                let v = self.face_vertices.get(c).copied().unwrap_or(NONE);
                if v as usize >= self.positions.len() {
                    return Err(self.error(
                        line,
                        format!(
                            "face refers to vertex {}, but the file defines only {}",
                            v as u64 + 1,
                            count_of(self.positions.len(), "vertex")
                        ),
                    ));
                }
                let t = self.corner_uvs.get(c).copied().unwrap_or(NONE);
                if t == NONE {
                    has_uvs = false;
                } else if t as usize >= self.uvs.len() {
                    return Err(self.error(
                        line,
                        format!(
                            "face refers to texture coordinate {}, but the file defines only {}",
                            t as u64 + 1,
                            count_of(self.uvs.len(), "texture coordinate")
                        ),
                    ));
                }
                let n = self.corner_normals.get(c).copied().unwrap_or(NONE);
                if n != NONE && n as usize >= self.normal_count {
                    return Err(self.error(
                        line,
                        format!(
                            "face refers to normal {}, but the file defines only {}",
                            n as u64 + 1,
                            count_of(self.normal_count, "normal")
                        ),
                    ));
                }
            }
            if !has_uvs {
                faces_without_uvs += 1;
            }
        }

        let mut mesh = PolyMesh {
            positions: self.positions,
            face_offsets: self.face_offsets,
            face_vertices: self.face_vertices,
            uvs: Vec::new(),
            corner_uvs: None,
            face_lines: self.face_lines,
        };
        let mut corners = Vec::new();
        for f in 0..face_count {
            corners.clear();
            corners.extend(
                mesh.face_vertices
                    .get(face_range(&mesh.face_offsets, f))
                    .unwrap_or(&[])
                    .iter()
                    .filter_map(|&v| mesh.positions.get(v as usize)),
            );
            if let Err(e) = area_normal(&corners) {
                let line = mesh.face_lines.get(f).copied().unwrap_or(0);
                return Err(Error::Parse {
                    file: self.file.to_string(),
                    line,
                    message: format!("face {} {e}; remove it or move its corners apart", f + 1),
                });
            }
        }

        let mut notes = Vec::new();
        if face_count > 0 && faces_without_uvs == 0 {
            mesh.uvs = self.uvs;
            mesh.corner_uvs = Some(self.corner_uvs);
        } else if faces_without_uvs < face_count {
            notes.push(Problem::note(format!(
                "{faces_without_uvs} of {face_count} faces have no texture coordinates, so the file's UVs are ignored"
            )));
        }
        for (keyword, count) in &self.ignored {
            let sentence = match keyword.as_str() {
                "l" => format!("{count} line statements (`l`) are not faces; they are kept in the output but not flattened"),
                "p" => format!("{count} point statements (`p`) are not faces; they are kept in the output but not flattened"),
                k => format!("{count} `{k}` statements are not understood; they are kept in the output but not used"),
            };
            notes.push(Problem::note(sentence));
        }

        Ok(ObjFile {
            mesh,
            source: None,
            notes,
            kept: self.kept,
            statements: self.statements,
            normal_count: self.normal_count,
            corner_normals: self.corner_normals,
        })
    }
}

/// Corner range of face `f` (empty when the offsets are inconsistent).
fn face_range(offsets: &[usize], f: usize) -> std::ops::Range<usize> {
    match (offsets.get(f), offsets.get(f + 1)) {
        (Some(&a), Some(&b)) if a <= b => a..b,
        _ => 0..0,
    }
}

/// Splits a face corner `v[/vt[/vn]]` into its parts; the flag is set when the token
/// has more than two slashes.
fn split_corner(token: &str) -> (&str, Option<&str>, Option<&str>, bool) {
    let bytes = token.as_bytes();
    let Some(a) = bytes.iter().position(|&b| b == b'/') else {
        return (token, None, None, false);
    };
    let (v, rest) = (
        token.get(..a).unwrap_or(""),
        token.get(a + 1..).unwrap_or(""),
    );
    let Some(b) = rest.bytes().position(|c| c == b'/') else {
        return (v, Some(rest), None, false);
    };
    let (vt, vn) = (rest.get(..b).unwrap_or(""), rest.get(b + 1..).unwrap_or(""));
    (v, Some(vt), Some(vn), vn.contains('/'))
}

/// A whole number with an optional sign, `None` on anything else or on overflow.
fn parse_int(token: &str) -> Option<i64> {
    let bytes = token.as_bytes();
    let (negative, digits) = match bytes.first() {
        Some(b'-') => (true, bytes.get(1..)?),
        Some(b'+') => (false, bytes.get(1..)?),
        _ => (false, bytes),
    };
    if digits.is_empty() {
        return None;
    }
    let mut value: i64 = 0;
    for &d in digits {
        if !d.is_ascii_digit() {
            return None;
        }
        value = value.checked_mul(10)?.checked_add(i64::from(d - b'0'))?;
    }
    Some(if negative { -value } else { value })
}

/// "1 vertex", "4 vertices", "0 normals".
fn count_of(n: usize, what: &str) -> String {
    match (n, what) {
        (1, _) => format!("1 {what}"),
        (_, "vertex") => format!("{n} vertices"),
        _ => format!("{n} {what}s"),
    }
}

/// The first vertex that appears twice in `corners`, if any.
fn repeated(corners: &[u32]) -> Option<u32> {
    if corners.len() <= 16 {
        for (i, &v) in corners.iter().enumerate() {
            if corners[i + 1..].contains(&v) {
                return Some(v);
            }
        }
        None
    } else {
        let mut sorted = corners.to_vec();
        sorted.sort_unstable();
        sorted.windows(2).find(|w| w[0] == w[1]).map(|w| w[0])
    }
}
