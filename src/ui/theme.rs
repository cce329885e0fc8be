//! Styles of the dashboard in the 16 basic terminal colours, and a plain set
//! for `NO_COLOR`. The state of the run is always told in words and symbols as
//! well, so the plain set loses nothing but tint.

use ratatui::style::{Color, Modifier, Style};
use ratatui::symbols::Marker;

use crate::finding::Level;

/// The styles used by every panel.
#[derive(Debug, Clone, Copy)]
pub struct Theme {
    pub color: bool,
}

impl Theme {
    /// Plain text for labels.
    pub fn text(&self) -> Style {
        Style::default()
    }

    /// Dimmed text for secondary facts.
    pub fn dim(&self) -> Style {
        if self.color {
            Style::default().fg(Color::DarkGray)
        } else {
            Style::default()
        }
    }

    /// Panel borders and titles.
    pub fn border(&self) -> Style {
        if self.color {
            Style::default().fg(Color::Gray)
        } else {
            Style::default()
        }
    }

    /// Panel titles.
    pub fn title(&self) -> Style {
        Style::default().add_modifier(Modifier::BOLD)
    }

    /// Text of a level.
    pub fn level(&self, level: Level) -> Style {
        if !self.color {
            return match level {
                Level::Ok => Style::default(),
                _ => Style::default().add_modifier(Modifier::BOLD),
            };
        }
        match level {
            Level::Ok => Style::default().fg(Color::Green),
            Level::Warning => Style::default()
                .fg(Color::Yellow)
                .add_modifier(Modifier::BOLD),
            Level::Critical => Style::default()
                .fg(Color::LightRed)
                .add_modifier(Modifier::BOLD),
        }
    }

    /// A level shown as a filled badge (header state, banner).
    pub fn badge(&self, level: Level) -> Style {
        if !self.color {
            return Style::default().add_modifier(Modifier::REVERSED | Modifier::BOLD);
        }
        let bg = match level {
            Level::Ok => Color::Green,
            Level::Warning => Color::Yellow,
            Level::Critical => Color::Red,
        };
        Style::default()
            .fg(Color::Black)
            .bg(bg)
            .add_modifier(Modifier::BOLD)
    }

    /// The n-th data series of a chart.
    pub fn series(&self, n: usize) -> Style {
        if !self.color {
            return Style::default();
        }
        const C: [Color; 6] = [
            Color::Cyan,
            Color::Magenta,
            Color::Blue,
            Color::Green,
            Color::Yellow,
            Color::White,
        ];
        Style::default().fg(C[n % C.len()])
    }

    /// Marker of the n-th data series and the glyph that stands for it in the
    /// legend: a coloured line with colour, distinct markers without it.
    pub fn marker(&self, n: usize) -> (Marker, &'static str) {
        if self.color {
            return (Marker::Braille, "━━");
        }
        const M: [(Marker, &str); 4] = [
            (Marker::Braille, "⣿⣿"),
            (Marker::Dot, "••"),
            (Marker::Bar, "▄▄"),
            (Marker::Block, "██"),
        ];
        M[n % M.len()]
    }

    /// The reference line of a chart (ρ = 1, zero balance error).
    pub fn reference(&self) -> Style {
        if self.color {
            Style::default().fg(Color::Red)
        } else {
            Style::default().add_modifier(Modifier::DIM)
        }
    }

    /// Key names in hints and help.
    pub fn key(&self) -> Style {
        if self.color {
            Style::default()
                .fg(Color::Cyan)
                .add_modifier(Modifier::BOLD)
        } else {
            Style::default().add_modifier(Modifier::BOLD)
        }
    }
}

/// Symbol of a level, so that state never rests on colour alone.
pub fn symbol(level: Level) -> &'static str {
    match level {
        Level::Ok => "✔",
        Level::Warning => "▲",
        Level::Critical => "✖",
    }
}
