//! The terminal report and the CSV files of a run.

use super::audible::Audible;
use super::cpu::{CpuUsage, WARN_LOAD};
use super::emission::EmissionSummary;
use super::metrics::Summary;
pub use super::notation::eng;
use super::plant::Loss;
use super::record::{Cycle, Slice};
use crate::guard::WindowConfig;
use std::fmt::Write as _;

fn percent(x: Option<f64>) -> String {
    match x {
        Some(v) if v.is_finite() => format!("{:.1} %", 100.0 * v),
        _ => "n/a".to_string(),
    }
}

/// The human-readable report.
pub fn table(s: &Summary, window: &WindowConfig) -> String {
    let rule = "─".repeat(72);
    let mut out = String::new();
    for (label, text) in rows(s, window) {
        let _ = writeln!(out, "  {label:<14}{text}");
    }
    format!("{rule}\n{out}{rule}\n")
}

/// The report's rows: label and text (a continued row has an empty label).
pub fn rows(s: &Summary, window: &WindowConfig) -> Vec<(String, String)> {
    let mut out = Vec::new();
    let error_pct = 100.0 * (s.vout_mean_v - s.vout_setpoint_v) / s.vout_setpoint_v;
    let mut row = |label: &str, text: String| out.push((label.to_string(), text));
    row("scenario", s.scenario.clone());
    row(
        "regulation",
        format!(
            "setpoint {}   mean {}   error {error_pct:+.2} %",
            eng(s.vout_setpoint_v, "V"),
            eng(s.vout_mean_v, "V")
        ),
    );
    row("ripple", format!("{} peak to peak (mean of steady cycles)", eng(s.vout_ripple_pp_v, "V")));
    row(
        "frequency",
        format!(
            "min {}   mean {}   max {}   (window {} to {})",
            eng(s.fsw_min_hz, "Hz"),
            eng(s.fsw_mean_hz, "Hz"),
            eng(s.fsw_max_hz, "Hz"),
            eng(f64::from(window.f_min_hz), "Hz"),
            eng(f64::from(window.f_max_hz), "Hz")
        ),
    );
    row(
        "timing",
        format!(
            "shortest on-time {}   shortest off-time {}",
            eng(s.on_time_min_s, "s"),
            eng(s.off_time_min_s, "s")
        ),
    );
    row(
        "inductor",
        format!(
            "peak {}   estimate error {}",
            eng(s.il_peak_a, "A"),
            s.il_est_error_rms_a.map_or("n/a".to_string(), |e| format!("{} rms", eng(e, "A")))
        ),
    );
    row(
        "efficiency",
        format!(
            "true {}   estimated {}",
            percent(Some(s.efficiency_true)),
            percent(s.efficiency_estimated)
        ),
    );
    if let Some(note) = &s.efficiency_note {
        row("", note.clone());
    }
    let l = &s.losses_w;
    row(
        "losses",
        format!(
            "switch {}  diode {}  low side {}  DCR {}  ESR {}",
            eng(l.get(Loss::HighSide), "W"),
            eng(l.get(Loss::Diode), "W"),
            eng(l.get(Loss::LowSide), "W"),
            eng(l.get(Loss::Dcr), "W"),
            eng(l.get(Loss::Esr), "W")
        ),
    );
    row(
        "",
        format!(
            "switching {}  gate {}  core {}  source {}",
            eng(l.get(Loss::Switching), "W"),
            eng(l.get(Loss::Gate), "W"),
            eng(l.get(Loss::Core), "W"),
            eng(l.get(Loss::Source), "W")
        ),
    );
    let c = &s.clamps;
    row(
        "guard acted",
        format!(
            "min-on {}  min-off {}  max-on {}  f-max {}  below f-min {}  forced {}",
            c.min_on, c.min_off, c.max_on, c.min_period, c.slow_periods, c.forced_pulses
        ),
    );
    let faults = if s.faults.is_empty() {
        "none".to_string()
    } else {
        s.faults
            .iter()
            .map(|f| format!("{} at {}", f.kind, eng(f.t_s, "s")))
            .collect::<Vec<_>>()
            .join(", ")
    };
    for (k, t) in s.transients.iter().enumerate() {
        row(if k == 0 { "transients" } else { "" }, t.line());
    }
    row("audible", audible_text(s.audible.as_ref()));
    row("emission", emission_text(&s.emission));
    row("cpu", cpu_text(s.cpu.as_ref()));
    row("faults", faults);
    row(
        "run",
        format!(
            "{} simulated ({} steady), {} cycles, {} wall",
            eng(s.simulated_s, "s"),
            eng(s.steady_s, "s"),
            s.switching_cycles,
            eng(s.wall_s, "s")
        ),
    );
    out
}

/// The audible-band figures in one line.
pub fn audible_text(a: Option<&Audible>) -> String {
    let Some(a) = a else {
        return "n/a (no steady window long enough to resolve 20 kHz)".to_string();
    };
    format!(
        "strongest below 20 kHz {:+.1} dB re {} at {}   periods over 50 µs {:.1} % of steady time",
        a.strongest_dbc,
        eng(a.fundamental_hz, "Hz"),
        eng(a.strongest_hz, "Hz"),
        100.0 * a.slow_period_share
    )
}

/// The emission estimate in one line.
pub fn emission_text(e: &EmissionSummary) -> String {
    match e {
        EmissionSummary::Estimated {
            class, margin_db, margin_hz, margin_detector, peak_max_dbuv, peak_max_hz,
        } => format!(
            "CISPR 32 class {class:?}: margin {margin_db:.1} dB at {} ({})   highest peak {peak_max_dbuv:.1} dBµV at {}",
            eng(*margin_hz, "Hz"),
            margin_detector.name(),
            eng(*peak_max_hz, "Hz")
        ),
        EmissionSummary::NotAvailable { reason } => format!("not available: {reason}"),
    }
}

/// The CPU row: load, the longest handler, overruns, a warning above
/// [`WARN_LOAD`].
pub fn cpu_text(cpu: Option<&CpuUsage>) -> String {
    let Some(c) = cpu else {
        return "not modelled (no `mcu.core` in the scenario: handlers take no time)".to_string();
    };
    let merged: u64 = c.handlers.iter().map(|h| h.merged).sum();
    let mut text = format!(
        "{} at {}: load {:.1} %   longest handler {} {}",
        c.core,
        eng(c.cpu_clock_hz, "Hz"),
        100.0 * c.load,
        c.worst_handler,
        eng(c.worst_handler_s, "s")
    );
    if merged > 0 {
        text += &format!("   {merged} events merged while waiting");
    }
    if c.load > WARN_LOAD {
        text += &format!("   WARNING: above {:.0} %", 100.0 * WARN_LOAD);
    }
    text
}

/// The envelope slices as CSV.
pub fn slices_csv(slices: &[Slice]) -> String {
    let mut out =
        String::from("t_s,vo_min_v,vo_max_v,il_min_a,il_max_a,il_est_min_a,il_est_max_a,duty\n");
    for s in slices.iter().filter(|s| s.vo_min_v.is_finite()) {
        let _ = writeln!(
            out,
            "{:e},{},{},{},{},{},{},{}",
            s.t_s,
            s.vo_min_v,
            s.vo_max_v,
            s.il_min_a,
            s.il_max_a,
            s.il_est_min_a,
            s.il_est_max_a,
            s.duty
        );
    }
    out
}

/// The switching cycles as CSV.
pub fn cycles_csv(cycles: &[Cycle]) -> String {
    let mut out =
        String::from("t_s,period_s,on_s,f_hz,il_max_a,il_min_a,vo_max_v,vo_min_v,il_est_max_a\n");
    for c in cycles {
        let _ = writeln!(
            out,
            "{:e},{:e},{:e},{},{},{},{},{},{}",
            c.t_s,
            c.period_s,
            c.on_s,
            1.0 / c.period_s,
            c.il_max_a,
            c.il_min_a,
            c.vo_max_v,
            c.vo_min_v,
            c.il_est_max_a
        );
    }
    out
}

/// A temporary file in `dir` created as an ordinary file would be: mode
/// 0666 less the user's umask (a temporary file's own default, 0600, would
/// keep the output from colleagues and web servers).
fn staging_file(dir: &std::path::Path) -> std::io::Result<tempfile::NamedTempFile> {
    let mut builder = tempfile::Builder::new();
    builder.prefix(".ripplectl-");
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    builder.tempfile_in(dir)
}

/// Files to write together: each goes to a temporary file in the target
/// directory first and is renamed into place only when all were written.
pub fn write_all(dir: &std::path::Path, files: &[(&str, Vec<u8>)]) -> std::io::Result<()> {
    use std::io::Write;
    std::fs::create_dir_all(dir)?;
    let mut staged = Vec::new();
    for (name, bytes) in files {
        let mut tmp = staging_file(dir)?;
        tmp.write_all(bytes)?;
        tmp.flush()?;
        staged.push((tmp, dir.join(name)));
    }
    for (tmp, path) in staged {
        tmp.persist(&path).map_err(|e| e.error)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::eng;

    #[test]
    fn engineering_prefixes() {
        assert_eq!(eng(84_321.0, "Hz"), "84.32 kHz");
        assert_eq!(eng(0.0234, "V"), "23.40 mV");
        assert_eq!(eng(1.5e-7, "s"), "150.0 ns");
        assert_eq!(eng(f64::NAN, "A"), "n/a");
        // Rounding that carries into the next digit or prefix.
        assert_eq!(eng(99_999.99, "Hz"), "100.0 kHz");
        assert_eq!(eng(9.9996, "V"), "10.00 V");
        assert_eq!(eng(999_960.0, "Hz"), "1.000 MHz");
        assert_eq!(eng(-0.099_999, "V"), "-100.0 mV");
        assert_eq!(eng(999.4, "Hz"), "999.4 Hz");
    }
}
