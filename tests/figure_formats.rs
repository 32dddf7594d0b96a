//! `--format svg,pdf,png` and `--dpi`: every figure in each format, drawn
//! from the same SVG with the font shipped in `assets/fonts/`.
//!
//! PDF structure: ISO 32000-1:2008 (PDF 1.7) — the page tree's `/Count`
//! (§7.7.3.2), `/FontFile2` for an embedded TrueType program (§9.9), a subset
//! font named `TAG+Name` with six capital letters (§9.6.4), and `/ToUnicode`
//! CMaps with `bfchar` entries from glyph codes to UTF-16BE text (§9.10.3).
//! PNG: the signature, then `IHDR` with width and height as big-endian u32
//! (ISO/IEC 15948:2003, §5.2, §11.2.2), and `pHYs` in pixels per metre (§11.3.5.3).

mod common;

use common::Scratch;
use flate2::read::ZlibDecoder;
use std::collections::HashMap;
use std::fs;
use std::io::Read;
use std::path::{Path, PathBuf};

const SHIPPED_FONT: &[u8] = include_bytes!("../assets/fonts/DejaVuSans.ttf");

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name)
}

fn succeeds(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    assert!(
        output.status.success(),
        "runcast {args:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// `runcast binning` on the narrow-peak demo into `out`, with extra arguments.
fn binning(scratch: &Scratch, out: &str, extra: &[&str]) -> String {
    let scenario = demo("narrow_peak.yaml");
    let mut args = vec![
        "binning",
        scenario.to_str().unwrap(),
        "--days",
        "30",
        "--out",
        out,
    ];
    args.extend_from_slice(extra);
    succeeds(scratch, &args)
}

fn names_in(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|entry| entry.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    names
}

/// The figure's size in SVG pixels, from the root element's attributes.
fn svg_size(svg: &str) -> (f64, f64) {
    let attribute = |name: &str| -> f64 {
        let start = svg.find(&format!(" {name}=\"")).unwrap() + name.len() + 3;
        let end = start + svg[start..].find('"').unwrap();
        svg[start..end].parse().unwrap()
    };
    (attribute("width"), attribute("height"))
}

/// Every indirect object `N 0 obj ... endobj` of a PDF, as bytes.
fn pdf_objects(pdf: &[u8]) -> Vec<&[u8]> {
    let text = pdf;
    let mut objects = Vec::new();
    let mut rest = text;
    while let Some(start) = find(rest, b" 0 obj") {
        let body = &rest[start..];
        let end = find(body, b"endobj").expect("every object ends");
        objects.push(&body[..end]);
        rest = &body[end..];
    }
    objects
}

fn find(haystack: &[u8], needle: &[u8]) -> Option<usize> {
    haystack
        .windows(needle.len())
        .position(|window| window == needle)
}

fn contains(haystack: &[u8], needle: &str) -> bool {
    find(haystack, needle.as_bytes()).is_some()
}

/// The stream of an object, inflated when it is `/FlateDecode`d.
fn stream(object: &[u8]) -> Vec<u8> {
    let start = find(object, b"stream\n").unwrap() + 7;
    let end = find(object, b"\nendstream").unwrap();
    let raw = &object[start..end];
    if contains(object, "/FlateDecode") {
        let mut inflated = Vec::new();
        ZlibDecoder::new(raw).read_to_end(&mut inflated).unwrap();
        inflated
    } else {
        raw.to_vec()
    }
}

/// Glyph code to text, from the `bfchar` entries of a ToUnicode CMap.
fn to_unicode(cmap: &str) -> HashMap<u16, String> {
    let hex = |digits: &str| -> Vec<u16> {
        let digits = digits.trim_matches(|c| c == '<' || c == '>');
        (0..digits.len())
            .step_by(4)
            .map(|i| u16::from_str_radix(&digits[i..i + 4], 16).unwrap())
            .collect()
    };
    let start = cmap.find("beginbfchar").unwrap() + "beginbfchar".len();
    let end = cmap.find("endbfchar").unwrap();
    cmap[start..end]
        .lines()
        .filter_map(|line| line.split_once(' '))
        .map(|(code, text)| (hex(code)[0], String::from_utf16(&hex(text.trim())).unwrap()))
        .collect()
}

/// The bytes of each literal string `( ... )` shown with `Tj` in a content
/// stream, escapes resolved (ISO 32000-1, §7.3.4.2).
fn shown_strings(content: &[u8]) -> Vec<Vec<u8>> {
    let mut strings = Vec::new();
    let mut i = 0;
    while i < content.len() {
        if content[i] != b'(' {
            i += 1;
            continue;
        }
        let mut bytes = Vec::new();
        i += 1;
        while content[i] != b')' {
            if content[i] == b'\\' {
                i += 1;
                if content[i].is_ascii_digit() {
                    let digits = content[i..]
                        .iter()
                        .take(3)
                        .take_while(|b| b.is_ascii_digit());
                    let count = digits.clone().count();
                    bytes.push(digits.fold(0u8, |value, digit| value * 8 + (digit - b'0')));
                    i += count;
                    continue;
                }
                bytes.push(match content[i] {
                    b'n' => b'\n',
                    b'r' => b'\r',
                    b't' => b'\t',
                    b'b' => 0x08,
                    b'f' => 0x0c,
                    other => other,
                });
            } else {
                bytes.push(content[i]);
            }
            i += 1;
        }
        strings.push(bytes);
        i += 1;
    }
    strings
}

/// The text of a one-font PDF as drawn, glyph after glyph, through the
/// font's ToUnicode CMap (two-byte codes, `/Identity-H`).
fn extracted_text(objects: &[&[u8]]) -> String {
    let cmap = objects
        .iter()
        .find(|object| contains(object, "/Type /CMap"))
        .expect("a ToUnicode CMap");
    let glyphs = to_unicode(&String::from_utf8(stream(cmap)).unwrap());
    let content = objects
        .iter()
        .filter(|object| contains(object, "stream") && !contains(object, "/Type"))
        .map(|object| stream(object))
        .find(|content| contains(content, " Tj"))
        .expect("a page content stream with text");
    shown_strings(&content)
        .iter()
        .flat_map(|bytes| {
            bytes
                .chunks(2)
                .map(|pair| u16::from_be_bytes([pair[0], pair[1]]))
        })
        .map(|code| glyphs[&code].clone())
        .collect()
}

#[test]
fn pdf_is_one_page_with_the_shipped_font_embedded_and_the_title_as_text() {
    let scratch = Scratch::new("pdf");
    binning(&scratch, "first", &["--format", "pdf"]);
    binning(&scratch, "second", &["--format", "pdf"]);
    assert_eq!(
        names_in(&scratch.path.join("first")),
        ["binning.json", "binning.pdf"]
    );
    let pdf = fs::read(scratch.path.join("first/binning.pdf")).unwrap();
    assert!(pdf.starts_with(b"%PDF-"));
    let again = fs::read(scratch.path.join("second/binning.pdf")).unwrap();
    assert!(pdf == again, "same figure, same bytes");
    let objects = pdf_objects(&pdf);
    let pages: Vec<_> = objects
        .iter()
        .filter(|object| contains(object, "/Type /Page\n"))
        .collect();
    assert_eq!(pages.len(), 1, "one page object");
    assert!(objects.iter().any(|object| contains(object, "/Count 1\n")));

    // The font: a subset (TAG+DejaVuSans) whose TrueType program is in the
    // file, smaller than the shipped one and with its name table's family.
    let font = objects
        .iter()
        .find(|object| contains(object, "/Subtype /CIDFontType2"))
        .expect("a TrueType font object");
    let base = &font[find(font, b"/BaseFont /").unwrap() + 11..];
    let base = &base[..find(base, b"\n").unwrap()];
    assert_eq!(&base[6..], b"+DejaVuSans");
    assert!(base[..6].iter().all(u8::is_ascii_uppercase));
    let descriptor = objects
        .iter()
        .find(|object| contains(object, "/FontFile2 "))
        .expect("a font descriptor with a /FontFile2 program");
    let reference = &descriptor[find(descriptor, b"/FontFile2 ").unwrap() + 11..];
    let number = &reference[..find(reference, b" 0 R").unwrap()];
    let start = find(&pdf, &[b"\n", number, b" 0 obj"].concat()).unwrap();
    let program = stream(pdf_objects(&pdf[start..])[0]);
    assert!(program.starts_with(&[0, 1, 0, 0]), "a TrueType program");
    assert!(program.len() < SHIPPED_FONT.len() / 4, "a subset");

    let text = extracted_text(&objects);
    assert!(
        text.contains("After 30 d") && text.contains("Binned shape fit"),
        "{text}"
    );
    let scenario = fs::read_to_string(demo("narrow_peak.yaml")).unwrap();
    let title = scenario
        .lines()
        .find_map(|line| line.strip_prefix("title: "))
        .unwrap();
    assert!(text.contains(title), "title {title:?} not in {text:?}");
}

/// Width and height from a PNG's IHDR, and its pHYs pixels per metre.
fn png_header(png: &[u8]) -> ((u32, u32), u32) {
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    assert_eq!(&png[12..16], b"IHDR");
    let word = |at: usize| u32::from_be_bytes(png[at..at + 4].try_into().unwrap());
    let phys = find(png, b"pHYs").expect("a pHYs chunk");
    assert_eq!(png[phys + 12], 1, "unit: metre");
    ((word(16), word(20)), word(phys + 4))
}

#[test]
fn png_has_the_figure_size_at_the_requested_and_the_default_resolution() {
    let scratch = Scratch::new("png");
    binning(&scratch, "out", &["--format", "svg,png", "--dpi", "150"]);
    let svg = fs::read_to_string(scratch.path.join("out/binning.svg")).unwrap();
    let (width, height) = svg_size(&svg);
    let (size, pixels_per_metre) =
        png_header(&fs::read(scratch.path.join("out/binning.png")).unwrap());
    // 1 SVG pixel = 1/96 in (CSS Values and Units Level 3, §5.2).
    let expected = |pixels: f64, dpi: f64| (pixels * dpi / 96.0).ceil() as u32;
    assert_eq!(size, (expected(width, 150.0), expected(height, 150.0)));
    assert_eq!(pixels_per_metre, (150.0_f64 / 0.0254).round() as u32);

    binning(&scratch, "default", &["--format", "png"]);
    let (size, pixels_per_metre) =
        png_header(&fs::read(scratch.path.join("default/binning.png")).unwrap());
    assert_eq!(size, (expected(width, 300.0), expected(height, 300.0)));
    assert_eq!(pixels_per_metre, 11811, "300 dpi = 11811 per metre");
}

#[test]
fn svg_names_the_shipped_font() {
    let scratch = Scratch::new("svg-font");
    binning(&scratch, "out", &[]);
    let svg = fs::read_to_string(scratch.path.join("out/binning.svg")).unwrap();
    assert!(svg.contains("font-family=\"DejaVu Sans, sans-serif\""));
    assert!(!svg.contains("font-family=\"sans-serif\""));
}

#[test]
fn every_command_writes_each_format() {
    let scratch = Scratch::new("all");
    let scenario = demo("narrow_peak.yaml");
    let scenario = scenario.to_str().unwrap();
    let formats = ["--format", "svg,pdf,png", "--dpi", "20"];
    let project = [scenario, "--asimov-only", "--out", "project", "--quiet"];
    succeeds(&scratch, &[&["project"], &project[..], &formats].concat());
    assert_eq!(
        names_in(&scratch.path.join("project")),
        [
            "limits.pdf",
            "limits.png",
            "limits.svg",
            "probability.pdf",
            "probability.png",
            "probability.svg",
            "projection.csv",
            "projection.json",
            "projection.pdf",
            "projection.png",
            "projection.svg"
        ]
    );
    let spectrum = [scenario, "--days", "30", "--out", "spectrum"];
    let stdout = succeeds(&scratch, &[&["spectrum"], &spectrum[..], &formats].concat());
    assert!(
        stdout.contains("wrote spectrum/spectrum-30d.pdf"),
        "{stdout}"
    );
    assert_eq!(
        names_in(&scratch.path.join("spectrum")),
        [
            "spectrum-30d.csv",
            "spectrum-30d.pdf",
            "spectrum-30d.png",
            "spectrum-30d.svg"
        ]
    );
}

#[test]
fn a_rerun_removes_only_the_stale_files_of_the_formats_it_writes() {
    let scratch = Scratch::new("rerun");
    let scenario = demo("narrow_peak.yaml");
    let scenario = scenario.to_str().unwrap();
    let project = [
        "project",
        scenario,
        "--asimov-only",
        "--out",
        "out",
        "--quiet",
    ];
    let every_format = ["--format", "svg,pdf,png", "--dpi", "20"];
    succeeds(&scratch, &[&project[..], &every_format].concat());
    let out = scratch.path.join("out");
    let earlier = |name: &str| fs::read(out.join(name)).unwrap();
    let pdf_and_png: Vec<(String, Vec<u8>)> = names_in(&out)
        .into_iter()
        .filter(|name| name.ends_with(".pdf") || name.ends_with(".png"))
        .map(|name| (name.clone(), earlier(&name)))
        .collect();
    assert_eq!(pdf_and_png.len(), 6);

    // SVG only: the PDF and PNG figures of the earlier run stay as they were.
    let stdout = succeeds(&scratch, &project);
    assert!(!stdout.contains("removed"), "{stdout}");
    for (name, bytes) in &pdf_and_png {
        assert_eq!(&earlier(name), bytes, "{name}");
    }

    // Without limits, SVG only: the limits figure goes in SVG alone.
    let stdout = succeeds(&scratch, &[&project[..], &["--no-limits"]].concat());
    let removed: Vec<&str> = stdout
        .lines()
        .filter(|line| line.starts_with("removed"))
        .collect();
    assert_eq!(
        removed,
        [format!(
            "removed {} (left from an earlier run)",
            Path::new("out").join("limits.svg").display()
        )]
    );
    assert_eq!(
        names_in(&out),
        [
            "limits.pdf",
            "limits.png",
            "probability.pdf",
            "probability.png",
            "probability.svg",
            "projection.csv",
            "projection.json",
            "projection.pdf",
            "projection.png",
            "projection.svg"
        ]
    );

    // Without limits, PDF only: now the limits PDF goes, the PNG stays.
    let only_pdf = ["--no-limits", "--format", "pdf"];
    let stdout = succeeds(&scratch, &[&project[..], &only_pdf].concat());
    assert!(
        stdout.contains("limits.pdf (left from an earlier run)"),
        "{stdout}"
    );
    assert!(!stdout.contains("limits.png"), "{stdout}");
    assert!(out.join("limits.png").exists() && !out.join("limits.pdf").exists());
}

#[test]
fn unknown_formats_and_resolutions_are_refused_with_nothing_written() {
    let scratch = Scratch::new("refused");
    let scenario = demo("narrow_peak.yaml");
    for (extra, expected) in [
        (["--format", "svg,jpg"], "unknown figure format 'jpg'"),
        (["--dpi", "5"], "--dpi"),
        (["--dpi", "5000"], "--dpi"),
    ] {
        let mut args = vec![
            "binning",
            scenario.to_str().unwrap(),
            "--days",
            "30",
            "--out",
            "out",
        ];
        args.extend_from_slice(&extra);
        let output = scratch.run(&args);
        assert!(!output.status.success(), "{args:?} succeeded");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(stderr.contains(expected), "{args:?}: {stderr}");
        assert!(!scratch.path.join("out").exists());
    }
}
