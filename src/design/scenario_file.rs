//! A proposal ([`super::proposal`]) as a complete, commented
//! scenario file that `simulate` runs as it is.

use super::budget::Scheme;
use super::laws::LawChoice;
use super::proposal::Proposal;
use super::values::eng;
use super::values::Choice;
use crate::sim::scenario::{Scenario, ScenarioError};
use std::fmt::Write as _;

/// Simulated time of the written scenario: a cold start, a load step and
/// an input sag and ramp, each piece long enough for the DC correction to
/// settle before its steady half (its time constant is 20 housekeeping
/// windows).
pub const DURATION_S: f64 = 0.020;

/// The scenario's TOML text.
pub fn scenario_toml(p: &Proposal) -> String {
    let mut s = String::new();
    header(&mut s, p);
    plant(&mut s, p);
    mcu(&mut s, p);
    control(&mut s, p);
    firmware(&mut s, p);
    profile(&mut s, p);
    s
}

/// The written text, parsed and checked as `simulate` will.
pub fn scenario(p: &Proposal) -> Result<Scenario, ScenarioError> {
    Scenario::from_toml(&scenario_toml(p))
}

/// A number as TOML writes it back exactly (shortest round trip), in
/// exponent form when small or large.
pub fn lit(x: f64) -> String {
    if x != 0.0 && !(1e-3..1e7).contains(&x.abs()) {
        format!("{x:e}")
    } else if x.fract() == 0.0 {
        format!("{x:.1}")
    } else {
        format!("{x}")
    }
}

/// An `f32` setting, printed as the `f32` it is.
fn lit32(x: f32) -> String {
    lit(x.to_string().parse().unwrap_or(f64::from(x)))
}

/// A short description of the board and core.
pub fn title(p: &Proposal) -> String {
    let b = &p.facts.board;
    format!(
        "{}-{} V to {} V / {} A, {}",
        b.vin_min_v,
        b.vin_max_v,
        b.vout_v,
        b.iout_a,
        p.plan.scheme.name()
    )
}

fn header(s: &mut String, p: &Proposal) {
    let b = &p.facts.board;
    let m = &p.facts.mcu;
    let intro = format!(
        "Written by `ripplectl design` for a buck from {} to {} V to {} V / {} A (L {}, C {}, ESR {}) on a {} at {}. Values marked \"assumed\" are the demo stage's: replace them with your parts. A simulation is not a measurement: bring a board up from a current-limited bench supply, with a hardware current limit that does not depend on the firmware.",
        b.vin_min_v,
        b.vin_max_v,
        b.vout_v,
        b.iout_a,
        eng(b.l_h, "H"),
        eng(b.c_f, "F"),
        eng(b.esr_ohm, "Ω"),
        m.core.name(),
        eng(f64::from(m.clock_hz), "Hz")
    );
    comment_wrapped(s, "# ", &intro);
    s.push_str("#\n");
    s.push_str("# Choices and their reasons:\n");
    for c in &p.choices {
        comment_wrapped(s, "# - ", &format!("{}: {} — {}.", c.topic, c.value, c.why));
    }
    s.push_str("#\n# Units are SI: volts, amperes, ohms, henries, farads, seconds, hertz.\n\n");
    let _ = writeln!(s, "name = \"designed: {}\"", title(p));
    let _ = writeln!(s, "duration_s = {}", lit(DURATION_S));
    s.push_str("initial_output_v = 0.0     # a cold start: the supervisor soft-starts\n\n");
}

/// `text` as comment lines of at most 78 characters, the first starting
/// with `first` and the others indented to match.
fn comment_wrapped(s: &mut String, first: &str, text: &str) {
    let indent = format!("#{}", " ".repeat(first.chars().count() - 1));
    let mut line = first.to_string();
    let mut empty = true;
    for word in text.split_whitespace() {
        if !empty && line.chars().count() + 1 + word.chars().count() > 78 {
            let _ = writeln!(s, "{line}");
            line.clone_from(&indent);
            empty = true;
        }
        if !empty {
            line.push(' ');
        }
        line.push_str(word);
        empty = false;
    }
    let _ = writeln!(s, "{line}");
}

fn plant(s: &mut String, p: &Proposal) {
    let (b, a) = (&p.facts.board, &p.stage);
    let rows = [
        ("l_h", lit(b.l_h), "--l"),
        ("c_f", lit(b.c_f), "--c: the capacitance left at the output voltage"),
        ("esr_ohm", lit(b.esr_ohm), "--esr"),
        ("dcr_ohm", lit(a.dcr_ohm), "assumed"),
        ("r_on_ohm", lit(a.r_on_ohm), "assumed: high-side MOSFET"),
        ("r_source_ohm", lit(a.r_source_ohm), "assumed: bus wiring and input filter"),
        ("diode_vf_v", lit(a.diode_vf_v), "assumed: Schottky freewheeling diode"),
        ("diode_rd_ohm", lit(a.diode_rd_ohm), "assumed"),
        ("t_rise_s", lit(a.t_edge_s), "assumed"),
        ("t_fall_s", lit(a.t_edge_s), "assumed"),
        ("gate_charge_c", lit(a.gate_charge_c), "assumed"),
        ("gate_drive_v", lit(a.gate_drive_v), "assumed"),
    ];
    s.push_str("[plant]\n");
    table_rows(s, rows.iter().map(|(k, v, n)| (*k, v.as_str(), *n)));
    s.push_str("stage = { type = \"non-synchronous\" }   # assumed: a diode stage\n");
    s.push_str("# Add `saturation`, `core` and `input_capacitor` (see the shipped scenarios)\n");
    s.push_str("# for the inductor's saturation, core loss and the emission estimate.\n\n");
}

/// `key = value  # note` lines, the notes aligned.
fn table_rows<'a>(s: &mut String, rows: impl Iterator<Item = (&'a str, &'a str, &'a str)>) {
    for (key, value, note) in rows {
        let line = format!("{key} = {value}");
        if note.is_empty() {
            let _ = writeln!(s, "{line}");
        } else {
            let _ = writeln!(s, "{line:<25} # {note}");
        }
    }
}

fn mcu(s: &mut String, p: &Proposal) {
    let m = &p.facts.mcu;
    let readings = match p.plan.scheme {
        Scheme::OnTimeSampled => "the law's samples".to_string(),
        _ => "readings for the protections; the law runs on the comparator".to_string(),
    };
    let rows = [
        (
            "core",
            format!("\"{}\"", core_key(p)),
            "--core: handlers take their counted time".to_string(),
        ),
        ("clock_hz", m.clock_hz.to_string(), "--clock; the timer counts the core clock".into()),
        ("adc_bits", m.adc_bits.to_string(), "--adc-bits".into()),
        ("adc_reference_v", lit(m.adc_reference_v), "--adc-ref".into()),
        ("divider_ratio", format!("{:.6}", p.output_divider.ratio()), p.output_divider.label()),
        ("sample_rate_hz", lit(p.plan.sample_hz), readings),
        ("conversion_s", lit(m.conversion_s), "the demo ADC's".into()),
        ("noise_lsb_rms", lit(m.noise_lsb_rms), "the demo ADC's".into()),
        ("seed", "7".to_string(), String::new()),
        ("isr_latency_s", lit(m.isr_latency_s), "the demo MCU's".into()),
        ("comparator_delay_s", lit(m.comparator_delay_s), "the demo MCU's".into()),
        ("vin_divider_ratio", format!("{:.6}", p.input_divider.ratio()), p.input_divider.label()),
    ];
    s.push_str("[mcu]\n");
    table_rows(s, rows.iter().map(|(k, v, n)| (*k, v.as_str(), n.as_str())));
    s.push('\n');
}

/// The core as the scenario names it.
fn core_key(p: &Proposal) -> String {
    serde_json::to_value(p.facts.mcu.core)
        .ok()
        .and_then(|v| v.as_str().map(str::to_string))
        .unwrap_or_default()
}

fn control(s: &mut String, p: &Proposal) {
    s.push_str("[control]\ndc_correction = true     # the mean output, not an edge of the ripple, at the setpoint\n\n");
    s.push_str("[control.law]\n");
    let input = match p.plan.scheme {
        Scheme::OnTimeSampled => "sampled",
        _ => "edge",
    };
    match p.plan.law {
        LawChoice::Hysteretic { band_v } => {
            s.push_str("kind = \"hysteretic\"\n");
            let _ = writeln!(s, "input = \"{input}\"");
            let _ = writeln!(s, "setpoint_v = {}", lit(p.facts.board.vout_v));
            let _ = writeln!(s, "band_v = {:<18}# {}", lit(band_v), reason(p, "band"));
        }
        LawChoice::OnTime { frequency_hz, on_time_s, emulated_ripple_v } => {
            s.push_str("kind = \"on-time\"\n");
            let _ = writeln!(s, "input = \"{input}\"");
            let _ = writeln!(s, "setpoint_v = {}", lit(p.facts.board.vout_v));
            let _ = writeln!(
                s,
                "on_time_s = {:<15}# at the middle input, before feed-forward",
                lit(on_time_s)
            );
            let _ = writeln!(
                s,
                "feed_forward_hz = {:<9}# {}",
                lit(frequency_hz),
                reason(p, "frequency")
            );
            s.push_str("trim = true               # the mean frequency locked to it\n");
            if let Some(v) = emulated_ripple_v {
                let _ =
                    writeln!(s, "emulated_ripple_v = {:<7}# the ripple check asks for it", lit(v));
            }
        }
    }
    let w = &p.window;
    s.push_str("\n[control.window]\n");
    let rows = [
        ("f_min_hz", lit32(w.f_min_hz), "above the audible band (common practice)"),
        ("f_max_hz", lit32(w.f_max_hz), "below CISPR 32's conducted band from 150 kHz"),
        ("min_on_s", lit32(w.min_on_s), "the demo driver's"),
        ("min_off_s", lit32(w.min_off_s), "the demo driver's (bootstrap refresh)"),
        ("max_on_s", lit32(w.max_on_s), "80 % of the longest period"),
        ("light_load", "\"smaller-pulses\"".to_string(), "keeps the floor at light load"),
    ];
    table_rows(s, rows.iter().map(|(k, v, n)| (*k, v.as_str(), *n)));
    s.push('\n');
}

fn reason(p: &Proposal, topic: &str) -> String {
    p.choices
        .iter()
        .find(|c| c.topic == topic)
        .map_or(String::new(), |c: &Choice| format!("{}: see the reasons above", c.value))
}

fn firmware(s: &mut String, p: &Proposal) {
    s.push_str("[firmware]\n");
    let _ = writeln!(
        s,
        "housekeeping_hz = {:<9}# slow path: at least 3 x the LC resonance",
        lit(p.hk.hz)
    );
    if let Some(bw) = p.hk.observer_hz {
        let _ =
            writeln!(s, "observer_bandwidth_hz = {:<3}# a fifth of the housekeeping rate", lit(bw));
    }
    let c = &p.protections.config;
    let rows = [
        ("uvlo_on_v", lit32(c.uvlo_on_v), "90 % of the lowest input"),
        ("uvlo_off_v", lit32(c.uvlo_off_v), "85 % of the lowest input"),
        ("vin_max_v", lit32(c.vin_max_v), "10 % above the highest input"),
        ("vin_max_hysteresis_v", lit32(c.vin_max_hysteresis_v), ""),
        ("ovp_v", lit32(c.ovp_v), "10 % above the output"),
        ("current_limit_a", lit32(c.current_limit_a), "1.25 x the full-load peak"),
        ("short_cycles", c.short_cycles.to_string(), "demo value"),
        ("hiccup_s", lit32(c.hiccup_s), "demo value"),
        ("soft_start_s", lit32(c.soft_start_s), "a start into full load stays below the limit"),
        ("stuck_low_v", lit32(c.stuck_low_v), "6 % of the output"),
        ("stuck_implied_v", lit32(c.stuck_implied_v), "40 % of the output"),
        ("stuck_cycles", c.stuck_cycles.to_string(), "demo value"),
        ("max_retries", c.max_retries.to_string(), "demo value"),
    ];
    s.push_str("\n[firmware.protection]\n");
    table_rows(s, rows.iter().map(|(k, v, n)| (*k, v.as_str(), *n)));
    s.push('\n');
}

fn profile(s: &mut String, p: &Proposal) {
    let b = &p.facts.board;
    let (lo, mid, hi) = (b.vin_min_v, b.vin_nominal_v(), b.vin_max_v);
    s.push_str("# The middle input; a sag to the lowest at 12 ms; a ramp to the highest\n");
    s.push_str("# from 16 to 17 ms.\n[input]\n");
    let _ = writeln!(
        s,
        "points = [[0.0, {m}], [0.012, {m}], [0.012, {l}], [0.016, {l}], [0.017, {h}]]",
        m = lit(mid),
        l = lit(lo),
        h = lit(hi)
    );
    s.push_str("\n# Half load, then full load from 8 ms.\n");
    for (at, share) in [(0.0, 0.5), (0.008, 1.0)] {
        let _ = writeln!(
            s,
            "[[load]]\nat_s = {}\nkind = \"resistive\"\nohms = {}\n",
            lit(at),
            lit(b.vout_v / (share * b.iout_a))
        );
    }
}
