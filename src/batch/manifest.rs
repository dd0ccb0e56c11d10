//! Batch manifests: a TOML file listing assets, each with option overrides.
//!
//! ```toml
//! [[asset]]
//! path = "meshes/spot.obj"     # relative to the manifest's folder
//! energy = "arap"              # any flattening option, spelled as on the command line
//! max-iterations = 50
//! ```
//!
//! Every problem is reported as `MANIFEST:LINE: sentence`.

use crate::cli::options::FlattenOptions;
use crate::Error;
use std::ops::Range;
use std::path::{Path, PathBuf};
use toml::de::{DeTable, DeValue};
use toml::Spanned;

/// One `[[asset]]` entry.
#[derive(Debug, Clone, PartialEq)]
pub struct ManifestAsset {
    /// The asset's path, joined to the manifest's folder when relative.
    pub path: PathBuf,
    /// The entry's option overrides.
    pub options: FlattenOptions,
    /// 1-based line of the entry's `path` key, for later error sentences.
    pub line: usize,
}

/// Reads and checks a manifest; the error names the manifest and line.
pub fn read_manifest(manifest: &Path) -> Result<Vec<ManifestAsset>, Error> {
    let text = std::fs::read_to_string(manifest).map_err(|e| Error::io(manifest, "read", e))?;
    parse_manifest(manifest, &text)
}

/// Parses manifest `text`; `manifest` names the file in errors and anchors relative paths.
pub fn parse_manifest(manifest: &Path, text: &str) -> Result<Vec<ManifestAsset>, Error> {
    let src = Source {
        file: manifest,
        text,
    };
    let fail = |span, message| src.fail(span, message);
    let root = DeTable::parse(text).map_err(|e| {
        let message = e.message().lines().next().unwrap_or_default().to_owned();
        fail(e.span().unwrap_or(0..0), message)
    })?;
    let mut assets_value = None;
    for (key, value) in sorted(root.get_ref()) {
        if key.get_ref() != "asset" {
            return Err(fail(
                key.span(),
                format!(
                    "unknown key '{}'; a manifest holds only [[asset]] entries",
                    key.get_ref()
                ),
            ));
        }
        assets_value = Some(value);
    }
    let Some(assets_value) = assets_value else {
        return Err(fail(
            0..0,
            "the manifest lists no assets; add [[asset]] entries with a path".into(),
        ));
    };
    let DeValue::Array(entries) = assets_value.get_ref() else {
        return Err(fail(
            assets_value.span(),
            "write [[asset]] (double brackets, one per asset), not [asset] or asset = …".into(),
        ));
    };
    let base = manifest.parent().unwrap_or(Path::new(""));
    let names = FlattenOptions::names();
    entries
        .iter()
        .map(|entry| {
            let DeValue::Table(table) = entry.get_ref() else {
                return Err(fail(
                    entry.span(),
                    "each asset must be a table with a path".into(),
                ));
            };
            parse_asset(&src, table, entry.span(), base, &names)
        })
        .collect()
}

/// The manifest being parsed, for error sentences.
struct Source<'a> {
    file: &'a Path,
    text: &'a str,
}

impl Source<'_> {
    /// 1-based line of the start of `span`.
    fn line(&self, span: &Range<usize>) -> usize {
        let end = span.start.min(self.text.len());
        self.text.as_bytes()[..end]
            .iter()
            .filter(|&&b| b == b'\n')
            .count()
            + 1
    }

    /// `MANIFEST:LINE: message`.
    fn fail(&self, span: Range<usize>, message: String) -> Error {
        Error::Parse {
            file: self.file.display().to_string(),
            line: self.line(&span),
            message,
        }
    }
}

/// Parses one `[[asset]]` table.
fn parse_asset(
    src: &Source<'_>,
    table: &DeTable<'_>,
    span: Range<usize>,
    base: &Path,
    names: &[String],
) -> Result<ManifestAsset, Error> {
    let fail = |span, message| src.fail(span, message);
    let mut path = None;
    let mut pairs: Vec<(String, String)> = Vec::new();
    for (key, value) in sorted(table) {
        let name = key.get_ref().as_ref();
        if name == "path" {
            let DeValue::String(p) = value.get_ref() else {
                return Err(fail(value.span(), "path must be a string".into()));
            };
            path = Some((base.join(p.as_ref()), key.span()));
            continue;
        }
        if !names.iter().any(|n| n == name) {
            let hint = match names.iter().find(|n| **n == name.replace('_', "-")) {
                Some(n) => format!("did you mean '{n}'?"),
                None => format!("the options are path, {}", names.join(", ")),
            };
            return Err(fail(key.span(), format!("unknown option '{name}'; {hint}")));
        }
        let text = value_text(value.get_ref()).ok_or_else(|| {
            fail(
                value.span(),
                format!("option '{name}' takes one value, written as on the command line"),
            )
        })?;
        FlattenOptions::parse_pairs([(name, text.as_str())])
            .map_err(|message| fail(value.span(), message))?;
        pairs.push((name.to_owned(), text));
    }
    let Some((path, path_span)) = path else {
        return Err(fail(span, "this asset has no path".into()));
    };
    let options = FlattenOptions::parse_pairs(pairs.iter().map(|(k, v)| (k.as_str(), v.as_str())))
        .map_err(|message| fail(path_span.clone(), message))?;
    Ok(ManifestAsset {
        path,
        options,
        line: src.line(&path_span),
    })
}

/// A scalar as the command line would spell it; `None` for tables, arrays, booleans, dates.
fn value_text(value: &DeValue<'_>) -> Option<String> {
    match value {
        DeValue::String(s) => Some(s.to_string()),
        DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix())
            .ok()
            .map(|v| v.to_string()),
        DeValue::Float(f) => Some(f.as_str().to_owned()),
        _ => None,
    }
}

/// A table's entries in file order.
fn sorted<'a, 'i>(
    table: &'a DeTable<'i>,
) -> Vec<(
    &'a Spanned<toml::de::DeString<'i>>,
    &'a Spanned<DeValue<'i>>,
)> {
    let mut entries: Vec<_> = table.iter().collect();
    entries.sort_by_key(|(k, _)| k.span().start);
    entries
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::EnergyKind;

    fn parse(text: &str) -> Result<Vec<ManifestAsset>, String> {
        parse_manifest(Path::new("dir/m.toml"), text).map_err(|e| e.to_string())
    }

    #[test]
    fn assets_keep_order_paths_are_relative_to_the_manifest_and_options_parse() {
        let a = parse(
            "[[asset]]\npath = \"a.obj\"\nenergy = \"arap\"\nmax-iterations = 0x10\n\n\
             [[asset]]\npath = \"/abs/b.obj\"\nprojection-weight = 2\n",
        )
        .unwrap();
        assert_eq!(a.len(), 2);
        assert_eq!(a[0].path, Path::new("dir/a.obj"));
        assert_eq!(a[0].line, 2);
        assert_eq!(a[0].options.energy, Some(EnergyKind::Arap));
        assert_eq!(a[0].options.max_iterations, Some(16));
        assert_eq!(a[1].path, Path::new("/abs/b.obj"));
        assert_eq!(a[1].options.projection_weight, Some(2.0));
        assert_eq!(a[1].line, 7);
    }

    #[test]
    fn errors_name_the_manifest_line_and_the_problem() {
        let cases = [
            (
                "[[asset]]\npath = \"a.obj\"\nenrgy = \"arap\"\n",
                "dir/m.toml:3: unknown option 'enrgy'; the options are path, energy",
            ),
            (
                "[[asset]]\npath = \"a.obj\"\n\nmax_iterations = 3\n",
                "dir/m.toml:4: unknown option 'max_iterations'; did you mean 'max-iterations'?",
            ),
            (
                "[[asset]]\npath = \"a.obj\"\npadding = \"lots\"\n",
                "dir/m.toml:3: invalid value 'lots' for '--padding",
            ),
            (
                "[[asset]]\npath = \"a.obj\"\nseams = true\n",
                "dir/m.toml:3: option 'seams' takes one value",
            ),
            (
                "\n[[asset]]\nenergy = \"arap\"\n",
                "dir/m.toml:2: this asset has no path",
            ),
            (
                "[asset]\npath = \"a.obj\"\n",
                "dir/m.toml:1: write [[asset]]",
            ),
            ("jobs = 3\n", "dir/m.toml:1: unknown key 'jobs'"),
            ("# nothing\n", "dir/m.toml:1: the manifest lists no assets"),
            (
                "[[asset]]\npath = \"a.obj\"\npath = \"b.obj\"\n",
                "dir/m.toml:3: ",
            ),
        ];
        for (text, expected) in cases {
            let e = parse(text).unwrap_err();
            assert!(
                e.starts_with(expected),
                "{text:?}\n  gave {e:?}\n  want {expected:?}…"
            );
            assert_eq!(e.lines().count(), 1, "{e}");
        }
    }
}
