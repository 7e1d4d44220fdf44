//! Audible-band figures against Fourier series of known signals.

use ripplectl::sim::audible::{lines, AUDIBLE_HZ};
use ripplectl::sim::cells::CellGrid;
use std::f64::consts::PI;

/// A symmetric triangle wave of peak `amplitude` at `f_hz` (an inductor
/// current's ripple) plus a sine of `a_low` at `f_low_hz`, sampled as cell
/// averages over `span_s`.
fn ripple_with_hum(f_hz: f64, amplitude: f64, f_low_hz: f64, a_low: f64, span_s: f64) -> CellGrid {
    let mut grid = CellGrid::covering(0.0, span_s, 0.25e-6);
    let n = 64 * grid.cells.len();
    let dt = span_s / n as f64;
    let signal = |t: f64| {
        let phase = (t * f_hz).fract();
        let triangle = amplitude * (1.0 - 4.0 * (phase - 0.5).abs());
        triangle + a_low * (2.0 * PI * f_low_hz * t).sin() + 2.0
    };
    for k in 0..n {
        let (t0, t1) = (k as f64 * dt, (k + 1) as f64 * dt);
        grid.add_segment((t0, signal(t0)), (t1, signal(t1)));
    }
    grid
}

/// A triangle wave of peak A has a fundamental of amplitude 8A/π² (its
/// Fourier series, 8A/(π²n²) at odd n: any table of Fourier series, e.g.
/// Kreyszig, Advanced Engineering Mathematics, ch. 11). With a 30 dB weaker tone of
/// 5 kHz the audible line is that tone, 30 dB below the fundamental
/// (within 0.2 dB: both fall on bins; Hann amplitudes are exact there).
#[test]
fn audible_line_relative_to_the_switching_fundamental() {
    let (f_sw, a) = (60e3, 0.5);
    let fundamental = 8.0 * a / (PI * PI);
    let hum = fundamental * 10f64.powf(-30.0 / 20.0);
    let grid = ripple_with_hum(f_sw, a, 5e3, hum, 2e-3);
    let l = lines(&grid).expect("2 ms resolves 5 kHz");
    println!("{l:?}  {:.2} dB", l.relative_db());
    assert!((l.fundamental.0 - f_sw).abs() < 1.0);
    assert!((l.fundamental.1 - fundamental).abs() < 0.01 * fundamental);
    assert!((l.audible.0 - 5e3).abs() < 1.0);
    assert!((l.relative_db() + 30.0).abs() < 0.2, "{:.2} dB", l.relative_db());
    assert!(l.audible.0 < AUDIBLE_HZ);
}

/// A record shorter than three bins below 20 kHz (T < 150 µs) resolves no
/// audible line.
#[test]
fn too_short_a_record_has_no_audible_figure() {
    let grid = ripple_with_hum(60e3, 0.5, 5e3, 0.01, 0.1e-3);
    assert!(lines(&grid).is_none());
}
