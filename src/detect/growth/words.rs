//! The words of a critical growth alarm: what makes the mode numerical,
//! its growth per step (or per row when the stride is unknown), margin,
//! onset, forecast, and the remedy with where to resume.

use crate::detect::forecast;
use crate::finding::Evidence;

/// What made a growing mode numerical.
pub struct Signature {
    pub alternating: bool,
    pub created: bool,
    /// The mode's growth past the response the run had before it.
    pub outgrown: Option<f64>,
}

pub fn critical_message(
    ev: &Evidence,
    k: f64,
    stride_known: bool,
    sig: Signature,
    remedy: Option<(String, Option<f64>)>,
) -> String {
    let mut s = String::from("Numerical instability: ");
    s += if sig.alternating {
        "a sign-alternating mode"
    } else if sig.outgrown.is_some() {
        "a mode"
    } else {
        "an oscillating mode"
    };
    if stride_known {
        if let Some(r) = ev.growth_per_step {
            s += &format!(" grows ×{r:.4} per solver step");
        }
        if k > 1.5 {
            s += &format!(" (about {k:.0} steps per output)");
        }
    } else if let Some(r) = ev.growth_per_output {
        s += &format!(
            " grows ×{r:.4} per output row (the file does not say how many solver steps a row is)"
        );
    }
    if let Some(x) = sig.outgrown {
        s += &format!(", steadily, to {x:.1e} times the largest response the run wrote before it");
    }
    let created = sig.created;
    if created {
        s += " while the energy balance shows energy created";
    }
    if let Some(m) = ev.stability_margin {
        s += &format!(
            " (stability margin {:+.1} %: the step is past the scheme's limit for this mode)",
            m * 100.0
        );
    }
    if let Some(l) = ev.onset_line {
        s += &format!("; it started near line {l}");
    }
    if let Some(f) = forecast::describe(ev) {
        s += &format!("; {f}");
    }
    s += ".";
    if let Some(t) = ev.onset_time {
        s += &format!(" Restart files written after t = {t:.6e} carry the growing mode.");
    }
    // The remedy, and where to resume: before the onset, or from the start
    // of the segment when the mode grew from there.
    if let Some((r, segment_start)) = remedy {
        s += &format!(" {r}");
        match ev.onset_time {
            Some(t) if segment_start.is_none_or(|t0| t > t0) => {
                s += &format!("; resume from a restart written before t = {t:.6e}");
            }
            Some(_) => s += "; the mode grows from the start of this run: rerun it from there",
            None => {}
        }
        s += ".";
    }
    s
}
