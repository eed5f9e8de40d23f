//! PNG output needs a TrueType font for its labels (SVG writes text as text and needs none).
//! We do not ship a font: we load a common system one once, and say how to get one if absent.

use super::PlotError;
use crate::error::Diagnostic;
use std::sync::OnceLock;

/// Where Debian/Ubuntu, Fedora and Arch keep a plain sans-serif TrueType font.
const CANDIDATES: &[&str] = &[
    "/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf",
    "/usr/share/fonts/dejavu-sans-fonts/DejaVuSans.ttf",
    "/usr/share/fonts/TTF/DejaVuSans.ttf",
    "/usr/share/fonts/truetype/liberation/LiberationSans-Regular.ttf",
    "/usr/share/fonts/liberation-sans/LiberationSans-Regular.ttf",
];

static REGISTERED: OnceLock<Result<(), String>> = OnceLock::new();

/// Make "sans-serif" available to the bitmap backend. Called before drawing a PNG.
pub fn ensure_png_font() -> Result<(), PlotError> {
    let outcome = REGISTERED.get_or_init(|| {
        let env = std::env::var("MUCURVE_FONT").ok();
        let paths = env.iter().map(String::as_str).chain(CANDIDATES.iter().copied());
        for path in paths {
            if let Ok(bytes) = std::fs::read(path) {
                let bytes: &'static [u8] = Box::leak(bytes.into_boxed_slice());
                if plotters::style::register_font("sans-serif", plotters::style::FontStyle::Normal, bytes).is_ok() {
                    return Ok(());
                }
            }
        }
        Err(CANDIDATES.join(", "))
    });
    outcome.clone().map_err(|looked| {
        PlotError(
            Diagnostic::new("PNG plots need a TrueType font and none was found")
                .expected(format!("a font at one of: {}", looked))
                .hint("install the fonts-dejavu-core package, set MUCURVE_FONT=/path/to/font.ttf, or write .svg instead"),
        )
    })
}
