//! Small text formatters for the screen (angles, durations, p-values). Display only.

use crate::frames::{wrap_360_deg, wrap_signed_deg};

/// A direction as whole degrees in [0, 360): `"213°"`; `"---°"` when unknown or not finite.
pub fn deg(value: Option<f64>) -> String {
    match value {
        Some(v) if v.is_finite() => {
            let r = wrap_360_deg(v).round();
            format!("{:.0}°", if r >= 360.0 { 0.0 } else { r })
        }
        _ => "---°".to_string(),
    }
}

/// A direction with one decimal: `"212.4°"`.
pub fn deg1(value: f64) -> String {
    if !value.is_finite() {
        return "---°".to_string();
    }
    let r = (wrap_360_deg(value) * 10.0).round() / 10.0;
    format!("{:.1}°", if r >= 360.0 { 0.0 } else { r })
}

/// A signed angle in (-180, 180], whole degrees with an explicit sign: `"+90°"`, `"-3°"`.
pub fn signed_deg(value: f64) -> String {
    if !value.is_finite() {
        return "---°".to_string();
    }
    let r = wrap_signed_deg(value).round();
    if r == 0.0 {
        "0°".to_string()
    } else {
        format!("{r:+.0}°")
    }
}

/// A duration as `m:ss` or `h:mm:ss`; negative durations get a leading `-`.
pub fn duration(seconds: f64) -> String {
    if !seconds.is_finite() {
        return "--:--".to_string();
    }
    let neg = seconds < 0.0;
    let total = seconds.abs().floor() as u64;
    let (h, m, s) = (total / 3600, (total / 60) % 60, total % 60);
    let body = if h > 0 {
        format!("{h}:{m:02}:{s:02}")
    } else {
        format!("{m}:{s:02}")
    };
    if neg && total > 0 {
        format!("-{body}")
    } else {
        body
    }
}

/// A countdown that never shows `0:00` while time remains (rounds up).
pub fn countdown(seconds: f64) -> String {
    if seconds.is_finite() && seconds > 0.0 {
        duration(seconds.ceil())
    } else {
        duration(seconds)
    }
}

/// A p-value: `"<0.001"`, `"0.012"`, `"0.43"`; `"–"` when not available.
pub fn p_value(p: f64) -> String {
    if !p.is_finite() || !(0.0..=1.0).contains(&p) {
        "–".to_string()
    } else if p < 0.001 {
        "<0.001".to_string()
    } else if p < 0.1 {
        format!("{p:.3}")
    } else {
        format!("{p:.2}")
    }
}

/// A mean vector length with two decimals, `"–"` when not finite.
pub fn r_value(r: f64) -> String {
    if r.is_finite() {
        format!("{r:.2}")
    } else {
        "–".to_string()
    }
}

/// An integer count with thin-space-free thousands grouping by spaces: `"72 104"`.
pub fn count(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, ch) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(' ');
        }
        out.push(ch);
    }
    out
}

/// Truncates `text` to at most `width` characters, marking a cut with `…`.
pub fn fit(text: &str, width: usize) -> String {
    let n = text.chars().count();
    if n <= width {
        text.to_string()
    } else if width == 0 {
        String::new()
    } else {
        let mut s: String = text.chars().take(width - 1).collect();
        s.push('…');
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn degrees_wrap_and_round() {
        assert_eq!(deg(Some(359.7)), "0°");
        assert_eq!(deg(Some(-90.0)), "270°");
        assert_eq!(deg(Some(213.4)), "213°");
        assert_eq!(deg(None), "---°");
        assert_eq!(deg(Some(f64::NAN)), "---°");
        assert_eq!(deg1(359.96), "0.0°");
        assert_eq!(deg1(212.44), "212.4°");
    }

    #[test]
    fn signed_degrees_have_sign() {
        assert_eq!(signed_deg(90.0), "+90°");
        assert_eq!(signed_deg(-3.4), "-3°");
        assert_eq!(signed_deg(270.0), "-90°");
        assert_eq!(signed_deg(0.2), "0°");
        assert_eq!(signed_deg(180.0), "+180°");
    }

    #[test]
    fn durations() {
        assert_eq!(duration(0.0), "0:00");
        assert_eq!(duration(83.9), "1:23");
        assert_eq!(duration(3725.0), "1:02:05");
        assert_eq!(duration(-5.5), "-0:05");
        assert_eq!(countdown(0.2), "0:01");
        assert_eq!(countdown(60.0), "1:00");
    }

    #[test]
    fn p_values() {
        assert_eq!(p_value(0.0004), "<0.001");
        assert_eq!(p_value(0.0123), "0.012");
        assert_eq!(p_value(0.432), "0.43");
        assert_eq!(p_value(f64::NAN), "–");
    }

    #[test]
    fn counts_and_fit() {
        assert_eq!(count(72104), "72 104");
        assert_eq!(count(999), "999");
        assert_eq!(count(1_000_000), "1 000 000");
        assert_eq!(fit("open sky", 20), "open sky");
        assert_eq!(fit("polarizer at 45°", 6), "polar…");
    }
}
