//! The emission spectrum as SVG: peak and average readings of one or more
//! runs in dBµV against log frequency, the CISPR 32 limit lines of their
//! classes, and each run's smallest margin marked.

use super::limits::{limit_dbuv, Class, Detector};
use super::Estimate;
use crate::sim::plot::{range, PlotResult, GATE, IL_EST, LIMIT, RUNS};
use plotters::coord::combinators::WithKeyPoints;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

/// Readings plotted per trace at most (each point the largest of its group,
/// so no peak is lost).
const PLOT_POINTS: usize = 2000;

/// Lowest level the plot shows, dBµV (readings below it are left out).
const FLOOR_DBUV: f64 = -20.0;

type SpectrumChart<'a> =
    ChartContext<'a, SVGBackend<'a>, Cartesian2d<WithKeyPoints<LogCoord<f64>>, RangedCoordf64>>;

/// The spectrum plot of the named runs' estimates (one colour per run).
pub fn spectrum_svg(
    runs: &[(&str, &Estimate)],
    title: &str,
) -> Result<String, Box<dyn std::error::Error>> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (1100, 560)).into_drawing_area();
        root.fill(&WHITE)?;
        let mut classes: Vec<Class> = runs.iter().map(|(_, e)| e.class).collect();
        classes.dedup();
        let y = range(
            runs.iter()
                .flat_map(|(_, e)| e.scan.peak_dbuv.iter().copied())
                .map(|r| r.max(FLOOR_DBUV))
                .chain(classes.iter().map(|&c| limit_dbuv(c, Detector::QuasiPeak, 150e3))),
            0.06,
        );
        let mut chart = ChartBuilder::on(&root)
            .caption(title, ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(60)
            .build_cartesian_2d(
                (0.15f64..30.0)
                    .log_scale()
                    .with_key_points(vec![0.15, 0.3, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 30.0]),
                y,
            )?;
        chart
            .configure_mesh()
            .x_desc("frequency (MHz)")
            .y_desc("LISN voltage (dBµV)")
            .light_line_style(WHITE)
            .draw()?;
        for &class in &classes {
            limit_lines(&mut chart, class, classes.len() > 1)?;
        }
        for (k, (name, estimate)) in runs.iter().enumerate() {
            readings(&mut chart, name, estimate, RUNS[k % RUNS.len()])?;
        }
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.85))
            .border_style(LIMIT)
            .position(SeriesLabelPosition::LowerLeft)
            .draw()?;
        root.present()?;
    }
    Ok(svg)
}

fn limit_lines(chart: &mut SpectrumChart<'_>, class: Class, named: bool) -> PlotResult {
    let freqs: Vec<f64> = (0..=400).map(|k| 0.15 * 200f64.powf(f64::from(k) / 400.0)).collect();
    let suffix = if named { format!(" class {class:?}") } else { String::new() };
    for (detector, label, style) in [
        (Detector::QuasiPeak, "quasi-peak limit", GATE.stroke_width(2)),
        (Detector::Average, "average limit", LIMIT.stroke_width(2)),
    ] {
        let pts: Vec<(f64, f64)> =
            freqs.iter().map(|&f| (f, limit_dbuv(class, detector, f * 1e6))).collect();
        chart
            .draw_series(LineSeries::new(pts, style))?
            .label(format!("{label}{suffix}"))
            .legend(move |(x, y)| PathElement::new([(x, y), (x + 18, y)], style));
    }
    Ok(())
}

fn readings(
    chart: &mut SpectrumChart<'_>,
    name: &str,
    estimate: &Estimate,
    colour: RGBColor,
) -> PlotResult {
    let scan = &estimate.scan;
    let peak = decimated(&scan.f_hz, &scan.peak_dbuv);
    let average = decimated(&scan.f_hz, &scan.average_dbuv);
    let faint = colour.mix(0.55);
    for (trace, style, label) in [
        (peak, colour.stroke_width(1), format!("{name}: peak")),
        (average, faint.stroke_width(1), format!("{name}: average")),
    ] {
        let mut pieces = above_floor(trace).into_iter();
        if let Some(first) = pieces.next() {
            chart
                .draw_series(LineSeries::new(first, style))?
                .label(label)
                .legend(move |(x, y)| PathElement::new([(x, y), (x + 18, y)], style));
        }
        for piece in pieces {
            chart.draw_series(LineSeries::new(piece, style))?;
        }
    }
    margin_marker(chart, estimate)
}

/// A vertical bar from the reading up to the limit where the margin is
/// smallest, with its value.
fn margin_marker(chart: &mut SpectrumChart<'_>, estimate: &Estimate) -> PlotResult {
    let m = estimate.margin;
    if !m.f_hz.is_finite() {
        return Ok(());
    }
    let f = m.f_hz / 1e6;
    let limit = limit_dbuv(estimate.class, m.detector, m.f_hz);
    let reading = limit - m.db;
    chart.draw_series([PathElement::new([(f, reading), (f, limit)], IL_EST.stroke_width(3))])?;
    chart.draw_series([Text::new(
        format!("margin {:.1} dB", m.db),
        (f, limit.max(reading) + 1.5),
        ("sans-serif", 14).into_font().color(&IL_EST),
    )])?;
    Ok(())
}

/// The runs of consecutive points at or above [`FLOOR_DBUV`].
fn above_floor(points: Vec<(f64, f64)>) -> Vec<Vec<(f64, f64)>> {
    let mut pieces: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    for p in points {
        match pieces.last_mut() {
            Some(piece) if p.1 >= FLOOR_DBUV => piece.push(p),
            Some(piece) if !piece.is_empty() => pieces.push(Vec::new()),
            _ => {}
        }
    }
    pieces.retain(|p| !p.is_empty());
    pieces
}

/// At most [`PLOT_POINTS`] points, each the largest reading of its group.
fn decimated(f_hz: &[f64], dbuv: &[f64]) -> Vec<(f64, f64)> {
    let group = f_hz.len().div_ceil(PLOT_POINTS).max(1);
    f_hz.chunks(group)
        .zip(dbuv.chunks(group))
        .filter_map(|(fs, ds)| {
            let (k, d) = ds.iter().enumerate().max_by(|a, b| a.1.total_cmp(b.1))?;
            d.is_finite().then_some((fs[k] / 1e6, *d))
        })
        .collect()
}
