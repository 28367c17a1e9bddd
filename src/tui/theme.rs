//! Screen themes: strong contrast for sunlight, and a monochrome mode with no colour at all.
//!
//! Colour only ever repeats what a word or a symbol already says, so the monochrome mode loses
//! nothing but emphasis.

use ratatui::style::{Color, Modifier, Style};

/// Which look the screen uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ThemeKind {
    /// Black on white, bold marks in dark saturated colours: readable in direct sunlight.
    #[default]
    Sunlight,
    /// White on black, bold marks in bright colours: for shade or dusk.
    Dark,
    /// No colours at all (`NO_COLOR`, `--mono`): emphasis by bold and reverse video only.
    Mono,
}

impl ThemeKind {
    /// The next theme in the cycle Sunlight → Dark → Mono → Sunlight.
    pub fn next(self) -> Self {
        match self {
            ThemeKind::Sunlight => ThemeKind::Dark,
            ThemeKind::Dark => ThemeKind::Mono,
            ThemeKind::Mono => ThemeKind::Sunlight,
        }
    }

    /// Short name shown on screen.
    pub fn name(self) -> &'static str {
        match self {
            ThemeKind::Sunlight => "sunlight",
            ThemeKind::Dark => "dark",
            ThemeKind::Mono => "mono",
        }
    }
}

impl std::str::FromStr for ThemeKind {
    type Err = String;

    /// Parses `sunlight`, `dark` or `mono` (for a command-line flag).
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim().to_ascii_lowercase().as_str() {
            "sunlight" => Ok(ThemeKind::Sunlight),
            "dark" => Ok(ThemeKind::Dark),
            "mono" => Ok(ThemeKind::Mono),
            other => Err(format!(
                "unknown theme {other:?} (expected sunlight, dark or mono)"
            )),
        }
    }
}

/// Resolved colours and styles for one theme.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Theme {
    /// Which theme this is.
    pub kind: ThemeKind,
    /// Background of the whole screen (`Color::Reset` in mono).
    pub bg: Color,
    /// Normal text colour.
    pub fg: Color,
    /// The animal's heading (needle, trace).
    pub heading: Color,
    /// The sun mark.
    pub sun: Color,
    /// The zenith e-vector axis.
    pub evector: Color,
    /// The arena's 0 mark.
    pub mark: Color,
    /// Turn markers.
    pub turn: Color,
    /// Good news (flying, compensated, synced).
    pub good: Color,
    /// Needs attention soon (settling, paused).
    pub caution: Color,
    /// Needs attention now (sensor lost, archive late).
    pub alarm: Color,
}

impl Theme {
    /// The resolved theme for `kind`.
    pub fn new(kind: ThemeKind) -> Self {
        match kind {
            // xterm 256-colour indices: widely supported, and independent of the terminal's own
            // 16-colour palette, which is often pale.
            ThemeKind::Sunlight => Theme {
                kind,
                bg: Color::Indexed(231), // white
                fg: Color::Indexed(16),  // black
                heading: Color::Indexed(18),
                sun: Color::Indexed(130),
                evector: Color::Indexed(23),
                mark: Color::Indexed(90),
                turn: Color::Indexed(124),
                good: Color::Indexed(22),
                caution: Color::Indexed(94),
                alarm: Color::Indexed(160),
            },
            ThemeKind::Dark => Theme {
                kind,
                bg: Color::Indexed(16),
                fg: Color::Indexed(231),
                heading: Color::Indexed(226),
                sun: Color::Indexed(214),
                evector: Color::Indexed(51),
                mark: Color::Indexed(213),
                turn: Color::Indexed(203),
                good: Color::Indexed(46),
                caution: Color::Indexed(220),
                alarm: Color::Indexed(196),
            },
            ThemeKind::Mono => Theme {
                kind,
                bg: Color::Reset,
                fg: Color::Reset,
                heading: Color::Reset,
                sun: Color::Reset,
                evector: Color::Reset,
                mark: Color::Reset,
                turn: Color::Reset,
                good: Color::Reset,
                caution: Color::Reset,
                alarm: Color::Reset,
            },
        }
    }

    /// True when no colour may be used.
    pub fn is_mono(&self) -> bool {
        self.kind == ThemeKind::Mono
    }

    /// Base style of every cell.
    pub fn base(&self) -> Style {
        if self.is_mono() {
            Style::reset()
        } else {
            Style::default().fg(self.fg).bg(self.bg)
        }
    }

    /// Bold text in the normal colour.
    pub fn strong(&self) -> Style {
        self.base().add_modifier(Modifier::BOLD)
    }

    /// Bold text in `color` (plain bold in mono).
    pub fn accent(&self, color: Color) -> Style {
        if self.is_mono() {
            self.strong()
        } else {
            self.strong().fg(color)
        }
    }

    /// A flag that must be seen: reverse video, in `color` when colours are allowed.
    pub fn flag(&self, color: Color) -> Style {
        if self.is_mono() {
            self.strong().add_modifier(Modifier::REVERSED)
        } else {
            Style::default()
                .fg(self.bg)
                .bg(color)
                .add_modifier(Modifier::BOLD)
        }
    }

    /// Column headers and labels: bold and underlined (never a dim grey).
    pub fn label(&self) -> Style {
        self.strong().add_modifier(Modifier::UNDERLINED)
    }

    /// Borders of panels.
    pub fn border(&self) -> Style {
        self.strong()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mono_uses_no_colour() {
        let t = Theme::new(ThemeKind::Mono);
        for s in [
            t.base(),
            t.strong(),
            t.accent(t.sun),
            t.flag(t.alarm),
            t.label(),
        ] {
            assert!(matches!(s.fg, None | Some(Color::Reset)), "{s:?}");
            assert!(matches!(s.bg, None | Some(Color::Reset)), "{s:?}");
        }
    }

    #[test]
    fn colour_themes_never_use_dim_grey() {
        for kind in [ThemeKind::Sunlight, ThemeKind::Dark] {
            let t = Theme::new(kind);
            for c in [
                t.fg, t.heading, t.sun, t.evector, t.mark, t.turn, t.good, t.caution, t.alarm,
            ] {
                assert!(
                    !matches!(c, Color::DarkGray | Color::Gray),
                    "{kind:?} {c:?}"
                );
                if let Color::Indexed(i) = c {
                    // 232..=255 is the grey ramp; 16 and 231 are pure black and white.
                    assert!(!(232..=255).contains(&i), "{kind:?} uses grey {i}");
                }
            }
            assert_ne!(t.fg, t.bg);
        }
    }

    #[test]
    fn names_parse_back() {
        for k in [ThemeKind::Sunlight, ThemeKind::Dark, ThemeKind::Mono] {
            assert_eq!(k.name().parse::<ThemeKind>(), Ok(k));
        }
        assert!("neon".parse::<ThemeKind>().is_err());
    }

    #[test]
    fn cycle_visits_every_theme() {
        let k = ThemeKind::Sunlight;
        assert_eq!(k.next().next().next(), k);
        assert_ne!(k.next(), k);
    }
}
