//! The reporting layer: every text, table, colour and plot writer.
//!
//! The check renderers (one per output format) are fed by the runner's
//! `Sink` calls; `balance`, `dope` and `fit` write those stages' results,
//! which are plain data; `svg` is the one SVG writer. Colour is decided at
//! print time, by the caller, and passed in as a `Palette`; the domain
//! never sees it.

pub mod balance;
pub mod csv;
pub mod dope;
pub mod fit;
pub mod gnu;
pub mod human;
#[cfg(feature = "serde")]
pub mod json;
pub mod law;
pub mod regimes;
#[cfg(feature = "serde")]
pub mod results;
#[cfg(feature = "serde")]
pub mod sarif;
pub mod scan;
pub mod svg;

use crate::base::diagnostic::Severity;
use anstyle::{AnsiColor, Style};

/// Whether and how to colour terminal output.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Palette {
    pub enabled: bool,
}

impl Palette {
    pub const PLAIN: Palette = Palette { enabled: false };

    /// Wraps `text` in the style's escape codes when colour is on. The
    /// decision is this value's alone: nothing process-wide is consulted.
    fn paint(self, text: &str, style: Style) -> String {
        if !self.enabled {
            return text.to_string();
        }
        format!("{style}{text}{style:#}")
    }

    fn colour(color: AnsiColor) -> Style {
        Style::new().fg_color(Some(color.into()))
    }

    pub fn severity(self, severity: Severity, text: &str) -> String {
        let color = match severity {
            Severity::Error => AnsiColor::Red,
            Severity::Warning => AnsiColor::Yellow,
            Severity::Note => AnsiColor::Cyan,
        };
        self.paint(text, Self::colour(color).bold())
    }

    pub fn frame(self, text: &str) -> String {
        self.paint(text, Self::colour(AnsiColor::Blue))
    }

    pub fn strong(self, text: &str) -> String {
        self.paint(text, Style::new().bold())
    }

    pub fn good(self, text: &str) -> String {
        self.paint(text, Self::colour(AnsiColor::Green))
    }

    pub fn bad(self, text: &str) -> String {
        self.paint(text, Self::colour(AnsiColor::Red))
    }

    pub fn species(self, text: &str) -> String {
        self.paint(text, Self::colour(AnsiColor::Magenta))
    }
}
