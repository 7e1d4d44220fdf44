//! Histograms of a figure over a study's runs, as SVG.
//!
//! Bins: √n of them between 10 and 40 (the square-root choice, common
//! practice), equal width over the values' range; the criterion's limit,
//! when the figure has one, as a dashed line.

use super::criteria::FIGURES;
use super::Outcome;
use plotters::prelude::*;

const BAR: RGBColor = RGBColor(0x2f, 0x5d, 0x8a);
const LIMIT: RGBColor = RGBColor(0xb0, 0x3a, 0x2e);

/// Counts of `values` (finite ones) in equal bins: `(low edge, width,
/// counts)`; none without a finite value.
pub fn bins(values: &[f64]) -> Option<(f64, f64, Vec<u32>)> {
    let v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
    let lo = v.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if v.is_empty() {
        return None;
    }
    let n = ((v.len() as f64).sqrt().round() as usize).clamp(10, 40);
    let width = if hi > lo { (hi - lo) / n as f64 } else { lo.abs().max(1e-12) * 1e-3 };
    let mut counts = vec![0u32; n];
    for x in v {
        let k = (((x - lo) / width) as usize).min(n - 1);
        counts[k] += 1;
    }
    Some((lo, width, counts))
}

/// The SVG histogram of `values` titled `title`, with `limit` marked.
pub fn svg(title: &str, unit: &str, values: &[f64], limit: Option<f64>) -> Result<String, String> {
    let Some((lo, width, counts)) = bins(values) else { return Ok(String::new()) };
    let hi = lo + width * counts.len() as f64;
    let (x0, x1) = match limit {
        Some(l) if l.is_finite() => (lo.min(l), hi.max(l)),
        _ => (lo, hi),
    };
    let pad = 0.03 * (x1 - x0).max(width);
    let top = f64::from(counts.iter().copied().max().unwrap_or(1)) * 1.1;
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, (640, 360)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(40)
            .y_label_area_size(50)
            .build_cartesian_2d(x0 - pad..x1 + pad, 0.0..top)
            .map_err(|e| e.to_string())?;
        chart
            .configure_mesh()
            .x_desc(if unit.is_empty() { title.to_string() } else { format!("{title} ({unit})") })
            .y_desc("runs")
            .y_label_formatter(&|y| format!("{y:.0}"))
            .draw()
            .map_err(|e| e.to_string())?;
        let bars = counts.iter().enumerate().map(|(k, &c)| {
            let a = lo + width * k as f64;
            Rectangle::new([(a, 0.0), (a + width, f64::from(c))], BAR.mix(0.8).filled())
        });
        chart.draw_series(bars).map_err(|e| e.to_string())?;
        if let Some(l) = limit.filter(|l| l.is_finite()) {
            let line = DashedLineSeries::new([(l, 0.0), (l, top)], 6, 4, LIMIT.stroke_width(2));
            chart.draw_series(line).map_err(|e| e.to_string())?;
        }
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(out)
}

/// The histogram of every figure of a study that has a value, its
/// criterion's limit marked: `(figure key, SVG)` in [`FIGURES`] order.
pub fn of_study(outcome: &Outcome) -> Result<Vec<(&'static str, String)>, String> {
    let mut out = Vec::new();
    for (name, unit, get) in FIGURES {
        let values: Vec<f64> =
            outcome.runs.iter().map(|r| r.figures.as_ref().map_or(f64::NAN, get)).collect();
        let svg = svg(name, unit, &values, outcome.limits.on_figure(name))?;
        if !svg.is_empty() {
            out.push((name, svg));
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_finite_value_lands_in_a_bin() {
        let v: Vec<f64> = (0..400).map(|k| f64::from(k) * 0.01).chain([f64::NAN]).collect();
        let (lo, width, counts) = bins(&v).unwrap();
        assert_eq!(counts.len(), 20);
        assert_eq!(counts.iter().sum::<u32>(), 400);
        assert!(counts.iter().all(|&c| c == 20), "{counts:?}");
        assert!(lo == 0.0 && (width - 3.99 / 20.0).abs() < 1e-12);
        let svg = svg("ripple", "V", &v, Some(1.0)).unwrap();
        assert!(svg.starts_with("<svg") && svg.contains("ripple (V)"));
    }
}
