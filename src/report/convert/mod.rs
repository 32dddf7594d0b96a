//! Figure formats: every figure is drawn once as SVG, and [`convert`] turns
//! it into the formats asked for (PDF, PNG), the same drawing in each.
//!
//! All three show their text in the one font shipped with runcast
//! (`assets/fonts/DejaVuSans.ttf`, licence beside it), loaded from the binary:
//! the SVG names it first, and the PDF and PNG are laid out with it alone, so
//! they look the same on any machine, with or without system fonts.
//!
//! - PDF (`pdf.rs`): one vector page of the figure's size, text kept as text
//!   in a subset of the font embedded in the file.
//! - PNG (`png.rs`): the figure rasterised at `dpi` dots per inch.

mod pdf;
mod png;

use super::{Kind, Report, ReportError};
use std::fmt;
use std::str::FromStr;
use std::sync::{Arc, LazyLock};
use svg2pdf::usvg;

/// The font of every figure's text, shipped with runcast.
const FONT: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
/// Its family name, as the SVG names it and the font declares it.
pub const FONT_FAMILY: &str = "DejaVu Sans";

/// Dots per inch of a PNG unless asked otherwise.
pub const DEFAULT_DPI: u32 = 300;
/// Resolutions accepted for PNG: from a thumbnail to print quality; the upper
/// end keeps a 900 x 600 pixel figure below 350 MB of memory while drawn.
pub const DPI_RANGE: std::ops::RangeInclusive<u32> = 10..=1200;
/// SVG pixels per inch (CSS Values and Units Level 3, §5.2).
const SVG_PIXELS_PER_INCH: f32 = 96.0;

/// A file format for figures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureFormat {
    Svg,
    Pdf,
    Png,
}

impl FigureFormat {
    const ALL: [FigureFormat; 3] = [FigureFormat::Svg, FigureFormat::Pdf, FigureFormat::Png];

    /// The file extension, also the name on the command line.
    pub fn extension(self) -> &'static str {
        match self {
            FigureFormat::Svg => "svg",
            FigureFormat::Pdf => "pdf",
            FigureFormat::Png => "png",
        }
    }
}

impl fmt::Display for FigureFormat {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.extension())
    }
}

impl FromStr for FigureFormat {
    type Err = String;

    fn from_str(text: &str) -> Result<Self, Self::Err> {
        FigureFormat::ALL
            .into_iter()
            .find(|format| format.extension() == text)
            .ok_or_else(|| format!("unknown figure format '{text}' (expected svg, pdf or png)"))
    }
}

/// The formats every figure of a run is written in, and the PNG resolution.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FigureFormats {
    formats: Vec<FigureFormat>,
    dpi: u32,
}

impl FigureFormats {
    /// `formats` in the order given, each once; `dpi` within [`DPI_RANGE`].
    /// None when `formats` is empty or `dpi` out of range.
    pub fn new(formats: &[FigureFormat], dpi: u32) -> Option<FigureFormats> {
        let mut unique = Vec::new();
        for &format in formats {
            if !unique.contains(&format) {
                unique.push(format);
            }
        }
        (!unique.is_empty() && DPI_RANGE.contains(&dpi)).then_some(FigureFormats {
            formats: unique,
            dpi,
        })
    }

    /// SVG only, the default.
    pub fn svg() -> FigureFormats {
        FigureFormats {
            formats: vec![FigureFormat::Svg],
            dpi: DEFAULT_DPI,
        }
    }
}

/// `reports` with each figure replaced by its files in every format of
/// `formats` (tables and documents unchanged, order kept).
pub fn convert(reports: Vec<Report>, formats: &FigureFormats) -> Result<Vec<Report>, ReportError> {
    let mut converted = Vec::with_capacity(reports.len() * formats.formats.len());
    for report in reports {
        if report.kind != Kind::Figure {
            converted.push(report);
            continue;
        }
        for &format in &formats.formats {
            converted.push(Report {
                name: with_extension(&report.name, format),
                kind: Kind::Figure,
                bytes: figure_bytes(&report, format, formats.dpi)?,
            });
        }
    }
    Ok(converted)
}

/// The names a product's output set takes on disk in a run writing
/// `formats`: every figure (an `.svg` name) in each of those formats, other
/// names as they are. A figure in another format belongs to an earlier run
/// that asked for it, so a run writing SVG only never counts an earlier PDF
/// as its own.
pub fn family_names(family: &[&str], formats: &FigureFormats) -> Vec<String> {
    family
        .iter()
        .flat_map(|name| match name.strip_suffix(".svg") {
            Some(_) => formats
                .formats
                .iter()
                .map(|&format| with_extension(name, format))
                .collect(),
            None => vec![name.to_string()],
        })
        .collect()
}

/// `name` (a figure's `.svg` file name) with the extension of `format`.
fn with_extension(name: &str, format: FigureFormat) -> String {
    let stem = name.strip_suffix(".svg").unwrap_or(name);
    format!("{stem}.{}", format.extension())
}

fn figure_bytes(report: &Report, format: FigureFormat, dpi: u32) -> Result<Vec<u8>, ReportError> {
    let failed = |message: String| ReportError::Convert {
        file: with_extension(&report.name, format),
        message,
    };
    let tree =
        || usvg::Tree::from_data(&report.bytes, &svg_options()).map_err(|error| error.to_string());
    match format {
        FigureFormat::Svg => Ok(report.bytes.clone()),
        FigureFormat::Pdf => tree()
            .and_then(|tree| pdf::pdf_bytes(&tree))
            .map_err(failed),
        FigureFormat::Png => tree()
            .and_then(|tree| png::png_bytes(&tree, dpi))
            .map_err(failed),
    }
}

/// How SVGs are read: the shipped font and nothing else.
fn svg_options() -> usvg::Options<'static> {
    static FONTS: LazyLock<Arc<usvg::fontdb::Database>> = LazyLock::new(|| {
        let mut fonts = usvg::fontdb::Database::new();
        fonts.load_font_data(FONT.to_vec());
        fonts.set_sans_serif_family(FONT_FAMILY);
        Arc::new(fonts)
    });
    usvg::Options {
        font_family: FONT_FAMILY.to_string(),
        fontdb: Arc::clone(&FONTS),
        ..usvg::Options::default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats_are_read_by_extension_and_kept_once_in_order() {
        let formats: Vec<FigureFormat> = ["png", "svg", "png"]
            .iter()
            .map(|text| text.parse().unwrap())
            .collect();
        let formats = FigureFormats::new(&formats, 72).unwrap();
        assert_eq!(formats.formats, [FigureFormat::Png, FigureFormat::Svg]);
        assert_eq!(
            "eps".parse::<FigureFormat>().unwrap_err(),
            "unknown figure format 'eps' (expected svg, pdf or png)"
        );
        assert_eq!(FigureFormats::new(&[], 300), None);
        assert_eq!(FigureFormats::new(&[FigureFormat::Png], 9), None);
        assert_eq!(FigureFormats::new(&[FigureFormat::Png], 1201), None);
    }

    #[test]
    fn figures_stand_for_the_formats_written() {
        let family = ["plot.svg", "table.csv"];
        let formats = FigureFormats::new(&[FigureFormat::Pdf, FigureFormat::Png], 300).unwrap();
        assert_eq!(
            family_names(&family, &formats),
            ["plot.pdf", "plot.png", "table.csv"]
        );
        assert_eq!(
            family_names(&family, &FigureFormats::svg()),
            ["plot.svg", "table.csv"]
        );
    }

    #[test]
    fn tables_pass_unchanged_and_figures_become_each_format() {
        let svg = "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"96\" height=\"48\">\
<text x=\"4\" y=\"30\" font-family=\"DejaVu Sans\" font-size=\"20\">Z_A</text></svg>";
        let reports = vec![
            Report {
                name: "a.svg".into(),
                kind: Kind::Figure,
                bytes: svg.as_bytes().to_vec(),
            },
            Report {
                name: "a.csv".into(),
                kind: Kind::Table,
                bytes: b"1\n".to_vec(),
            },
        ];
        let formats = [FigureFormat::Pdf, FigureFormat::Png, FigureFormat::Svg];
        let converted = convert(reports, &FigureFormats::new(&formats, 192).unwrap()).unwrap();
        let names: Vec<&str> = converted
            .iter()
            .map(|report| report.name.as_str())
            .collect();
        assert_eq!(names, ["a.pdf", "a.png", "a.svg", "a.csv"]);
        assert!(converted[0].bytes.starts_with(b"%PDF-"));
        // 96 x 48 SVG pixels at 192 dpi: twice as many (PNG IHDR, ISO/IEC 15948, §11.2.2).
        assert_eq!(converted[1].bytes[16..24], [0, 0, 0, 192, 0, 0, 0, 96]);
        assert_eq!(converted[2].bytes, svg.as_bytes());
        assert_eq!(converted[3].bytes, b"1\n");
    }

    #[test]
    fn an_svg_that_does_not_parse_is_a_located_error() {
        let report = Report {
            name: "broken.svg".into(),
            kind: Kind::Figure,
            bytes: b"<svg".to_vec(),
        };
        let error = convert(
            vec![report],
            &FigureFormats::new(&[FigureFormat::Pdf], 300).unwrap(),
        )
        .unwrap_err()
        .to_string();
        assert!(error.starts_with("cannot render broken.pdf: "), "{error}");
    }
}
