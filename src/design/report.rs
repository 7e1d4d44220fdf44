//! The proposal as `ripplectl design` prints it: the facts, each choice
//! with its reason, and the predictions over the input × load range.

use super::proposal::Proposal;
use super::values::eng;
use std::fmt::Write as _;

/// Width of the printed text.
const WIDTH: usize = 78;
/// Indent of values and reasons.
const INDENT: usize = 18;

/// A simulated operating point, as the report prints it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Simulated {
    /// Input, V.
    pub vin_v: f64,
    /// Load, A.
    pub load_a: f64,
    /// Mean output error, a fraction of the setpoint.
    pub error: f64,
    /// Lowest, mean and highest switching frequency, Hz.
    pub f_min_hz: f64,
    /// Mean switching frequency, Hz.
    pub f_mean_hz: f64,
    /// Highest switching frequency, Hz.
    pub f_max_hz: f64,
    /// The CPU's load, 0–1.
    pub cpu_load: f64,
}

/// The printed proposal, with the simulated check's points (none: not
/// simulated).
pub fn text(p: &Proposal, simulated: &[Simulated]) -> String {
    let rule = "─".repeat(72);
    let mut s = format!("{rule}\n");
    facts(&mut s, p);
    for c in &p.choices {
        let _ = writeln!(s, "  {:<w$}{}", c.topic, c.value, w = INDENT - 2);
        wrapped(&mut s, &c.why);
    }
    s.push('\n');
    predictions(&mut s, p);
    if !simulated.is_empty() {
        s.push('\n');
        simulation(&mut s, simulated);
    }
    let _ = writeln!(s, "{rule}");
    s.lines().map(|l| format!("{}\n", l.trim_end())).collect()
}

fn facts(s: &mut String, p: &Proposal) {
    let (b, m) = (&p.facts.board, &p.facts.mcu);
    let _ = writeln!(
        s,
        "  {:<w$}{} to {} in, {} / {} out   L {}   C {}   ESR {}",
        "board",
        eng(b.vin_min_v, "V"),
        eng(b.vin_max_v, "V"),
        eng(b.vout_v, "V"),
        eng(b.iout_a, "A"),
        eng(b.l_h, "H"),
        eng(b.c_f, "F"),
        eng(b.esr_ohm, "Ω"),
        w = INDENT - 2
    );
    let _ = writeln!(
        s,
        "  {:<w$}{} at {}, {}-bit ADC, {} reference   LC resonance {}\n",
        "mcu",
        m.core.name(),
        eng(f64::from(m.clock_hz), "Hz"),
        m.adc_bits,
        eng(m.adc_reference_v, "V"),
        eng(b.lc_resonance_hz(), "Hz"),
        w = INDENT - 2
    );
}

/// `text` in lines of at most [`WIDTH`], indented by [`INDENT`].
fn wrapped(s: &mut String, text: &str) {
    let pad = " ".repeat(INDENT);
    let mut line = pad.clone();
    for word in text.split_whitespace() {
        if line.len() > INDENT && line.chars().count() + 1 + word.chars().count() > WIDTH {
            let _ = writeln!(s, "{line}");
            line = pad.clone();
        }
        if line.len() > INDENT {
            line.push(' ');
        }
        line.push_str(word);
    }
    let _ = writeln!(s, "{line}");
}

fn predictions(s: &mut String, p: &Proposal) {
    let _ = writeln!(
        s,
        "  {:<w$}{:>8} {:>9} {:>5} {:>11} {:>10} {:>10} {:>9} {:>10}",
        "predicted",
        "input",
        "load",
        "mode",
        "frequency",
        "ripple",
        "ripple",
        "peak",
        "DCM below",
        w = INDENT - 2
    );
    let _ = writeln!(
        s,
        "{:w$}{:>8} {:>9} {:>5} {:>11} {:>10} {:>10} {:>9} {:>10}",
        "",
        "",
        "",
        "",
        "",
        "current",
        "output",
        "current",
        "",
        w = INDENT
    );
    let floor = f64::from(p.window.f_min_hz);
    for r in &p.predictions {
        let mark = if r.frequency_hz < floor { "*" } else { " " };
        let _ = writeln!(
            s,
            "{:w$}{:>8} {:>9} {:>5} {:>10}{mark} {:>10} {:>10} {:>9} {:>10}",
            "",
            eng(r.vin_v, "V"),
            eng(r.load_a, "A"),
            if r.ccm { "CCM" } else { "DCM" },
            eng(r.frequency_hz, "Hz"),
            eng(r.ripple_current_a, "A"),
            eng(r.ripple_v, "V"),
            eng(r.peak_a, "A"),
            eng(r.boundary_a, "A"),
            w = INDENT
        );
    }
    if p.predictions.iter().any(|r| r.frequency_hz < floor) {
        wrapped(
            s,
            &format!(
                "* below the window's {}: the light-load adaptation (smaller pulses) raises it",
                eng(floor, "Hz")
            ),
        );
    }
    wrapped(
        s,
        "Closed forms (ripplectl::design): the hysteretic cycle with the loop delay and both ripple parts in CCM, the pulse charge in DCM; the on-time law at its feed-forward frequency, in DCM with its trim. In DCM without the light-load adaptation, and the ripple an upper bound.",
    );
}

fn simulation(s: &mut String, points: &[Simulated]) {
    let _ = writeln!(
        s,
        "  {:<w$}{:>8} {:>9} {:>8} {:>11} {:>11} {:>11} {:>6}",
        "simulated",
        "input",
        "load",
        "error",
        "f lowest",
        "f mean",
        "f highest",
        "cpu",
        w = INDENT - 2
    );
    for q in points {
        let _ = writeln!(
            s,
            "{:w$}{:>8} {:>9} {:>+7.2}% {:>11} {:>11} {:>11} {:>5.1}%",
            "",
            eng(q.vin_v, "V"),
            eng(q.load_a, "A"),
            100.0 * q.error,
            eng(q.f_min_hz, "Hz"),
            eng(q.f_mean_hz, "Hz"),
            eng(q.f_max_hz, "Hz"),
            100.0 * q.cpu_load,
            w = INDENT
        );
    }
    wrapped(
        s,
        "The written scenario at each point from a cold start, 20 ms, figures over the second half (ripplectl::design::check): within 1 %, no fault, inside the window, CPU under 70 %.",
    );
}
