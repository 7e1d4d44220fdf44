//! SVG plots of a run and of a sweep.

use super::metrics::Summary;
use super::record::{Cycle, Slice};
use super::sweep::SweepPoint;
use crate::guard::WindowConfig;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

pub(crate) const VOUT: RGBColor = RGBColor(0x1b, 0x6f, 0x6a);
pub(crate) const IL_TRUE: RGBColor = RGBColor(0xc8, 0x6b, 0x1f);
pub(crate) const IL_EST: RGBColor = RGBColor(0x5a, 0x3e, 0x8e);
pub(crate) const GATE: RGBColor = RGBColor(0x3b, 0x3b, 0x3b);
pub(crate) const LIMIT: RGBColor = RGBColor(0x9a, 0x9a, 0x9a);
/// One colour per run when runs share a plot.
pub(crate) const RUNS: [RGBColor; 2] = [VOUT, IL_TRUE];

pub(crate) type PlotResult = Result<(), Box<dyn std::error::Error>>;
/// A polyline in plot coordinates.
type Polyline = Vec<(f64, f64)>;

pub(crate) fn range(values: impl Iterator<Item = f64>, pad: f64) -> std::ops::Range<f64> {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    if !lo.is_finite() {
        return 0.0..1.0;
    }
    let span = (hi - lo).max(1e-9);
    (lo - pad * span)..(hi + pad * span)
}

/// A chart of one quantity against time in ms, our panel style.
pub(crate) type TimeChart<'a, DB> =
    ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

pub(crate) fn time_panel<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, plotters::coord::Shift>,
    t_ms: std::ops::Range<f64>,
    y: std::ops::Range<f64>,
    y_desc: &str,
) -> Result<TimeChart<'a, DB>, Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    let mut chart = ChartBuilder::on(area)
        .margin(8)
        .x_label_area_size(28)
        .y_label_area_size(60)
        .build_cartesian_2d(t_ms, y)?;
    chart.configure_mesh().y_desc(y_desc).x_desc("time (ms)").light_line_style(WHITE).draw()?;
    Ok(chart)
}

pub(crate) fn legend_box<'a, DB: DrawingBackend + 'a>(chart: &mut TimeChart<'a, DB>) -> PlotResult
where
    DB::ErrorType: 'static,
{
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.8))
        .border_style(LIMIT)
        .position(SeriesLabelPosition::UpperRight)
        .draw()?;
    Ok(())
}

/// The run plot: output voltage, true and estimated inductor current, duty
/// cycle and switching frequency (both per cycle) against time (ms), stacked.
pub fn run_svg(
    slices: &[Slice],
    cycles: &[Cycle],
    summary: &Summary,
    window: &WindowConfig,
) -> Result<String, Box<dyn std::error::Error>> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (1100, 1000)).into_drawing_area();
        root.fill(&WHITE)?;
        let root = root.titled(&summary.scenario, ("sans-serif", 20))?;
        let panels = root.split_evenly((4, 1));
        let slices: Vec<&Slice> = slices.iter().filter(|s| s.vo_min_v.is_finite()).collect();
        let t_ms = 0.0..summary.simulated_s * 1e3;
        voltage_panel(&panels[0], &slices, t_ms.clone(), summary.vout_setpoint_v)?;
        current_panel(&panels[1], &slices, t_ms.clone())?;
        duty_panel(&panels[2], cycles, t_ms.clone())?;
        frequency_panel(&panels[3], cycles, t_ms, window)?;
        root.present()?;
    }
    Ok(svg)
}

fn envelope<'a>(
    slices: &'a [&Slice],
    lo: fn(&Slice) -> f64,
    hi: fn(&Slice) -> f64,
) -> (Polyline, Polyline) {
    let pts = |f: fn(&Slice) -> f64| {
        slices.iter().map(|s| (s.t_s * 1e3, f(s))).filter(|p| p.1.is_finite()).collect()
    };
    (pts(lo), pts(hi))
}

fn voltage_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    slices: &[&Slice],
    t_ms: std::ops::Range<f64>,
    setpoint: f64,
) -> PlotResult
where
    DB::ErrorType: 'static,
{
    let y = range(slices.iter().flat_map(|s| [s.vo_min_v, s.vo_max_v]).chain([setpoint]), 0.08);
    let mut chart = time_panel(area, t_ms, y, "output (V)")?;
    let (lo, hi) = envelope(slices, |s| s.vo_min_v, |s| s.vo_max_v);
    chart
        .draw_series(LineSeries::new(lo, VOUT.stroke_width(1)))?
        .label("output min/max")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 18, y)], VOUT));
    chart.draw_series(LineSeries::new(hi, VOUT.stroke_width(1)))?;
    let (a, b) = (chart.x_range().start, chart.x_range().end);
    chart
        .draw_series(DashedLineSeries::new(
            [(a, setpoint), (b, setpoint)],
            6,
            4,
            LIMIT.stroke_width(1),
        ))?
        .label("setpoint")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 18, y)], LIMIT));
    legend_box(&mut chart)?;
    Ok(())
}

fn current_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    slices: &[&Slice],
    t_ms: std::ops::Range<f64>,
) -> PlotResult
where
    DB::ErrorType: 'static,
{
    let y = range(
        slices
            .iter()
            .flat_map(|s| [s.il_min_a, s.il_max_a, s.il_est_min_a, s.il_est_max_a])
            .chain([0.0]),
        0.05,
    );
    let mut chart = time_panel(area, t_ms, y, "inductor (A)")?;
    let (lo, hi) = envelope(slices, |s| s.il_min_a, |s| s.il_max_a);
    chart
        .draw_series(LineSeries::new(lo, IL_TRUE))?
        .label("true min/max")
        .legend(|(x, y)| PathElement::new([(x, y), (x + 18, y)], IL_TRUE));
    chart.draw_series(LineSeries::new(hi, IL_TRUE))?;
    let (lo, hi) = envelope(slices, |s| s.il_est_min_a, |s| s.il_est_max_a);
    if !lo.is_empty() {
        chart
            .draw_series(DashedLineSeries::new(lo, 4, 3, IL_EST.stroke_width(1)))?
            .label("estimated min/max")
            .legend(|(x, y)| PathElement::new([(x, y), (x + 18, y)], IL_EST));
        chart.draw_series(DashedLineSeries::new(hi, 4, 3, IL_EST.stroke_width(1)))?;
    }
    legend_box(&mut chart)?;
    Ok(())
}

fn duty_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    cycles: &[Cycle],
    t_ms: std::ops::Range<f64>,
) -> PlotResult
where
    DB::ErrorType: 'static,
{
    let pts: Vec<(f64, f64)> = cycles
        .iter()
        .map(|c| (c.t_s * 1e3, c.on_s / c.period_s))
        .filter(|p| p.1.is_finite())
        .collect();
    let y = range(pts.iter().map(|p| p.1).chain([0.0]), 0.05);
    let mut chart = time_panel(area, t_ms, y, "duty cycle")?;
    chart.draw_series(pts.iter().map(|&p| Circle::new(p, 1, GATE.filled())))?;
    Ok(())
}

fn frequency_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    cycles: &[Cycle],
    t_ms: std::ops::Range<f64>,
    window: &WindowConfig,
) -> PlotResult
where
    DB::ErrorType: 'static,
{
    let (f_lo, f_hi) = (f64::from(window.f_min_hz) / 1e3, f64::from(window.f_max_hz) / 1e3);
    let pts: Vec<(f64, f64)> = cycles
        .iter()
        .map(|c| (c.t_s * 1e3, 1e-3 / c.period_s))
        .filter(|p| p.1.is_finite())
        .collect();
    let y = range(pts.iter().map(|p| p.1).chain([f_lo, f_hi]), 0.05);
    let mut chart = time_panel(area, t_ms.clone(), y, "switching (kHz)")?;
    chart
        .draw_series(pts.iter().map(|&p| Circle::new(p, 1, VOUT.filled())))?
        .label("per cycle")
        .legend(|(x, y)| Circle::new((x + 9, y), 3, VOUT.filled()));
    for f in [f_lo, f_hi] {
        chart.draw_series(DashedLineSeries::new(
            [(t_ms.start, f), (t_ms.end, f)],
            6,
            4,
            LIMIT.stroke_width(1),
        ))?;
    }
    legend_box(&mut chart)?;
    Ok(())
}

/// Frequency against input voltage, one colour per load; predicted as a
/// dashed line, simulated as dots joined by a solid line.
pub fn sweep_svg(points: &[SweepPoint], title: &str) -> Result<String, Box<dyn std::error::Error>> {
    let palette = [VOUT, IL_TRUE, IL_EST, GATE, RGBColor(0x2f, 0x7d, 0xc4)];
    let mut loads: Vec<f64> = points.iter().map(|p| p.load_a).collect();
    loads.sort_by(f64::total_cmp);
    loads.dedup();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 560)).into_drawing_area();
        root.fill(&WHITE)?;
        let x = range(points.iter().map(|p| p.vin_v), 0.04);
        let y = range(
            points.iter().flat_map(|p| [p.fsw_predicted_hz / 1e3, p.fsw_simulated_hz / 1e3]),
            0.08,
        );
        let mut chart = ChartBuilder::on(&root)
            .caption(title, ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(36)
            .y_label_area_size(60)
            .build_cartesian_2d(x, y)?;
        chart
            .configure_mesh()
            .x_desc("input (V)")
            .y_desc("switching frequency (kHz)")
            .light_line_style(WHITE)
            .draw()?;
        for (k, load) in loads.iter().enumerate() {
            let colour = palette[k % palette.len()];
            let mut row: Vec<&SweepPoint> = points.iter().filter(|p| p.load_a == *load).collect();
            row.sort_by(|a, b| a.vin_v.total_cmp(&b.vin_v));
            let sim: Vec<(f64, f64)> = row
                .iter()
                .map(|p| (p.vin_v, p.fsw_simulated_hz / 1e3))
                .filter(|p| p.1.is_finite())
                .collect();
            let pred: Vec<(f64, f64)> = row
                .iter()
                .map(|p| (p.vin_v, p.fsw_predicted_hz / 1e3))
                .filter(|p| p.1.is_finite())
                .collect();
            chart
                .draw_series(LineSeries::new(sim.clone(), colour.stroke_width(2)))?
                .label(format!("{load:.2} A simulated"))
                .legend(move |(x, y)| {
                    PathElement::new([(x, y), (x + 18, y)], colour.stroke_width(2))
                });
            chart.draw_series(sim.iter().map(|&p| Circle::new(p, 3, colour.filled())))?;
            chart
                .draw_series(DashedLineSeries::new(pred, 6, 4, colour.stroke_width(1)))?
                .label(format!("{load:.2} A predicted"))
                .legend(move |(x, y)| PathElement::new([(x, y), (x + 18, y)], colour));
        }
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.85))
            .border_style(LIMIT)
            .position(SeriesLabelPosition::LowerRight)
            .draw()?;
        root.present()?;
    }
    Ok(svg)
}
