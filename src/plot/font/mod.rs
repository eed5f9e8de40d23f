//! The font every plot's labels are laid out with. plotters needs real glyph metrics even for
//! SVG, and a fresh machine may have no fonts at all, so a small subset of DejaVu Sans (Latin,
//! Greek, the symbols we print; licence beside it) is compiled into the binary.

use super::PlotError;
use crate::error::Diagnostic;
use std::sync::OnceLock;

static FONT: &[u8] = include_bytes!("DejaVuSans-subset.ttf");

static REGISTERED: OnceLock<bool> = OnceLock::new();

/// Make "sans-serif" available to every backend. Idempotent; called before drawing.
pub fn ensure_font() -> Result<(), PlotError> {
    let ok = *REGISTERED.get_or_init(|| {
        plotters::style::register_font("sans-serif", plotters::style::FontStyle::Normal, FONT).is_ok()
    });
    if ok {
        Ok(())
    } else {
        Err(PlotError(
            Diagnostic::new("the built-in plot font could not be loaded")
                .hint("this is a bug in the build; please report it with `mucurve --version`"),
        ))
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn built_in_font_registers() {
        assert!(super::ensure_font().is_ok());
    }
}
