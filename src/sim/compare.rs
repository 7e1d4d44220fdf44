//! Two runs' figures side by side, with the difference (second minus first):
//! the table `ripplectl compare` prints and its HTML report shows.

use super::emission::EmissionSummary;
use super::metrics::Summary;
use super::notation::eng;
use super::transient::Transient;

/// How a figure is written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Unit {
    /// Engineering notation with this SI unit.
    Si(&'static str),
    /// Percent (the figure is a fraction).
    Percent,
    /// Decibels, or dBµV for a reading.
    Db(&'static str),
    /// A count.
    Count,
    /// A recovery time, s; infinite: not back in band before the next
    /// disturbance.
    Recovery,
}

/// One row: label, unit and how to read it from a summary.
struct Figure {
    label: &'static str,
    unit: Unit,
    read: fn(&Summary) -> Option<f64>,
}

fn emission_figure(s: &Summary, pick: fn(f64, f64) -> f64) -> Option<f64> {
    match s.emission {
        EmissionSummary::Estimated { margin_db, peak_max_dbuv, .. } => {
            Some(pick(margin_db, peak_max_dbuv))
        }
        EmissionSummary::NotAvailable { .. } => None,
    }
}

/// The largest of a figure over the run's disturbances (none without one).
fn worst_transient(s: &Summary, read: fn(&Transient) -> f64) -> Option<f64> {
    s.transients.iter().map(read).reduce(f64::max)
}

const FIGURES: &[Figure] = &[
    Figure { label: "output mean", unit: Unit::Si("V"), read: |s| Some(s.vout_mean_v) },
    Figure {
        label: "regulation error",
        unit: Unit::Percent,
        read: |s| Some((s.vout_mean_v - s.vout_setpoint_v) / s.vout_setpoint_v),
    },
    Figure { label: "ripple p-p", unit: Unit::Si("V"), read: |s| Some(s.vout_ripple_pp_v) },
    Figure { label: "frequency min", unit: Unit::Si("Hz"), read: |s| Some(s.fsw_min_hz) },
    Figure { label: "frequency mean", unit: Unit::Si("Hz"), read: |s| Some(s.fsw_mean_hz) },
    Figure { label: "frequency max", unit: Unit::Si("Hz"), read: |s| Some(s.fsw_max_hz) },
    Figure { label: "shortest on-time", unit: Unit::Si("s"), read: |s| Some(s.on_time_min_s) },
    Figure { label: "inductor peak", unit: Unit::Si("A"), read: |s| Some(s.il_peak_a) },
    Figure { label: "efficiency", unit: Unit::Percent, read: |s| Some(s.efficiency_true) },
    Figure {
        label: "worst undershoot",
        unit: Unit::Si("V"),
        read: |s| worst_transient(s, |t| t.undershoot_v),
    },
    Figure {
        label: "worst overshoot",
        unit: Unit::Si("V"),
        read: |s| worst_transient(s, |t| t.overshoot_v),
    },
    Figure {
        label: "longest recovery",
        unit: Unit::Recovery,
        read: |s| worst_transient(s, |t| t.recovery_s.unwrap_or(f64::INFINITY)),
    },
    Figure {
        label: "emission margin",
        unit: Unit::Db("dB"),
        read: |s| emission_figure(s, |margin, _| margin),
    },
    Figure {
        label: "emission highest peak",
        unit: Unit::Db("dBµV"),
        read: |s| emission_figure(s, |_, peak| peak),
    },
    Figure {
        label: "audible strongest",
        unit: Unit::Db("dB"),
        read: |s| s.audible.map(|a| a.strongest_dbc),
    },
    Figure {
        label: "audible at",
        unit: Unit::Si("Hz"),
        read: |s| s.audible.map(|a| a.strongest_hz),
    },
    Figure {
        label: "periods over 50 µs",
        unit: Unit::Percent,
        read: |s| s.audible.map(|a| a.slow_period_share),
    },
    Figure { label: "faults", unit: Unit::Count, read: |s| Some(s.faults.len() as f64) },
];

fn value(x: Option<f64>, unit: Unit) -> String {
    if unit == Unit::Recovery && x == Some(f64::INFINITY) {
        return "not back in band".to_string();
    }
    let Some(x) = x.filter(|x| x.is_finite()) else { return "n/a".to_string() };
    match unit {
        Unit::Si(u) => eng(x, u),
        Unit::Recovery => eng(x, "s"),
        Unit::Percent => format!("{:.2} %", 100.0 * x),
        Unit::Db(u) => format!("{x:.1} {u}"),
        Unit::Count => format!("{x:.0}"),
    }
}

fn difference(a: Option<f64>, b: Option<f64>, unit: Unit) -> String {
    let (Some(a), Some(b)) = (a, b) else { return String::new() };
    let d = b - a;
    if !d.is_finite() {
        return String::new();
    }
    // Rounding noise between two equal readings (a millionth of the
    // figures, far under the four digits printed) is no difference: not
    // "+0.007 nHz".
    let d = if d.abs() <= 1e-6 * a.abs().max(b.abs()) { 0.0 } else { d };
    let sign = if d > 0.0 { "+" } else { "" };
    match unit {
        Unit::Si(u) => format!("{sign}{}", eng(d, u)),
        Unit::Recovery => format!("{sign}{}", eng(d, "s")),
        Unit::Percent => format!("{:+.2} points", 100.0 * d),
        Unit::Db(_) => format!("{d:+.1} dB"),
        Unit::Count => format!("{d:+.0}"),
    }
}

/// Rows of `[figure, first, second, second − first]`.
pub fn rows(a: &Summary, b: &Summary) -> Vec<[String; 4]> {
    FIGURES
        .iter()
        .map(|f| {
            let (x, y) = ((f.read)(a), (f.read)(b));
            [f.label.to_string(), value(x, f.unit), value(y, f.unit), difference(x, y, f.unit)]
        })
        .collect()
}

/// The rows as a terminal table under the runs' names.
pub fn table(a: &Summary, b: &Summary) -> String {
    let mut rows = rows(a, b);
    rows.insert(0, ["".into(), a.scenario.clone(), b.scenario.clone(), "second − first".into()]);
    let width = |k: usize| rows.iter().map(|r| r[k].chars().count()).max().unwrap_or(0);
    let (w0, w1, w2) = (width(0), width(1).min(34), width(2).min(34));
    let mut out = String::new();
    for r in &rows {
        out += &format!(
            "  {:<w0$}  {:>w1$}  {:>w2$}  {}\n",
            r[0],
            r[1],
            r[2],
            r[3],
            w0 = w0,
            w1 = w1,
            w2 = w2
        );
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn equal_readings_differ_by_nothing() {
        // 18.67 kHz both: a difference of 7e-12 Hz is rounding, not a figure.
        let f = 18_666.666_666_7;
        assert_eq!(difference(Some(f), Some(f + 7e-12), Unit::Si("Hz")), "0 Hz");
        assert_eq!(difference(Some(f), Some(f + 1.0), Unit::Si("Hz")), "+1.000 Hz");
        assert_eq!(difference(Some(2.0), Some(1.5), Unit::Si("A")), "-500.0 mA");
    }
}
