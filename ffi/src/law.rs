//! The law a C configuration chooses, as one type.
//!
//! [`Stack`](ripplectl::stack::Stack) is generic over its law; a C
//! interface needs one state type whatever the configuration says, so the
//! crate's three laws become the variants of [`AnyLaw`], which forwards
//! every method of [`Law`] and [`Regulate`] to the chosen one. A forwarded
//! call is the law's own call behind one `match`: the stack around
//! `AnyLaw::OnTime(law)` decides exactly as the stack around `law` does
//! (`tests/target/run.sh` replays the host's vectors through it).

use ripplectl::law::{
    Command, ComparatorPassThrough, Conditions, Event, Gate, Hysteretic, Law, OnTime, Regulate,
};
use ripplectl::Instant;

/// One of the crate's laws.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AnyLaw {
    /// The hysteretic law.
    Hysteretic(Hysteretic),
    /// The constant on-time law (with its feed-forward, trim, emulated
    /// ripple).
    OnTime(OnTime),
    /// The board's comparator passed through.
    Comparator(ComparatorPassThrough),
}

/// `$body` with `$law` bound to the chosen law, whichever it is.
macro_rules! with_law {
    ($self:expr, $law:ident => $body:expr) => {
        match $self {
            AnyLaw::Hysteretic($law) => $body,
            AnyLaw::OnTime($law) => $body,
            AnyLaw::Comparator($law) => $body,
        }
    };
}

impl AnyLaw {
    /// The on-time law's present on-time, timer ticks (after feed-forward
    /// and trim); 0 for the other laws.
    pub const fn on_time_ticks(&self) -> u32 {
        match self {
            AnyLaw::OnTime(law) => law.on_ticks(),
            _ => 0,
        }
    }
}

impl Law for AnyLaw {
    #[inline]
    fn on_sample(&mut self, code: u16, now: Instant) -> Command {
        with_law!(self, law => law.on_sample(code, now))
    }

    #[inline]
    fn on_edge(&mut self, level: bool, now: Instant) -> Command {
        with_law!(self, law => law.on_edge(level, now))
    }

    #[inline]
    fn on_timer(&mut self, now: Instant) -> Command {
        with_law!(self, law => law.on_timer(now))
    }

    #[inline]
    fn on_event(&mut self, event: Event, now: Instant) -> Command {
        with_law!(self, law => law.on_event(event, now))
    }

    #[inline]
    fn on_gate(&mut self, gate: Gate, at: Instant) {
        with_law!(self, law => law.on_gate(gate, at))
    }

    #[inline]
    fn asks_on_after_off(&self) -> bool {
        with_law!(self, law => law.asks_on_after_off())
    }

    #[inline]
    fn edge_at(&mut self, at: Instant) {
        with_law!(self, law => law.edge_at(at))
    }

    #[inline]
    fn min_on_ticks(&self) -> u32 {
        with_law!(self, law => law.min_on_ticks())
    }

    #[inline]
    fn comparator_code(&self) -> Option<u16> {
        with_law!(self, law => law.comparator_code())
    }
}

impl Regulate for AnyLaw {
    #[inline]
    fn reference_code(&self) -> u16 {
        with_law!(self, law => law.reference_code())
    }

    #[inline]
    fn set_reference(&mut self, code: u16) {
        with_law!(self, law => law.set_reference(code))
    }

    fn retune(&mut self, conditions: &Conditions) {
        with_law!(self, law => law.retune(conditions))
    }

    fn follows_reference(&self) -> bool {
        with_law!(self, law => law.follows_reference())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ripplectl::law::{HystereticConfig, OnTimeConfig};
    use ripplectl::stack::{StackConfig, StackParts};
    use ripplectl::{unwrap_config, FrequencyGuard};

    const CONFIG: StackConfig = StackConfig::demo();

    fn hysteretic() -> Hysteretic {
        let cfg = HystereticConfig { setpoint_v: 5.0, band_v: 0.04 };
        unwrap_config(Hysteretic::new(&cfg, &CONFIG.output_adc))
    }

    fn on_time() -> OnTime {
        let cfg = OnTimeConfig { setpoint_v: 5.0, on_time_s: 2.08e-6 };
        unwrap_config(OnTime::new(&cfg, &CONFIG.output_adc, &CONFIG.clock))
    }

    /// The same events through the law and through `AnyLaw`, each inside
    /// the guard, give the same commands (an oracle outside the forwarding:
    /// the law's own implementation).
    fn same_commands<L: Law + Regulate + Copy>(law: L, wrap: fn(L) -> AnyLaw) {
        let window = unwrap_config(StackParts::new(&CONFIG)).window;
        let mut plain = FrequencyGuard::new(law, window);
        let mut any = FrequencyGuard::new(wrap(law), window);
        let mut t = 1_000u32;
        for k in 0..20_000u32 {
            t = t.wrapping_add(17 + k % 53);
            let code = 1950 + (k * 7919 % 80) as u16;
            let now = Instant(t);
            let (a, b) = match k % 3 {
                0 => (plain.on_sample(code, now), any.on_sample(code, now)),
                1 => (plain.on_edge(k % 2 == 0, now), any.on_edge(k % 2 == 0, now)),
                _ => (plain.on_timer(now), any.on_timer(now)),
            };
            assert_eq!(a, b, "call {k}");
        }
    }

    #[test]
    fn forwards_the_hysteretic_law() {
        same_commands(hysteretic(), AnyLaw::Hysteretic);
    }

    #[test]
    fn forwards_the_on_time_law() {
        same_commands(on_time(), AnyLaw::OnTime);
        assert_eq!(AnyLaw::OnTime(on_time()).on_time_ticks(), on_time().on_ticks());
    }

    #[test]
    fn forwards_the_comparator() {
        same_commands(ComparatorPassThrough::new(true), AnyLaw::Comparator);
        assert_eq!(AnyLaw::Hysteretic(hysteretic()).on_time_ticks(), 0);
    }
}
