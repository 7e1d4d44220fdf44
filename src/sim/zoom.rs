//! Plots of one or more runs on shared axes: the whole run (output and
//! inductor-current envelopes, switching frequency per cycle) and a zoom
//! around a time (per-cycle output and inductor-current extremes), one
//! colour per run.

use super::plot::{legend_box, range, time_panel, PlotResult, RUNS};
use super::record::{Cycle, Slice};
use plotters::coord::Shift;
use plotters::prelude::*;

/// What a plot needs of one run.
#[derive(Clone, Copy, Debug)]
pub struct RunView<'a> {
    /// Name in the legend.
    pub name: &'a str,
    /// Envelope slices.
    pub slices: &'a [Slice],
    /// Switching cycles.
    pub cycles: &'a [Cycle],
}

/// Time before a disturbance a zoom starts, s.
pub const ZOOM_BEFORE_S: f64 = 0.2e-3;
/// Time after a disturbance a zoom ends, s.
pub const ZOOM_AFTER_S: f64 = 0.8e-3;

/// One run's band: `(t ms, low, high)` points.
type Band = Vec<(f64, f64, f64)>;

/// The runs' output and inductor-current envelopes and switching frequency
/// over `[0, duration_s]`, stacked.
pub fn runs_svg(
    runs: &[RunView<'_>],
    duration_s: f64,
    title: &str,
) -> Result<String, Box<dyn std::error::Error>> {
    let envelope = |lo: fn(&Slice) -> f64, hi: fn(&Slice) -> f64| {
        bands(runs, |r| r.slices, |s| s.vo_min_v.is_finite().then(|| (s.t_s * 1e3, lo(s), hi(s))))
    };
    let vo = envelope(|s| s.vo_min_v, |s| s.vo_max_v);
    let il = envelope(|s| s.il_min_a, |s| s.il_max_a);
    let f = bands(
        runs,
        |r| r.cycles,
        |c| c.period_s.is_finite().then(|| (c.t_s * 1e3, 1e-3 / c.period_s, 1e-3 / c.period_s)),
    );
    stacked_svg(
        runs,
        0.0..duration_s * 1e3,
        title,
        &[(vo, "output (V)"), (il, "inductor (A)"), (f, "switching (kHz)")],
    )
}

/// Per-cycle output and inductor-current extremes of the runs over
/// `[from_s, to_s]`, stacked.
pub fn zoom_svg(
    runs: &[RunView<'_>],
    from_s: f64,
    to_s: f64,
    title: &str,
) -> Result<String, Box<dyn std::error::Error>> {
    let cycles = |lo: fn(&Cycle) -> f64, hi: fn(&Cycle) -> f64| {
        let inside = |c: &Cycle| c.t_s >= from_s && c.t_s <= to_s;
        bands(runs, |r| r.cycles, move |c| inside(c).then(|| (c.t_s * 1e3, lo(c), hi(c))))
    };
    let vo = cycles(|c| c.vo_min_v, |c| c.vo_max_v);
    let il = cycles(|c| c.il_min_a, |c| c.il_max_a);
    stacked_svg(
        runs,
        from_s * 1e3..to_s * 1e3,
        title,
        &[(vo, "output (V), per cycle"), (il, "inductor (A), per cycle")],
    )
}

/// One band per run: the points `point` makes of the items `items` picks.
fn bands<'a, T: 'a>(
    runs: &[RunView<'a>],
    items: impl Fn(&RunView<'a>) -> &'a [T],
    point: impl Fn(&T) -> Option<(f64, f64, f64)>,
) -> Vec<Band> {
    runs.iter().map(|r| items(r).iter().filter_map(&point).collect()).collect()
}

/// The zoom span around a disturbance at `t_s` within a run of
/// `duration_s`.
pub fn zoom_span(t_s: f64, duration_s: f64) -> (f64, f64) {
    ((t_s - ZOOM_BEFORE_S).max(0.0), (t_s + ZOOM_AFTER_S).min(duration_s))
}

fn stacked_svg(
    runs: &[RunView<'_>],
    t_ms: std::ops::Range<f64>,
    title: &str,
    panels: &[(Vec<Band>, &str)],
) -> Result<String, Box<dyn std::error::Error>> {
    let mut svg = String::new();
    {
        let height = 40 + 260 * panels.len() as u32;
        let root = SVGBackend::with_string(&mut svg, (1100, height)).into_drawing_area();
        root.fill(&WHITE)?;
        let root = root.titled(title, ("sans-serif", 18))?;
        let areas = root.split_evenly((panels.len(), 1));
        for (area, (bands, y_desc)) in areas.iter().zip(panels) {
            band_panel(area, runs, bands, t_ms.clone(), y_desc)?;
        }
        root.present()?;
    }
    Ok(svg)
}

/// Each run's band as two lines (low and high) in its colour; a band whose
/// low and high coincide is drawn as dots.
fn band_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    runs: &[RunView<'_>],
    bands: &[Band],
    t_ms: std::ops::Range<f64>,
    y_desc: &str,
) -> PlotResult
where
    DB::ErrorType: 'static,
{
    let y = range(bands.iter().flatten().flat_map(|p| [p.1, p.2]), 0.06);
    let mut chart = time_panel(area, t_ms, y, y_desc)?;
    for (k, (run, band)) in runs.iter().zip(bands).enumerate() {
        let colour = RUNS[k % RUNS.len()];
        let lo: Vec<(f64, f64)> =
            band.iter().map(|p| (p.0, p.1)).filter(|p| p.1.is_finite()).collect();
        if band.iter().all(|p| p.1 == p.2) {
            chart
                .draw_series(lo.iter().map(|&p| Circle::new(p, 1, colour.filled())))?
                .label(run.name)
                .legend(move |(x, y)| Circle::new((x + 9, y), 3, colour.filled()));
            continue;
        }
        let hi: Vec<(f64, f64)> =
            band.iter().map(|p| (p.0, p.2)).filter(|p| p.1.is_finite()).collect();
        chart
            .draw_series(LineSeries::new(lo, colour.stroke_width(1)))?
            .label(format!("{}: min/max", run.name))
            .legend(move |(x, y)| PathElement::new([(x, y), (x + 18, y)], colour));
        chart.draw_series(LineSeries::new(hi, colour.stroke_width(1)))?;
    }
    legend_box(&mut chart)?;
    Ok(())
}
