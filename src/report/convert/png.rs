//! PNG from the parsed SVG (`resvg`), at a chosen resolution taking an SVG
//! pixel as 1/96 inch (W3C, CSS Values and Units Level 3, §5.2: 1px = 1/96in),
//! with the resolution recorded in a `pHYs` chunk so that documents place it
//! at its physical size.

use super::SVG_PIXELS_PER_INCH;
use svg2pdf::usvg;

/// The figure rasterised at `dpi`: width and height are the SVG's times
/// dpi / 96, rounded up to whole pixels.
pub(super) fn png_bytes(tree: &usvg::Tree, dpi: u32) -> Result<Vec<u8>, String> {
    let scale = dpi as f32 / SVG_PIXELS_PER_INCH;
    let size = tree.size();
    let (width, height) = (
        (size.width() * scale).ceil() as u32,
        (size.height() * scale).ceil() as u32,
    );
    let mut pixmap = resvg::tiny_skia::Pixmap::new(width, height)
        .ok_or_else(|| format!("cannot allocate {width} x {height} pixels"))?;
    let transform = resvg::tiny_skia::Transform::from_scale(scale, scale);
    resvg::render(tree, transform, &mut pixmap.as_mut());
    let png = pixmap.encode_png().map_err(|error| error.to_string())?;
    Ok(with_resolution(png, dpi))
}

/// Inserts a `pHYs` chunk (pixels per metre, unit 1) after `IHDR`, which a
/// PNG encoder writes first: 8 signature bytes, then the 25-byte chunk
/// (PNG specification, ISO/IEC 15948:2003, §11.3.5.3 and §5.3).
fn with_resolution(png: Vec<u8>, dpi: u32) -> Vec<u8> {
    const AFTER_IHDR: usize = 8 + 25;
    let pixels_per_metre = (f64::from(dpi) / 0.0254).round() as u32;
    let mut data = Vec::with_capacity(9);
    data.extend_from_slice(&pixels_per_metre.to_be_bytes());
    data.extend_from_slice(&pixels_per_metre.to_be_bytes());
    data.push(1);
    let mut chunk = Vec::with_capacity(21);
    chunk.extend_from_slice(&(data.len() as u32).to_be_bytes());
    let typed = [b"pHYs".as_slice(), &data].concat();
    chunk.extend_from_slice(&typed);
    chunk.extend_from_slice(&crc32fast::hash(&typed).to_be_bytes());
    [&png[..AFTER_IHDR], &chunk, &png[AFTER_IHDR..]].concat()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resolution_chunk_follows_the_header_with_its_checksum() {
        let header = [b"\x89PNG\r\n\x1a\n".as_slice(), &[0; 25]].concat();
        let png = with_resolution([header.as_slice(), b"IEND"].concat(), 300);
        let chunk = &png[33..54];
        assert_eq!(&chunk[..8], b"\0\0\0\x09pHYs");
        // 300 / 0.0254 m = 11811.02 pixels per metre, unit 1 = metre (§11.3.5.3).
        assert_eq!(chunk[8..12], 11811_u32.to_be_bytes());
        assert_eq!(chunk[12..16], 11811_u32.to_be_bytes());
        assert_eq!(chunk[16], 1);
        // The CRC-32 of ISO 3309 over type and data (PNG specification, §5.3),
        // against the check value 0xCBF43926 of "123456789".
        assert_eq!(crc32fast::hash(b"123456789"), 0xCBF4_3926);
        assert_eq!(chunk[17..21], crc32fast::hash(&chunk[4..17]).to_be_bytes());
        assert_eq!(&png[54..], b"IEND");
    }
}
