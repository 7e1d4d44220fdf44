//! The C interface called as a C firmware calls it, on the host: a board of
//! recording callbacks, the crate's demo configuration.

use super::*;
use core::ffi::{c_char, c_void};
use core::ptr;

/// What the callbacks saw.
#[derive(Default)]
struct Rec {
    pin_high: bool,
    pin_writes: u32,
    armed: Option<u32>,
    now: u32,
    refuse: bool,
}

unsafe extern "C" fn set_gate(ctx: *mut c_void, high: bool) -> bool {
    let rec = unsafe { &mut *ctx.cast::<Rec>() };
    if rec.refuse {
        return false;
    }
    rec.pin_high = high;
    rec.pin_writes += 1;
    true
}

unsafe extern "C" fn arm(ctx: *mut c_void, at: u32, _ends_pulse: bool) {
    unsafe { (*ctx.cast::<Rec>()).armed = Some(at) };
}

unsafe extern "C" fn disarm(ctx: *mut c_void) {
    unsafe { (*ctx.cast::<Rec>()).armed = None };
}

unsafe extern "C" fn now(ctx: *mut c_void) -> u32 {
    unsafe { (*ctx.cast::<Rec>()).now }
}

fn board(rec: &mut Rec) -> Board {
    Board {
        context: ptr::from_mut(rec).cast(),
        set_gate: Some(set_gate),
        arm: Some(arm),
        disarm: Some(disarm),
        now: Some(now),
        active_low: false,
        hardware_pulse_end: true,
    }
}

fn zeroed_state() -> Box<Ripplectl> {
    Box::new(Ripplectl { opaque: [0; RIPPLECTL_STATE_WORDS] })
}

fn name(buf: &[c_char; RIPPLECTL_NAME_LEN]) -> String {
    buf.iter().take_while(|&&c| c != 0).map(|&c| c as u8 as char).collect()
}

fn init(state: &mut Ripplectl, config: &Config, board: &Board) -> ConfigErrorInfo {
    let mut info = ConfigErrorInfo::new(Error::Other, "unset");
    let kind = unsafe { ripplectl_init(state, config, board, &mut info) };
    assert_eq!(kind, info.kind);
    info
}

/// Input code of `v` volts on the demo's input channel (100 k over 9.1 k,
/// ratio 0.0826, into 12 bits at 3.3 V): `round(v · 0.0826 / (3.3/4096))`.
fn vin_code(v: f64) -> u16 {
    (v * 0.0826 / (3.3 / 4096.0)).round() as u16
}

#[test]
fn a_state_never_initialised_does_nothing() {
    let mut state = zeroed_state();
    let s: *mut Ripplectl = &mut *state;
    unsafe {
        assert_eq!(ripplectl_conversion_done(s, 1984, 2461, 10), Status::NotReady);
        assert_eq!(ripplectl_compare_fired(s, 10), Status::NotReady);
        assert_eq!(ripplectl_housekeeping(s, 10, -1), Status::NotReady);
        assert_eq!(ripplectl_conversion_done(ptr::null_mut(), 0, 0, 0), Status::NotReady);
        assert_eq!(ripplectl_read_state(s), State::Off);
        assert_eq!(ripplectl_read_faults(s, ptr::null_mut(), 0), 0);
    }
}

#[test]
fn a_missing_callback_is_named() {
    let mut rec = Rec::default();
    let mut b = board(&mut rec);
    b.arm = None;
    let info = init(&mut zeroed_state(), &config::tests::demo(), &b);
    assert_eq!((info.kind, name(&info.parameter)), (Error::Missing, "board.arm".into()));
    let info =
        unsafe { ripplectl_init(ptr::null_mut(), ptr::null(), ptr::null(), ptr::null_mut()) };
    assert_eq!(info, Error::Missing);
}

#[test]
fn a_refused_configuration_leaves_the_gate_off_and_the_state_idle() {
    let mut rec = Rec { pin_high: true, ..Rec::default() };
    let b = board(&mut rec);
    let mut config = config::tests::demo();
    config.window.min_on_s = 1e-9; // below one tick of 64 MHz (15.6 ns)
    let mut state = zeroed_state();
    let info = init(&mut state, &config, &b);
    assert_eq!((info.kind, name(&info.parameter)), (Error::BelowResolution, "min_on_s".into()));
    assert!(!rec.pin_high, "driven off");
    let s: *mut Ripplectl = &mut *state;
    assert_eq!(unsafe { ripplectl_conversion_done(s, 1984, 2461, 10) }, Status::NotReady);
}

#[test]
fn a_pin_that_refuses_is_reported() {
    let mut rec = Rec { refuse: true, ..Rec::default() };
    let b = board(&mut rec);
    let info = init(&mut zeroed_state(), &config::tests::demo(), &b);
    assert_eq!((info.kind, name(&info.parameter)), (Error::PinFailed, "board.set_gate".into()));
}

/// From a cold start at 24 V: off below the UVLO-on threshold, soft-start
/// at the first tick above it (demo: 16 V), the gate switching on the
/// output readings; an input of 38 V, above the demo's 36 V maximum, stops
/// the stage and logs an input over-voltage (38 V: 40 V would read at the
/// channel's rail, 39.95 V, a sensor fault).
#[test]
fn starts_switches_and_logs_a_fault() {
    let mut rec = Rec::default();
    let b = board(&mut rec);
    let mut state = zeroed_state();
    assert_eq!(init(&mut state, &config::tests::demo(), &b).kind, Error::Ok);
    let s: *mut Ripplectl = &mut *state;
    let rec = unsafe { &mut *b.context.cast::<Rec>() };
    let step = |rec: &mut Rec, t: u32, out: u16, vin: u16| unsafe {
        rec.now = t;
        assert_eq!(ripplectl_conversion_done(s, out, vin, t), Status::Ok);
    };
    // 130 codes: 0.34 V, above the sensor check's "near zero" (0.3 V).
    step(rec, 64, 130, vin_code(15.0));
    assert_eq!(unsafe { ripplectl_housekeeping(s, 64, -1) }, Status::Ok);
    assert_eq!(unsafe { ripplectl_read_state(s) }, State::Off, "below UVLO-on");
    step(rec, 128, 130, vin_code(24.0));
    assert_eq!(unsafe { ripplectl_housekeeping(s, 6_400, -1) }, Status::Ok);
    assert_eq!(unsafe { ripplectl_read_state(s) }, State::SoftStart);
    let writes = rec.pin_writes;
    for k in 0..200u32 {
        let t = 6_464 + 64 * k;
        // The output stays where the soft-start began while its reference
        // rises (the law turns the gate on), then reads 3.1 V, above the
        // reference (off).
        step(rec, t, if k < 100 { 130 } else { 1000 }, vin_code(24.0));
    }
    assert!(rec.pin_writes >= writes + 2, "the gate switched");
    let mut t = Telemetry::of(unsafe { firmware_ref(s) }.unwrap().stack());
    assert!(unsafe { ripplectl_read_telemetry(s, &mut t) });
    assert_eq!(t.state, State::SoftStart);
    assert_eq!(unsafe { ripplectl_housekeeping(s, 19_000, -1) }, Status::Ok);
    step(rec, 20_000, 2000, vin_code(38.0));
    assert_eq!(unsafe { ripplectl_housekeeping(s, 20_064, -1) }, Status::Ok);
    assert!(!rec.pin_high && rec.armed.is_none(), "gate off, compare disarmed");
    let mut log = [Fault { kind: FaultKind::ShortCircuit, at: 0 }; RIPPLECTL_FAULT_LOG_LEN];
    let n = unsafe { ripplectl_read_faults(s, log.as_mut_ptr(), log.len()) };
    let last = log[..n].last().copied();
    assert_eq!(last, Some(Fault { kind: FaultKind::InputOvervoltage, at: 20_064 }));
}
