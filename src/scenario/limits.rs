//! Upper bounds on what a scenario and a command line may ask for.
//!
//! Each bound keeps a run's time and memory in proportion to a plausible
//! request and turns an absurd one (a billion grid points, a target of 1e308
//! sigma, a file of gigabytes) into one error that names the bound, instead of
//! a hang or an allocation failure. README and DEVELOPERS.md list them.

/// Largest scenario file read, in bytes (1 MiB; the demos are about 1 kB).
pub const MAX_SCENARIO_BYTES: u64 = 1 << 20;

/// Largest file of rows a shape reads (`{table: {file: ...}}`), in bytes
/// (32 MiB: a million rows of three numbers of a dozen digits).
pub const MAX_ROWS_FILE_BYTES: u64 = 32 << 20;

/// Largest data file `runcast replan` reads, in bytes (64 MiB: about five
/// million event values of a dozen digits).
pub const MAX_DATA_FILE_BYTES: u64 = 64 << 20;

/// Most rows of a table read from a file (inline ones are bounded by the
/// scenario's size): the bin fractions sweep them once, when the model is built.
pub const MAX_TABLE_ROWS: usize = 1_000_000;

/// Deepest nesting of YAML brackets (`[` and `{`) in a scenario file; the
/// format needs three levels, and the parser's time grows with the square of
/// the depth.
pub const MAX_NESTING_DEPTH: usize = 32;

/// Longest text field (title, names, unit), in characters.
pub const MAX_TEXT_CHARS: usize = 200;

/// Most bins of the observable: every fit of every pseudo-experiment touches
/// every bin, so far finer binning only costs time. `binning` skips candidate
/// widths that would exceed it.
pub const MAX_BINS: usize = 100_000;

/// Most points of the days grid (each holds its quantiles and limits).
pub const MAX_GRID_POINTS: usize = 10_000;

/// Most days asked for with `--at` (each is a point with its own pseudo-experiments).
pub const MAX_AT_DAYS: usize = 64;

/// Most pseudo-experiments of one kind at one grid point (`plan.toys`,
/// `--toys`, `--calibrate`); an ensemble holds one number per toy.
pub const MAX_TOYS_PER_POINT: usize = 10_000_000;

/// Most pseudo-experiments of a whole projection: every kind, every point.
pub const MAX_TOYS_IN_TOTAL: u64 = 1_000_000_000;

/// Most target significances.
pub const MAX_TARGETS: usize = 16;

/// Largest target significance, in sigma: its one-sided p-value, about
/// 1e-2174, is far below anything a search claims, and the days to reach a
/// target grow with its square.
pub const MAX_TARGET_SIGMA: f64 = 100.0;

/// Most positions of `signal.scan`: every background-only scan
/// pseudo-experiment fits the signal at each of them.
pub const MAX_SCAN_POSITIONS: usize = 100_000;

/// Most worker threads (`--threads`).
pub const MAX_THREADS: usize = 1024;

/// Most exposures in one `spectrum` figure (`--days` repeated).
pub const MAX_SPECTRUM_EXPOSURES: usize = 8;

/// Most exposures (`--days`) of one `runcast reach`: one set of curves each
/// in one figure.
pub const MAX_REACH_EXPOSURES: usize = 8;

/// Largest expected count in one bin of a pseudo-dataset: 2^53, up to which
/// every whole count is exact in a double, so a Poisson draw can be held and
/// reported exactly.
pub const MAX_EXPECTED_COUNT_PER_BIN: f64 = 9_007_199_254_740_992.0;

/// The deepest nesting of `[` and `{` in YAML text, outside quoted scalars
/// and comments, with the 1-based line where it is first reached. Brackets
/// inside plain scalars count too, which can only overstate the depth.
pub fn bracket_depth(text: &str) -> (usize, usize) {
    let mut depth = 0usize;
    let (mut deepest, mut deepest_line) = (0usize, 1usize);
    let mut line = 1usize;
    let mut quote: Option<char> = None;
    let mut comment = false;
    let mut previous = '\n';
    let mut characters = text.chars().peekable();
    while let Some(character) = characters.next() {
        if character == '\n' {
            line += 1;
            comment = false;
        } else if comment {
        } else if let Some(open) = quote {
            match (open, character) {
                ('"', '\\') => {
                    characters.next();
                }
                ('\'', '\'') if characters.peek() == Some(&'\'') => {
                    characters.next();
                }
                _ if character == open => quote = None,
                _ => {}
            }
        } else {
            match character {
                '"' | '\'' => quote = Some(character),
                '#' if previous.is_whitespace() => comment = true,
                '[' | '{' => {
                    depth += 1;
                    if depth > deepest {
                        (deepest, deepest_line) = (depth, line);
                    }
                }
                ']' | '}' => depth = depth.saturating_sub(1),
                _ => {}
            }
        }
        previous = character;
    }
    (deepest, deepest_line)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bracket_depth_counts_flow_collections_only() {
        assert_eq!(bracket_depth("a: {b: [1, 2]}\n"), (2, 1));
        assert_eq!(bracket_depth("a: 1\nb: [[[x]]]\n"), (3, 2));
        // Quoted and commented brackets do not count.
        assert_eq!(bracket_depth("a: \"[[\\\"[\" # [\nb: '[''['\n"), (0, 1));
        assert_eq!(bracket_depth("# [[[\na: x#[\n"), (1, 2));
    }

    #[test]
    fn the_largest_exact_count_is_two_to_the_53() {
        assert_eq!(MAX_EXPECTED_COUNT_PER_BIN, 2f64.powi(53));
    }
}
