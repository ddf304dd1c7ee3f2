//! Renderers: one per output format, all fed by the engine's `Sink` calls.
//!
//! Colour is decided once, by the caller, and passed in as a `Palette`; the
//! checker never sees it.

pub mod csv;
pub mod gnu;
pub mod human;
pub mod json;
pub mod sarif;
pub mod svg;

use crate::diagnostic::Severity;
use colored::{Color, Colorize};

/// Whether and how to colour terminal output.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Palette {
    pub enabled: bool,
}

impl Palette {
    pub const PLAIN: Palette = Palette { enabled: false };

    fn paint(self, text: &str, color: Color, bold: bool) -> String {
        if !self.enabled {
            return text.to_string();
        }
        // colored consults a process-wide switch; we decide colour ourselves.
        colored::control::set_override(true);
        let painted = text.color(color);
        if bold {
            painted.bold().to_string()
        } else {
            painted.to_string()
        }
    }

    pub fn severity(self, severity: Severity, text: &str) -> String {
        let color = match severity {
            Severity::Error => Color::Red,
            Severity::Warning => Color::Yellow,
            Severity::Note => Color::Cyan,
        };
        self.paint(text, color, true)
    }

    pub fn frame(self, text: &str) -> String {
        self.paint(text, Color::Blue, false)
    }

    pub fn strong(self, text: &str) -> String {
        if self.enabled {
            colored::control::set_override(true);
            text.bold().to_string()
        } else {
            text.to_string()
        }
    }

    pub fn good(self, text: &str) -> String {
        self.paint(text, Color::Green, false)
    }

    pub fn bad(self, text: &str) -> String {
        self.paint(text, Color::Red, false)
    }

    pub fn species(self, text: &str) -> String {
        self.paint(text, Color::Magenta, false)
    }
}
