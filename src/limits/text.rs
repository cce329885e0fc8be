//! `rhoscope limits` in words: the answer as aligned lines, a table of the
//! spectral radius around the limit, and a character chart of ρ(Ω).

use crate::schemes::{self, Scheme};

use super::{Element, LimitsOutput};

/// Number with 7 significant digits, plain or scientific as fits, without
/// trailing zeros.
pub fn num(x: f64) -> String {
    let a = x.abs();
    let text = if x == 0.0 || (1e-3..1e6).contains(&a) {
        let digits = if x == 0.0 {
            1
        } else {
            (6 - a.log10().floor() as i32).max(0)
        };
        format!("{x:.prec$}", prec = digits as usize)
    } else {
        format!("{x:.6e}")
    };
    let (mantissa, exponent) = match text.split_once('e') {
        Some((m, e)) => (m.to_string(), format!("e{e}")),
        None => (text, String::new()),
    };
    let mantissa = if mantissa.contains('.') {
        mantissa
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_string()
    } else {
        mantissa
    };
    format!("{mantissa}{exponent}")
}

pub fn render_text(out: &LimitsOutput, element: Option<&Element>) -> String {
    let mut s = String::new();
    let line =
        |s: &mut String, label: &str, value: String| s.push_str(&format!("  {label:<25}{value}\n"));
    line(&mut s, "scheme", out.scheme.clone());
    line(&mut s, "damping ratio ζ", num(out.zeta));
    if let (Some(el), Some(c)) = (element, out.wave_speed) {
        line(
            &mut s,
            "wave speed",
            format!("{} m/s  ({}, {})", num(c), el.kind, el.kind.formula()),
        );
        line(
            &mut s,
            "Courant step L/c",
            format!("{} s", num(el.length_m / c)),
        );
        s.push_str(
            "  (element estimate: a lumped mesh's highest frequency does not exceed its\n   \
             stiffest element's 2c/L, so this step is on the safe side of the mesh's)\n",
        );
    }
    if let Some(w) = out.omega {
        let note = if element.is_some() { "  (2c/L)" } else { "" };
        line(&mut s, "ω", format!("{} rad/s{note}", num(w)));
    }
    match out.omega_crit {
        None => line(
            &mut s,
            "stability limit Ω",
            "none: unconditionally stable".into(),
        ),
        Some(0.0) => line(
            &mut s,
            "stability limit Ω",
            format!(
                "0: grows at every step down to Ω = {}",
                schemes::limit::OMEGA_MIN
            ),
        ),
        Some(w) => line(&mut s, "stability limit Ω", num(w)),
    }
    if let Some(d) = out.dt_crit {
        line(&mut s, "limit time step", format!("{} s", num(d)));
    }
    if let Some(d) = out.dt_safe {
        line(
            &mut s,
            &format!("× safety {}", num(out.safety)),
            format!("{} s", num(d)),
        );
    }
    if let Some(r) = out.rho_inf {
        line(&mut s, "spectral radius at Ω→∞", num(r));
    }
    if let (Some(big), Some(rho)) = (out.omega_at_dt, out.rho_at_dt) {
        let dt = big / out.omega.unwrap_or(f64::NAN);
        let share = match out.omega_crit {
            Some(wc) if wc > 0.0 => format!(", {:.0} % of the limit", 100.0 * big / wc),
            _ => String::new(),
        };
        s.push_str(&format!(
            "\n  at Δt = {} s (Ω = {}{share})\n",
            num(dt),
            num(big)
        ));
        let verdict = if rho > 1.0 + schemes::limit::EDGE_TOL {
            let steps = (10f64).ln() / rho.ln();
            format!("grows: ×10 every {} steps", num(steps.ceil()))
        } else {
            "does not grow".to_string()
        };
        line(
            &mut s,
            "spectral radius",
            format!("{}  {verdict}", num(rho)),
        );
        line(
            &mut s,
            "algorithmic damping",
            opt_pct(out.damping_ratio_at_dt, "of critical"),
        );
        line(
            &mut s,
            "period elongation",
            opt_pct(out.period_error_at_dt, ""),
        );
    }
    s
}

fn opt_pct(v: Option<f64>, unit: &str) -> String {
    match v {
        // Below round-off of the eigenvalue angle: show a clean zero.
        Some(x) if x.abs() < 1e-10 => format!("0 %  {unit}").trim_end().to_string(),
        Some(x) => format!("{} %  {unit}", num(100.0 * x))
            .trim_end()
            .to_string(),
        None => "— (no oscillating root at this step)".to_string(),
    }
}

/// Ω values for the table or chart: around the limit when there is one.
fn omega_span(out: &LimitsOutput) -> (f64, f64) {
    match out.omega_crit {
        Some(wc) if wc > 0.0 => (wc / 100.0, wc * 3.0),
        _ => (1e-2, 1e3),
    }
}

pub fn render_table(scheme: &Scheme, out: &LimitsOutput) -> anyhow::Result<String> {
    let mut omegas: Vec<f64> = match out.omega_crit {
        Some(wc) if wc > 0.0 => [0.1, 0.25, 0.5, 0.75, 0.9, 1.0, 1.05, 1.2, 1.5, 2.0]
            .iter()
            .map(|f| f * wc)
            .collect(),
        _ => (-2..=3).map(|e| 10f64.powi(e)).collect(),
    };
    omegas.retain(|w| out.omega_at_dt.is_none_or(|at| (w - at).abs() > 1e-9 * at));
    omegas.extend(out.omega_at_dt);
    omegas.sort_by(f64::total_cmp);
    let mut s = format!("  {:>14}  {:>16}\n", "Ω", "spectral radius");
    for w in omegas {
        let rho = schemes::scheme_radius(scheme, w, out.zeta)?;
        let mark = if Some(w) == out.omega_at_dt {
            "  ← Δt"
        } else {
            ""
        };
        s.push_str(&format!("  {:>14}  {:>16}{mark}\n", num(w), num(rho)));
    }
    Ok(s)
}

/// Spectral radius against Ω (log axis) as a character chart; ρ = 1 drawn as
/// a dashed row, the limit as `|`, the given step as `:`.
pub fn render_chart(
    scheme: &Scheme,
    out: &LimitsOutput,
    width: usize,
    height: usize,
) -> anyhow::Result<String> {
    let (lo, hi) = omega_span(out);
    let points = schemes::rho_curve(scheme, out.zeta, lo, hi, width)?;
    let rho_max = points.iter().map(|p| p.1).fold(1.25, f64::max).min(2.0);
    let row_of = |rho: f64| {
        let r = ((1.0 - rho / rho_max) * (height - 1) as f64).round();
        r.clamp(0.0, (height - 1) as f64) as usize
    };
    let col_of = |w: f64| {
        let c = ((w / lo).ln() / (hi / lo).ln() * (width - 1) as f64).round();
        (c >= 0.0 && c <= (width - 1) as f64).then_some(c as usize)
    };
    let mut grid = vec![vec![' '; width]; height];
    let one = row_of(1.0);
    for cell in grid[one].iter_mut() {
        *cell = '-';
    }
    for (w, mark) in [(out.omega_crit, '|'), (out.omega_at_dt, ':')] {
        if let Some(c) = w.and_then(col_of) {
            for row in grid.iter_mut() {
                row[c] = mark;
            }
        }
    }
    for (c, &(_, rho)) in points.iter().enumerate() {
        grid[row_of(rho)][c] = if rho > rho_max { '^' } else { '*' };
    }
    let mut s = format!(
        "  spectral radius against Ω = ω·Δt ({scheme}, ζ = {})\n",
        num(out.zeta)
    );
    for (r, row) in grid.iter().enumerate() {
        let label = if r == 0 {
            format!("{rho_max:>6.2}")
        } else if r == one {
            "  1.00".to_string()
        } else if r == height - 1 {
            format!("{:>6.2}", rho_max * 0.0)
        } else {
            " ".repeat(6)
        };
        s.push_str(&format!("  {label} ┤{}\n", row.iter().collect::<String>()));
    }
    s.push_str(&format!("         └{}\n", "─".repeat(width)));
    let left = format!("Ω = {}", num(lo));
    let right = format!("{} (log)", num(hi));
    let gap = width.saturating_sub(left.chars().count() + right.chars().count());
    s.push_str(&format!("          {left}{}{right}\n", " ".repeat(gap)));
    s.push_str(
        "          * spectral radius   - ρ = 1   | stability limit   : given Δt   ^ above chart\n",
    );
    Ok(s)
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn numbers_keep_seven_digits() {
        assert_eq!(num(1.2213009), "1.221301");
        assert_eq!(num(3.4641016), "3.464102");
        assert_eq!(num(2.0e-4), "2e-4");
        assert_eq!(num(0.0), "0");
        assert_eq!(num(6283.0), "6283");
    }
}
