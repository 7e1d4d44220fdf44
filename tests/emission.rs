//! The conducted-emission estimate against outside references: the Fourier
//! series of a trapezoidal pulse train, the LISN's circuit formula, the input
//! filter's transfer from cascaded two-port (ABCD) matrices, the CISPR 32
//! limit values, and ngspice's AC analysis of the same input network.

use crate::common;
use realfft::num_complex::Complex64;

use common::tools::ngspice_available;
use ripplectl::sim::emission::network::{lisn_impedance, LISN_L_H, LISN_R_OHM};
use ripplectl::sim::emission::{
    limits, record, scan_record, Class, Detector, InputCapacitor, InputFilter, InputNetwork, Ramps,
    Receiver, Scan, Waveform,
};
use ripplectl::sim::record::Cycle;
use std::f64::consts::PI;
use std::process::Command;

/// A fixed-frequency train of `amps`-high pulses, `width_s` wide at their
/// 50 % points, every `period_s` over `[0, span_s]` (whole periods, so the
/// record is exactly periodic).
fn pulse_train(period_s: f64, width_s: f64, amps: f64, span_s: f64) -> Vec<Cycle> {
    let n = (span_s / period_s).round() as usize;
    (0..n)
        .map(|k| Cycle {
            t_s: (k as f64 + 0.25) * period_s,
            period_s,
            on_s: width_s,
            il_max_a: amps,
            il_min_a: amps,
            vo_max_v: 0.0,
            vo_min_v: 0.0,
            il_est_max_a: f64::NAN,
            il_on_a: amps,
            il_off_a: amps,
        })
        .collect()
}

const PERIOD_S: f64 = 4e-6; // 250 kHz: every harmonic on a 2.5 kHz tuning step
const WIDTH_S: f64 = 1.1e-6; // duty 0.275: sinc nulls only at multiples of 40
const EDGE_S: f64 = 50e-9; // 1/(π·t_r) = 6.4 MHz: the second corner in band
const SPAN_S: f64 = 2e-3;

/// The receiver's reading of the pulse train through `transfer`.
fn train_scan(transfer: impl Fn(f64) -> Complex64) -> Scan {
    let cycles = pulse_train(PERIOD_S, WIDTH_S, 1.0, SPAN_S);
    let ramps = Ramps { rise_s: EDGE_S, fall_s: EDGE_S, turn_on_delay_s: 0.0 };
    let current = Waveform::switch_current(&cycles, ramps, 0.0, SPAN_S);
    scan_record(record(&current, 0.0, SPAN_S), transfer, &Receiver::band_b())
}

fn reading_at(scan: &Scan, f_hz: f64, peak: bool) -> f64 {
    let k = scan.f_hz.iter().position(|&f| (f - f_hz).abs() < 1.0).expect("a tuning step");
    if peak {
        scan.peak_dbuv[k]
    } else {
        scan.average_dbuv[k]
    }
}

fn sinc(x: f64) -> f64 {
    if x == 0.0 {
        1.0
    } else {
        x.sin() / x
    }
}

/// Clayton R. Paul, Introduction to Electromagnetic Compatibility (2nd ed.),
/// §3.2 (spectra of trapezoidal pulse trains): with pulse width τ at the
/// 50 % points and equal rise and fall times τ_r, the one-sided amplitude
/// of harmonic n is `2A(τ/T)·|sinc(nπτ/T)|·|sinc(nπτ_r/T)|`. A receiver
/// reads a steady sine as its RMS value: that amplitude over √2.
fn paul_dbuv(n: u32, amps: f64) -> f64 {
    let n = f64::from(n);
    let c = 2.0
        * amps
        * (WIDTH_S / PERIOD_S)
        * sinc(n * PI * WIDTH_S / PERIOD_S).abs()
        * sinc(n * PI * EDGE_S / PERIOD_S).abs();
    20.0 * (c / 2f64.sqrt() / 1e-6).log10()
}

#[test]
fn trapezoidal_train_reads_its_fourier_series() {
    // 1 A through 1 Ω: the readings are the current's spectrum in dBµV.
    let scan = train_scan(|_| Complex64::new(1.0, 0.0));
    for n in [1, 2, 3, 4, 5, 6, 7, 8, 12, 20, 28, 52, 60, 100] {
        let f = f64::from(n) / PERIOD_S;
        let expect = paul_dbuv(n, 1.0);
        for peak in [true, false] {
            let got = reading_at(&scan, f, peak);
            println!("n = {n:3}  {:6.2} MHz  Paul {expect:7.2} dBµV  read {got:7.2} dBµV", f / 1e6);
            // Issue requirement: within 0.5 dB at the harmonics.
            assert!((got - expect).abs() < 0.5, "harmonic {n}: {got:.2} against {expect:.2}");
        }
    }
    // Between harmonics the steady train has nothing: 125 kHz from the
    // nearest line the 9 kHz Gaussian filter leaves far less than -60 dB.
    let between = reading_at(&scan, 1.125e6, true);
    assert!(between < paul_dbuv(4, 1.0) - 60.0, "between lines: {between:.1} dBµV");
}

/// CISPR 16-1-2: the 50 Ω/50 µH network presents 50 Ω in parallel with
/// 50 µH at the equipment port: |Z| = R·ωL/√(R² + (ωL)²), phase
/// atan(R/(ωL)).
#[test]
fn lisn_impedance_follows_its_circuit() {
    assert_eq!((LISN_R_OHM, LISN_L_H), (50.0, 50e-6));
    for f in [150e3, 1e6, 30e6] {
        let wl = 2.0 * PI * f * 50e-6;
        let magnitude = 50.0 * wl / (50.0f64.powi(2) + wl * wl).sqrt();
        let phase = (50.0 / wl).atan();
        let z = lisn_impedance(f);
        assert!((z.norm() - magnitude).abs() < 1e-9 * magnitude, "{f} Hz: {z}");
        assert!((z.arg() - phase).abs() < 1e-9, "{f} Hz: {z}");
    }
    // At the band's ends (worked by hand): 34.29 Ω at 150 kHz, 50.0 Ω at 30 MHz.
    assert!((lisn_impedance(150e3).norm() - 34.29).abs() < 0.01);
    assert!((lisn_impedance(30e6).norm() - 50.0).abs() < 0.01);
}

const CAPACITOR: InputCapacitor = InputCapacitor { c_f: 4.7e-6, esr_ohm: 0.010, esl_h: 2e-9 };
const FILTER: InputFilter = InputFilter {
    l_h: 22e-6,
    c_f: 4.7e-6,
    damping_r_ohm: 1.0,
    damping_c_f: 22e-6,
    c_esl_h: 1.5e-9,
    l_epc_f: 3e-12,
};

type Abcd = [[Complex64; 2]; 2];

fn mul(a: Abcd, b: Abcd) -> Abcd {
    let c = |i: usize, j: usize| a[i][0] * b[0][j] + a[i][1] * b[1][j];
    [[c(0, 0), c(0, 1)], [c(1, 0), c(1, 1)]]
}

fn shunt(y: Complex64) -> Abcd {
    let (one, zero) = (Complex64::new(1.0, 0.0), Complex64::new(0.0, 0.0));
    [[one, zero], [y, one]]
}

fn series(z: Complex64) -> Abcd {
    let (one, zero) = (Complex64::new(1.0, 0.0), Complex64::new(0.0, 0.0));
    [[one, z], [zero, one]]
}

/// Line current per ampere of switch current, from the chain (ABCD)
/// matrices of cascaded two-ports (D. M. Pozar, Microwave Engineering,
/// 4th ed., §4.4): a current source into port 1 of `[A B; C D]` loaded by
/// `Z` at port 2 gives `I₂/I₁ = 1/(C·Z + D)`. The chain is the input
/// capacitor (shunt), then, with the filter, the inductor with its winding
/// capacitance (series) and the shunt capacitor with its damping (shunt);
/// the load is the two networks in series.
fn line_current_ratio(f: f64, filter: bool) -> Complex64 {
    let jw = Complex64::new(0.0, 2.0 * PI * f);
    let z_cin = CAPACITOR.esr_ohm + jw * CAPACITOR.esl_h + 1.0 / (jw * CAPACITOR.c_f);
    let mut chain = shunt(1.0 / z_cin);
    if filter {
        let y_l = 1.0 / (jw * FILTER.l_h) + jw * FILTER.l_epc_f;
        let y_shunt = 1.0 / (1.0 / (jw * FILTER.c_f) + jw * FILTER.c_esl_h)
            + 1.0 / (FILTER.damping_r_ohm + 1.0 / (jw * FILTER.damping_c_f));
        chain = mul(mul(chain, series(1.0 / y_l)), shunt(y_shunt));
    }
    let z_load = 2.0 * (LISN_R_OHM * jw * LISN_L_H) / (LISN_R_OHM + jw * LISN_L_H);
    1.0 / (chain[1][0] * z_load + chain[1][1])
}

#[test]
fn filter_attenuation_in_the_estimate_matches_its_transfer_function() {
    let bare = InputNetwork { capacitor: CAPACITOR, filter: None };
    let filtered = InputNetwork { capacitor: CAPACITOR, filter: Some(FILTER) };
    let scan_bare = train_scan(|f| bare.transfer(f));
    let scan_filtered = train_scan(|f| filtered.transfer(f));
    // Near the band's start, mid band, and well above the shunt capacitor's
    // self-resonance (1.9 MHz).
    for n in [1, 8, 52] {
        let f = f64::from(n) / PERIOD_S;
        let closed =
            20.0 * (line_current_ratio(f, true) / line_current_ratio(f, false)).norm().log10();
        let seen = reading_at(&scan_filtered, f, true) - reading_at(&scan_bare, f, true);
        println!("{:6.2} MHz  closed form {closed:8.2} dB  estimate {seen:8.2} dB", f / 1e6);
        assert!((seen - closed).abs() < 0.05, "{f} Hz: {seen:.3} dB against {closed:.3} dB");
    }
    // And the bare network's LISN voltage is that line current through one
    // network.
    for f in [250e3, 2e6, 10e6] {
        let v = line_current_ratio(f, false) * lisn_impedance(f);
        assert!((bare.transfer(f) - v).norm() < 1e-9 * v.norm());
    }
}

/// CISPR 32 conducted limits for AC mains ports, class A and B (from memory
/// of the standard's tables, the CISPR 22 values carried over).
#[test]
fn limit_lines_at_their_corners() {
    use Detector::{Average, QuasiPeak};
    let cases = [
        (Class::B, QuasiPeak, 150e3, 66.0),
        (Class::B, Average, 150e3, 56.0),
        (Class::B, QuasiPeak, 500e3, 56.0),
        (Class::B, Average, 500e3, 46.0),
        (Class::B, QuasiPeak, 5e6, 56.0),
        (Class::B, QuasiPeak, 5.01e6, 60.0),
        (Class::B, Average, 30e6, 50.0),
        (Class::A, QuasiPeak, 150e3, 79.0),
        (Class::A, Average, 499e3, 66.0),
        (Class::A, QuasiPeak, 500e3, 73.0),
        (Class::A, Average, 30e6, 60.0),
    ];
    for (class, detector, f, expect) in cases {
        let got = limits::limit_dbuv(class, detector, f);
        assert!((got - expect).abs() < 1e-9, "{class:?} {detector:?} {f}: {got}");
    }
    // Falling linearly with log f: halfway in log between 150 and 500 kHz
    // (273.9 kHz) the class B quasi-peak limit is 61 dBµV.
    let mid = (150e3f64 * 500e3).sqrt();
    assert!((limits::limit_dbuv(Class::B, QuasiPeak, mid) - 61.0).abs() < 1e-9);
}

/// The input network with the filter and a network on each line, as a
/// netlist; the switch current is a 1 A AC source between the converter's
/// input and its return.
fn input_netlist(data: &str) -> String {
    let (c, f) = (CAPACITOR, FILTER);
    format!(
        "input network with two line networks\n\
         Isw sw ret AC 1\n\
         Cin sw a {}\nRin a b {}\nLin b ret {}\n\
         Lf sw line {}\nCepc sw line {}\n\
         Cf line c1 {}\nLcf c1 ret {}\n\
         Rd line d1 {}\nCd d1 ret {}\n\
         Rlp line 0 {LISN_R_OHM}\nLlp line 0 {LISN_L_H}\n\
         Rlm ret 0 {LISN_R_OHM}\nLlm ret 0 {LISN_L_H}\n\
         .control\nac dec 10 150k 30Meg\nwrdata {data} vm(line) vp(line)\nquit\n.endc\n.end\n",
        c.c_f,
        c.esr_ohm,
        c.esl_h,
        f.l_h,
        f.l_epc_f,
        f.c_f,
        f.c_esl_h,
        f.damping_r_ohm,
        f.damping_c_f
    )
}

/// ngspice (Debian's package) solves the same circuit with the return line
/// through its own network, node by node: our transfer, which folds the two
/// networks into one series load, agrees within 0.01 dB and 0.1°.
#[test]
fn input_network_matches_ngspice_ac_analysis() {
    if !ngspice_available() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("ac.data");
    let cir = dir.path().join("input.cir");
    std::fs::write(&cir, input_netlist(&data.display().to_string())).unwrap();
    let out = Command::new("ngspice").arg("-b").arg(&cir).output().unwrap();
    assert!(out.status.success(), "ngspice failed: {}", String::from_utf8_lossy(&out.stderr));
    let network = InputNetwork { capacitor: CAPACITOR, filter: Some(FILTER) };
    let text = std::fs::read_to_string(&data).unwrap();
    let mut rows = 0;
    for line in text.lines() {
        let v: Vec<f64> = line.split_whitespace().filter_map(|x| x.parse().ok()).collect();
        let [f, magnitude, _, phase] = v[..] else { continue };
        let ours = network.transfer(f);
        let db = 20.0 * (ours.norm() / magnitude).log10();
        // The source drives `sw` against `ret`: the sign is a convention.
        let turn = (ours.arg() - phase).rem_euclid(PI);
        let turn = turn.min(PI - turn);
        assert!(db.abs() < 0.01, "{f} Hz: {db:.4} dB");
        assert!(turn < 0.1f64.to_radians(), "{f} Hz: {:.3}°", turn.to_degrees());
        rows += 1;
    }
    assert!(rows >= 20, "ngspice wrote {rows} rows");
}

/// The recorder takes the turn-off current from the observation the engine
/// makes up to each edge: every completed cycle of the demo has both edge
/// currents, so the switch current leaves none out.
#[test]
fn demo_cycles_carry_their_edge_currents() {
    let s = ripplectl::sim::Scenario::default_demo();
    let out = ripplectl::sim::run(&s).unwrap();
    let cycles = &out.recorder.cycles;
    assert!(cycles.len() > 400);
    for c in cycles {
        assert!(c.il_on_a.is_finite() && c.il_off_a.is_finite(), "{c:?}");
        assert!(c.il_off_a <= c.il_max_a + 1e-12 && c.il_on_a >= c.il_min_a - 1e-12, "{c:?}");
    }
}
