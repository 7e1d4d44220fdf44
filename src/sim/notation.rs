//! Values as the reports print them: engineering notation.

/// Engineering format: `value` scaled to a prefix, 3 significant digits
/// (4 from 100 up), the prefix and digits chosen after rounding, so
/// 99.996 kHz reads `100.0 kHz` and 999.96 kHz `1.000 MHz`.
pub fn eng(value: f64, unit: &str) -> String {
    if !value.is_finite() {
        return "n/a".to_string();
    }
    if value == 0.0 {
        return format!("0 {unit}");
    }
    let prefixes = [(1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n")];
    let (scale, prefix) =
        prefixes.iter().copied().find(|(s, _)| value.abs() >= *s).unwrap_or((1e-9, "n"));
    let (scale, prefix) = match prefixes.iter().position(|&(s, _)| s == scale) {
        // Rounded to 4 significant digits it reaches the next prefix.
        Some(k) if k > 0 && round_to(value.abs() / scale, 1) >= 1000.0 => prefixes[k - 1],
        _ => (scale, prefix),
    };
    let scaled = value / scale;
    let digits = if round_to(scaled.abs(), 2) >= 100.0 {
        1
    } else if round_to(scaled.abs(), 3) >= 10.0 {
        2
    } else {
        3
    };
    format!("{scaled:.digits$} {prefix}{unit}")
}

/// `x` rounded to `digits` decimals.
fn round_to(x: f64, digits: i32) -> f64 {
    let k = 10f64.powi(digits);
    (x * k).round() / k
}
