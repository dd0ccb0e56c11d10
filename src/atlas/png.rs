//! Atomic PNG output.

use crate::error::{Error, Result};
use image::codecs::png::PngEncoder;
use image::RgbaImage;
use std::io::{BufWriter, Write};
use std::path::Path;

/// Writes `img` as a PNG to `path` atomically: the bytes go to a temporary file in
/// the target folder, which is renamed over `path` only once complete, so a failed
/// write leaves no partial file.
pub fn write_png(path: &Path, img: &RgbaImage) -> Result<()> {
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let tmp = tempfile::NamedTempFile::new_in(folder)
        .map_err(|e| Error::io(path, "create a temporary file beside", e))?;
    let mut out = BufWriter::new(tmp);
    img.write_with_encoder(PngEncoder::new(&mut out))
        .map_err(|e| Error::io(path, "encode", std::io::Error::other(e)))?;
    out.flush().map_err(|e| Error::io(path, "write", e))?;
    let tmp = out
        .into_inner()
        .map_err(|e| Error::io(path, "write", e.into_error()))?;
    tmp.persist(path)
        .map_err(|e| Error::io(path, "write", e.error))?;
    Ok(())
}

/// Encodes `img` as PNG bytes in memory.
pub fn png_bytes(img: &RgbaImage) -> Result<Vec<u8>> {
    let mut bytes = Vec::new();
    img.write_with_encoder(PngEncoder::new(&mut bytes))
        .map_err(|e| Error::Image(format!("cannot encode the PNG: {e}")))?;
    Ok(bytes)
}
