//! `rhoscope limits`: wiring only. Turns the arguments into a
//! [`crate::limits::Query`], asks for the answer and prints text, a table, a
//! terminal chart, or one JSON object.

use crate::cli::limits::LimitsArgs;
use crate::limits::{Query, answer, render_chart, render_table, render_text};
use crate::schemes::{Scheme, SchemeParams};

/// Run `rhoscope limits`; returns the exit code.
pub fn run(args: LimitsArgs) -> anyhow::Result<i32> {
    let (out, element) = answer(&query(&args))?;
    let text = if args.json {
        serde_json::to_string_pretty(&out)? + "\n"
    } else {
        let scheme: Scheme = out.scheme.parse()?;
        let body = if args.plot {
            render_chart(&scheme, &out, 64, 16)?
        } else {
            render_table(&scheme, &out)?
        };
        format!("{}\n{body}", render_text(&out, element.as_ref()))
    };
    super::out::write_stdout(text.as_bytes())?;
    Ok(0)
}

/// The question the arguments ask.
fn query(args: &LimitsArgs) -> Query {
    Query {
        scheme: args.scheme.clone(),
        params: SchemeParams {
            beta: args.beta,
            gamma: args.gamma,
            alpha: args.alpha,
            rho_inf: args.rho_inf,
        },
        omega: args.omega,
        zeta: args.zeta,
        dt: args.dt,
        length: args.length,
        youngs: args.youngs,
        density: args.density,
        poisson: args.poisson,
        kind: args.kind.clone(),
        safety: args.safety,
    }
}
