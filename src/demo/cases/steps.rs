//! Step-size cases: an adaptive controller that cuts its step by three orders
//! of magnitude at each impact on a very stiff contact and lets it grow back
//! over a few hundred rows (healthy), set against the crushing member whose
//! step keeps falling until the solver gives up (in [`super::blowups`]).

use super::families::adaptive_dip_with;
use super::{Spec, spec};
use crate::demo::run::{Setup, StepRule};
use crate::finding::Level;

/// The cases of this group, in order.
pub fn specs() -> Vec<Spec> {
    vec![spec(
        "adaptive-deep-cut",
        Level::Ok,
        "chain thrown against a very stiff one-sided contact; adaptive central difference whose controller cuts the step by about 10^3 at each impact and lets it grow back by 3 % per step, so each cut lasts a few hundred rows",
        deep_cut,
    )]
}

fn deep_cut() -> Setup {
    // Contact 10^7 times the chain's springs: ω at contact about 1,600 times
    // the free chain's highest.
    let mut s = adaptive_dip_with(0.2, 1.0e11, 0.04, 2.0);
    s.step = StepRule::Adaptive {
        safety: 0.2,
        dt_max_s: 1.0,
        max_growth: 1.03,
    };
    s.title =
        "invented case: chain striking a very stiff contact, step controller with limited growth"
            .into();
    s
}
