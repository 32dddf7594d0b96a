//! Colours, line patterns and text sizes of every figure. New colours go
//! here, nowhere else.

use plotters::prelude::*;

/// Font family of every text: the font shipped with runcast (the one PDF
/// and PNG use), else the viewer's own sans-serif face.
const FONT: &str = "DejaVu Sans, sans-serif";

/// Toy median: deep ink teal.
pub const INK_TEAL: RGBColor = RGBColor(0x0b, 0x4f, 0x6c);
/// Asimov curve: warm vermilion.
pub const VERMILION: RGBColor = RGBColor(0xd9, 0x4f, 0x2b);
/// Central band (about ±1σ of the toys): soft lavender.
pub const LAVENDER: RGBColor = RGBColor(0xb9, 0xb3, 0xdc);
/// Global significance of the toy median (look-elsewhere effect): violet.
pub const VIOLET: RGBColor = RGBColor(0x6a, 0x3d, 0x9a);
/// Global significance of Z_A (look-elsewhere effect): plum.
pub const PLUM: RGBColor = RGBColor(0xa8, 0x32, 0x6e);
/// Outer band (about ±2σ of the toys): pale lavender-grey.
pub const PALE_LAVENDER: RGBColor = RGBColor(0xe6, 0xe3, 0xf3);
/// Reference lines (targets, probability levels): slate grey.
pub const SLATE: RGBColor = RGBColor(0x5f, 0x6b, 0x7a);
/// Axis labels, titles and footnotes: near-black ink.
pub const INK: RGBColor = RGBColor(0x22, 0x26, 0x2e);
/// One colour per series (each target of the probability plot, each plan of
/// a comparison), cycled past the sixth.
pub const SERIES_COLOURS: [RGBColor; 6] = [
    INK_TEAL,
    VERMILION,
    VIOLET,
    PLUM,
    RGBColor(0x3a, 0x6e, 0xa5), // cornflower slate
    RGBColor(0x8c, 0x5a, 0x2b), // umber
];
pub const MAJOR_GRID: RGBColor = RGBColor(0xd5, 0xd9, 0xe0);
pub const MINOR_GRID: RGBColor = RGBColor(0xee, 0xf0, 0xf3);

/// Font size of the labels drawn inside a plot.
pub const LABEL_SIZE: u32 = 16;

/// Pixel lengths of a dash and of the gap after it, for asymptotic curves.
pub const DASH: (u32, u32) = (9, 5);
/// Pixel lengths of a dot and of the gap after it, for reference lines.
pub const DOT: (u32, u32) = (3, 4);

/// Text of `size` pixels in ink.
pub fn text_style(size: u32) -> TextStyle<'static> {
    TextStyle::from((FONT, size).into_font()).color(&INK)
}
