//! PDF from the parsed SVG (`svg2pdf`): one vector page of the figure's
//! size, text kept as text in an embedded subset of the shipped font. Nothing
//! in it depends on the clock (no creation date is written) or on chance: the
//! converter lists the entries of a page's resource dictionaries in hash-map
//! order, so [`pdf_bytes`] sorts them, and the same figure gives the same bytes.

use super::SVG_PIXELS_PER_INCH;
use svg2pdf::usvg;

/// One PDF page the size of the figure (1 SVG pixel = 1/96 in = 0.75 pt).
pub(super) fn pdf_bytes(tree: &usvg::Tree) -> Result<Vec<u8>, String> {
    let page = svg2pdf::PageOptions {
        dpi: SVG_PIXELS_PER_INCH,
    };
    svg2pdf::to_pdf(tree, svg2pdf::ConversionOptions::default(), page)
        .map(sorted_references)
        .map_err(|error| error.to_string())
}

/// `pdf` with every run of consecutive dictionary lines of the form
/// `/Name N 0 R` (a resource name and its object) sorted, outside streams.
/// Entries of a dictionary may come in any order (ISO 32000-1:2008, §7.3.7),
/// and a run keeps its length, so every byte offset in the file stays valid.
fn sorted_references(pdf: Vec<u8>) -> Vec<u8> {
    let mut sorted = Vec::with_capacity(pdf.len());
    let mut run: Vec<&[u8]> = Vec::new();
    let mut in_stream = false;
    for line in pdf.split_inclusive(|&byte| byte == b'\n') {
        if !in_stream && is_reference_entry(line) {
            run.push(line);
            continue;
        }
        run.sort_unstable();
        sorted.extend(run.drain(..).flatten());
        sorted.extend_from_slice(line);
        if in_stream {
            in_stream = line != b"endstream\n" && !line.ends_with(b"\nendstream\n");
        } else {
            in_stream = line == b"stream\n";
        }
    }
    run.sort_unstable();
    sorted.extend(run.drain(..).flatten());
    sorted
}

/// A line `<spaces>/Name N 0 R\n`.
fn is_reference_entry(line: &[u8]) -> bool {
    let Ok(text) = std::str::from_utf8(line) else {
        return false;
    };
    let Some(entry) = text.trim_start_matches(' ').strip_prefix('/') else {
        return false;
    };
    let words: Vec<&str> = entry.trim_end_matches('\n').split(' ').collect();
    matches!(words.as_slice(), [name, number, "0", "R"]
        if !name.is_empty()
            && name.bytes().all(|byte| byte.is_ascii_alphanumeric())
            && !number.is_empty()
            && number.bytes().all(|byte| byte.is_ascii_digit()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reference_entries_are_sorted_outside_streams_only() {
        let pdf = b"<<\n  /XObject <<\n    /xo1 10 0 R\n    /xo0 8 0 R\n  >>\n  \
/Parent 3 0 R\n>>\nstream\n/b 2 0 R\n/a 1 0 R\nendstream\n"
            .to_vec();
        let sorted = sorted_references(pdf.clone());
        assert_eq!(sorted.len(), pdf.len());
        assert_eq!(
            String::from_utf8(sorted).unwrap(),
            "<<\n  /XObject <<\n    /xo0 8 0 R\n    /xo1 10 0 R\n  >>\n  \
/Parent 3 0 R\n>>\nstream\n/b 2 0 R\n/a 1 0 R\nendstream\n"
        );
    }

    #[test]
    fn only_name_and_reference_lines_are_entries() {
        assert!(is_reference_entry(b"      /gs0 7 0 R\n"));
        assert!(!is_reference_entry(b"  /Type /Page\n"));
        assert!(!is_reference_entry(b"  /CS [/ICCBased 6 0 R]\n"));
        assert!(!is_reference_entry(b"  /Kids [4 0 R]\n"));
    }
}
