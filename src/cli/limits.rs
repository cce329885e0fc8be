//! Arguments of `rhoscope limits`.

use clap::Args;

/// Arguments of `rhoscope limits`.
#[derive(Debug, Args)]
#[command(after_help = "\
Ω = ω·Δt. The stability limit is where the spectral radius of one step first exceeds 1.
HHT sign convention: α in [-1/3, 0]; codes that write α ≥ 0 mean -α.

Examples:
  rhoscope limits --scheme central-difference --omega 6283 --zeta 0.02 --dt 2e-4
  rhoscope limits --scheme newmark --beta 0.25 --gamma 0.5 --omega 800 --dt 0.01
  rhoscope limits --scheme hht --alpha -0.1 --json
  rhoscope limits --scheme rk4 --plot
  rhoscope limits --length 0.004 --youngs 2.05e11 --density 7850 --poisson 0.29 --kind shell")]
pub struct LimitsArgs {
    /// Scheme: forward-euler, backward-euler, trapezoidal, rk4, central-difference,
    /// newmark (--beta, --gamma), hht (--alpha), generalized-alpha (--rho-inf).
    #[arg(long, value_name = "NAME", default_value = "central-difference")]
    pub scheme: String,
    /// Newmark β.
    #[arg(long, value_name = "B")]
    pub beta: Option<f64>,
    /// Newmark γ.
    #[arg(long, value_name = "G")]
    pub gamma: Option<f64>,
    /// HHT α, in [-1/3, 0].
    #[arg(long, value_name = "A", allow_negative_numbers = true)]
    pub alpha: Option<f64>,
    /// Generalized-α spectral radius at infinite Ω, in [0, 1].
    #[arg(long = "rho-inf", value_name = "R")]
    pub rho_inf: Option<f64>,
    /// Angular frequency ω of the mode to check (rad/s).
    #[arg(long, value_name = "RAD_PER_S")]
    pub omega: Option<f64>,
    /// Damping ratio ζ of the mode (fraction of critical).
    #[arg(long, value_name = "RATIO", default_value_t = 0.0)]
    pub zeta: f64,
    /// Time step to check (s); needs --omega or an element (--length ...).
    #[arg(long, value_name = "S")]
    pub dt: Option<f64>,
    /// Element characteristic length (m): Courant mode, instead of --omega.
    #[arg(long, value_name = "M", conflicts_with = "omega", requires_all = ["youngs", "density", "kind"])]
    pub length: Option<f64>,
    /// Young's modulus E (Pa).
    #[arg(long, value_name = "PA", requires = "length")]
    pub youngs: Option<f64>,
    /// Mass density (kg/m³).
    #[arg(long, value_name = "KG_PER_M3", requires = "length")]
    pub density: Option<f64>,
    /// Poisson's ratio ν (needed for shell and solid).
    #[arg(
        long,
        value_name = "NU",
        requires = "length",
        allow_negative_numbers = true
    )]
    pub poisson: Option<f64>,
    /// Which wave speed governs: bar, shell or solid.
    #[arg(long, value_name = "KIND", requires = "length")]
    pub kind: Option<String>,
    /// Safety factor on the limit time step, in (0, 1].
    #[arg(long, value_name = "FACTOR", default_value_t = crate::schemes::courant::DEFAULT_SAFETY)]
    pub safety: f64,
    /// Draw the spectral radius against Ω as a terminal chart instead of a table.
    #[arg(long)]
    pub plot: bool,
    /// Print one JSON object instead of text.
    #[arg(long, conflicts_with = "plot")]
    pub json: bool,
}
