//! A first configuration from the board's facts: the shared settings
//! ([`super::context`]), the first loop in order of preference that fits
//! the core ([`super::hysteretic_plan`], [`super::on_time_plan`]) and
//! passes the check, the protections and the soft-start
//! ([`super::protect`]), each with the rule it follows.

use super::budget::Scheme;
use super::context::{context, Context, Housekeeping};
use super::divider::Divider;
use super::facts::{refuse, AssumedStage, DesignError, Facts, LawRequest};
use super::laws::{LawPlan, Unfit};
use super::protect::{self, Protections};
use super::range::{predict, Prediction};
use super::values::eng;
use super::values::Choice;
use crate::guard::WindowConfig;

/// The whole proposal.
#[derive(Clone, Debug, PartialEq)]
pub struct Proposal {
    /// The facts it starts from.
    pub facts: Facts,
    /// The stage's parts assumed.
    pub stage: AssumedStage,
    /// Output divider.
    pub output_divider: Divider,
    /// Input divider.
    pub input_divider: Divider,
    /// Housekeeping and observer.
    pub hk: Housekeeping,
    /// The window.
    pub window: WindowConfig,
    /// The loop.
    pub plan: LawPlan,
    /// Protections and soft-start.
    pub protections: Protections,
    /// Predictions over the input × load range.
    pub predictions: Vec<Prediction>,
    /// Every choice with its reason, in print order.
    pub choices: Vec<Choice>,
    /// Loops passed over before this one, and why.
    pub passed_over: Vec<(Scheme, String)>,
}

/// The loops tried for a request, in order of preference.
pub fn candidates(law: LawRequest) -> &'static [Scheme] {
    match law {
        LawRequest::Auto => &[Scheme::HystereticEdge, Scheme::OnTimeEdge, Scheme::OnTimeSampled],
        LawRequest::Hysteretic => &[Scheme::HystereticEdge],
        LawRequest::OnTime => &[Scheme::OnTimeEdge, Scheme::OnTimeSampled],
    }
}

/// The loop of `scheme` for the context, if it fits.
fn plan(scheme: Scheme, ctx: &Context) -> Result<LawPlan, Unfit> {
    match scheme {
        Scheme::HystereticEdge => super::hysteretic_plan::plan(ctx),
        Scheme::OnTimeEdge | Scheme::OnTimeSampled => super::on_time_plan::plan(scheme, ctx),
    }
}

/// A further check of a proposal (the simulator's, in
/// [`super::check`]): `Err` says why it fails.
pub type Check<'a> = &'a (dyn Fn(&Proposal) -> Result<(), String> + Sync);

/// Propose a configuration from the closed forms and the CPU budget, or
/// say (on `--core`) why none fits.
pub fn propose(facts: &Facts) -> Result<Proposal, DesignError> {
    propose_with(facts, &|_| Ok(()))
}

/// As [`propose`], passing over a loop whose proposal fails `check`.
pub fn propose_with(facts: &Facts, check: Check) -> Result<Proposal, DesignError> {
    facts.validate()?;
    let ctx = context(facts)?;
    let mut passed_over = Vec::new();
    for &scheme in candidates(facts.law) {
        match plan(scheme, &ctx) {
            Ok(plan) => {
                let p = assemble(&ctx, plan, passed_over.clone());
                match check(&p) {
                    Ok(()) => return Ok(p),
                    Err(why) => passed_over.push((scheme, why)),
                }
            }
            Err(Unfit::Refused(e)) => return Err(e),
            Err(Unfit::Rejected(why)) => passed_over.push((scheme, why)),
        }
    }
    Err(nothing_fits(facts, &passed_over, check))
}

fn assemble(ctx: &Context, plan: LawPlan, passed_over: Vec<(Scheme, String)>) -> Proposal {
    let predictions = predict(ctx, &plan);
    let protections = protect::protections(ctx, &predictions);
    let mut choices =
        vec![Choice::new("law", plan.scheme.name().to_string(), law_reason(&plan, &passed_over))];
    choices.extend(plan.choices.iter().cloned());
    choices.extend(protect::choices(ctx, &plan, &protections));
    Proposal {
        facts: *ctx.facts,
        stage: ctx.stage,
        output_divider: ctx.output_divider,
        input_divider: ctx.input_divider,
        hk: ctx.hk,
        window: ctx.window,
        plan,
        protections,
        predictions,
        choices,
        passed_over,
    }
}

fn law_reason(plan: &LawPlan, passed_over: &[(Scheme, String)]) -> String {
    let first = match plan.scheme {
        Scheme::HystereticEdge => {
            "the cheapest loop per cycle, and no ripple condition beyond ESR·C above twice its loop delay"
        }
        Scheme::OnTimeEdge => {
            "a pulse the timer ends in hardware, so the handler's time does not stretch it"
        }
        Scheme::OnTimeSampled => "the only loop here that takes emulated ripple",
    };
    let passed: Vec<String> =
        passed_over.iter().map(|(s, why)| format!("{} passed over: {why}", s.name())).collect();
    if passed.is_empty() {
        first.to_string()
    } else {
        format!("{first}; {}", passed.join("; "))
    }
}

/// No loop fits: each one's reason, and the clock from which one would.
fn nothing_fits(facts: &Facts, passed_over: &[(Scheme, String)], check: Check) -> DesignError {
    let mcu = &facts.mcu;
    let reasons: Vec<String> =
        passed_over.iter().map(|(s, why)| format!("{}: {why}", s.name())).collect();
    let mut message = format!(
        "{} at {}: no loop fits ({})",
        mcu.core.name(),
        eng(f64::from(mcu.clock_hz), "Hz"),
        reasons.join("; ")
    );
    if let Some((scheme, hz)) = slowest_clock_that_fits(facts, check) {
        message += &format!(
            "; the {} runs {} from {} (--clock)",
            mcu.core.name(),
            scheme.name(),
            eng(hz, "Hz")
        );
    }
    refuse("--core", message)
}

/// A clock (in 1 MHz steps, up to 1 GHz) at which some loop fits the same
/// core and passes `check`, found by bisection (the lowest when fitting
/// only gets easier with the clock), and that loop.
fn slowest_clock_that_fits(facts: &Facts, check: Check) -> Option<(Scheme, f64)> {
    let fits = |mhz: u32| {
        let mut f = *facts;
        f.mcu.clock_hz = mhz * 1_000_000;
        let ctx = context(&f).ok()?;
        candidates(f.law).iter().copied().find(|&s| {
            plan(s, &ctx).is_ok_and(|plan| check(&assemble(&ctx, plan, Vec::new())).is_ok())
        })
    };
    let top = 1_000;
    fits(top)?;
    let (mut lo, mut hi) = (facts.mcu.clock_hz / 1_000_000, top);
    while hi - lo > 1 {
        let mid = (lo + hi) / 2;
        if fits(mid).is_some() {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    fits(hi).map(|s| (s, f64::from(hi) * 1e6))
}
