//! A [`ReadSpec`] (what the user asked, from the command line) + `rhoscope.toml`
//! → one validated [`Settings`], the only configuration that domain code sees.
//! The spec wins over the configuration file; unknown keys in the file are an
//! error naming the key. Guard actions (commands, signals) are taken only from
//! a file the user names with `--config`, never from a `rhoscope.toml` that
//! happens to lie beside someone's history; they are read into typed
//! [`ActionSettings`] (`actions.rs`).

pub mod actions;
mod spec;

pub use actions::ActionSettings;
pub use spec::ReadSpec;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use anyhow::{Context, bail};
use serde::Deserialize;

use crate::detect::DetectSettings;
use crate::parse::roles::{EnergyTerm, Role, RoleRules};
use crate::parse::{Delimiter, Format, ParseOptions};

/// Name of the configuration file looked for beside the history.
pub const CONFIG_BESIDE: &str = "rhoscope.toml";

/// Everything the pipeline and the commands need, validated.
#[derive(Debug, Clone, Default)]
pub struct Settings {
    /// How to read the file.
    pub parse: ParseOptions,
    /// Role overrides and energy sign conventions.
    pub roles: RoleRules,
    /// Detector thresholds.
    pub detect: DetectSettings,
    /// The `[actions]` of a configuration named with `--config`. Always `None`
    /// for a file found beside the history.
    pub actions: Option<ActionSettings>,
    /// The configuration file that was read, if any.
    pub config_file: Option<PathBuf>,
    /// Things the user should know (e.g. ignored actions); printed on stderr by commands.
    pub notes: Vec<String>,
}

/// The configuration file, as written.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct ConfigFile {
    input: Option<InputSection>,
    /// Column name → role key.
    roles: Option<BTreeMap<String, String>>,
    /// Energy term key → sign (+1 or −1).
    signs: Option<BTreeMap<String, f64>>,
    thresholds: Option<ThresholdSection>,
    /// Read into [`ActionSettings`] only from a named file: one found beside
    /// the history is not checked further.
    actions: Option<toml::Table>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct InputSection {
    /// `auto`, `delimited`, `jsonl` or `pattern`.
    format: Option<String>,
    /// `comma`, `semicolon`, `tab` or `whitespace`.
    delimiter: Option<String>,
    pattern: Option<String>,
    max_line_bytes: Option<usize>,
    /// The solver's step size, in the time column's units.
    step_size: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct ThresholdSection {
    balance_warning: Option<f64>,
    overflow_bound: Option<f64>,
    scheme: Option<String>,
}

/// The note that says a configuration beside the history is in use: it can
/// change how the file is read and what alarms, so it is never silent.
pub fn beside_note(path: &Path) -> String {
    format!(
        "using the configuration '{}' found beside the history (roles, thresholds, format); \
         --no-config ignores it",
        path.display()
    )
}

impl Settings {
    /// Settings for reading `history` as `input` asks: the named `--config`, else
    /// `rhoscope.toml` beside the history (unless `--no-config`), then the spec.
    pub fn load(input: &ReadSpec, history: &Path) -> anyhow::Result<Settings> {
        let mut s = Settings::default();
        let (path, named) = match &input.config {
            Some(p) => (Some(p.clone()), true),
            None if input.no_config => (None, false),
            None => {
                let beside = history
                    .parent()
                    .map(|d| d.join(CONFIG_BESIDE))
                    .filter(|p| p.is_file());
                (beside, false)
            }
        };
        if let Some(path) = path {
            let text = std::fs::read_to_string(&path)
                .with_context(|| format!("cannot read configuration {}", path.display()))?;
            s.apply_toml(&text, named)
                .with_context(|| format!("configuration {}", path.display()))?;
            if !named {
                s.notes.insert(0, beside_note(&path));
            }
            s.config_file = Some(path);
        }
        s.apply_spec(input)?;
        Ok(s)
    }

    /// Apply a configuration file's text. `named` is true only for a file given
    /// with `--config`: only then are its actions taken.
    pub fn apply_toml(&mut self, text: &str, named: bool) -> anyhow::Result<()> {
        let cfg: ConfigFile = toml::from_str(text).map_err(|e| anyhow::anyhow!("{e}"))?;
        if let Some(input) = cfg.input {
            if let Some(n) = input.max_line_bytes {
                if n == 0 {
                    bail!("input.max_line_bytes must be positive");
                }
                self.parse.max_line_bytes = n;
            }
            if let Some(h) = input.step_size {
                self.parse.step_size = Some(step_size_value(h).context("input.step_size")?);
            }
            let delimiter = input.delimiter.as_deref().map(delimiter_key).transpose()?;
            self.parse.format = match (input.format.as_deref(), delimiter, input.pattern) {
                (Some("jsonl"), _, _) => Format::JsonLines,
                (Some("pattern") | None, _, Some(p)) => Format::Pattern(compile(&p)?),
                (Some("pattern"), _, None) => {
                    bail!("input.format = \"pattern\" needs input.pattern")
                }
                (Some("delimited") | None, Some(d), _) => Format::Delimited(d),
                (Some("delimited" | "auto") | None, None, _) => Format::Auto,
                (Some("auto"), Some(d), _) => Format::Delimited(d),
                (Some(other), _, _) => {
                    bail!("input.format \"{other}\" is not one of auto, delimited, jsonl, pattern")
                }
            };
        }
        for (column, key) in cfg.roles.unwrap_or_default() {
            let role = role_key(&key).with_context(|| format!("roles.\"{column}\""))?;
            self.roles.overrides.push((column, role));
        }
        for (key, sign) in cfg.signs.unwrap_or_default() {
            let term = term_key(&key).context("signs")?;
            self.roles.signs.push((
                term,
                sign_value(sign).with_context(|| format!("signs.{key}"))?,
            ));
        }
        if let Some(t) = cfg.thresholds {
            if let Some(v) = t.balance_warning {
                if !(v.is_finite() && v > 0.0) {
                    bail!("thresholds.balance_warning must be a positive fraction, not {v}");
                }
                self.detect.balance_warning = v;
            }
            if let Some(v) = t.overflow_bound {
                if v.is_nan() || v <= 0.0 {
                    bail!("thresholds.overflow_bound must be positive, not {v}");
                }
                self.detect.overflow_bound = v;
            }
            if let Some(text) = t.scheme {
                self.detect.scheme = Some(scheme_key(&text).context("thresholds.scheme")?);
            }
        }
        match (cfg.actions, named) {
            (Some(_), true) => self.actions = ActionSettings::from_config_text(text)?,
            (Some(_), false) => self.notes.push(format!(
                "[actions] in a {CONFIG_BESIDE} found beside the history are ignored; \
                 name the file with --config to use them"
            )),
            (None, _) => {}
        }
        Ok(())
    }

    /// Apply what the spec asks (it wins over the file).
    pub fn apply_spec(&mut self, input: &ReadSpec) -> anyhow::Result<()> {
        if input.jsonl {
            self.parse.format = Format::JsonLines;
        } else if let Some(p) = &input.pattern {
            self.parse.format = Format::Pattern(compile(p).context("--pattern")?);
        } else if let Some(d) = input.delimiter {
            self.parse.format = Format::Delimited(d);
        }
        if let Some(text) = &input.scheme {
            self.detect.scheme = Some(scheme_key(text).context("--scheme")?);
        }
        if let Some(h) = input.step_size {
            self.parse.step_size = Some(step_size_value(h).context("--step-size")?);
        }
        for spec in &input.roles {
            let (column, key) = spec
                .rsplit_once('=')
                .with_context(|| format!("--role \"{spec}\": expected COLUMN=ROLE"))?;
            let role = role_key(key).with_context(|| format!("--role \"{spec}\""))?;
            self.roles.overrides.push((column.trim().to_owned(), role));
        }
        for spec in &input.signs {
            let (key, value) = spec
                .split_once('=')
                .with_context(|| format!("--sign \"{spec}\": expected TERM=SIGN"))?;
            let term = term_key(key).with_context(|| format!("--sign \"{spec}\""))?;
            let sign: f64 = value
                .trim()
                .parse()
                .ok()
                .with_context(|| format!("--sign \"{spec}\": \"{value}\" is not +1 or -1"))?;
            self.roles.signs.push((
                term,
                sign_value(sign).with_context(|| format!("--sign \"{spec}\""))?,
            ));
        }
        Ok(())
    }
}

/// A step size: positive and finite.
fn step_size_value(h: f64) -> anyhow::Result<f64> {
    if !(h.is_finite() && h > 0.0) {
        bail!("the step size must be a positive number, not {h}");
    }
    Ok(h)
}

/// A scheme as `rhoscope limits` names it: NAME or NAME:key=value,...
fn scheme_key(text: &str) -> anyhow::Result<crate::schemes::Scheme> {
    text.parse()
        .map_err(|e: crate::schemes::SchemeError| anyhow::anyhow!("\"{text}\": {e}"))
}

fn compile(pattern: &str) -> anyhow::Result<regex::bytes::Regex> {
    let re = regex::bytes::Regex::new(pattern)
        .map_err(|e| anyhow::anyhow!("pattern \"{pattern}\" is not a valid regex: {e}"))?;
    if re.capture_names().flatten().next().is_none() {
        bail!("pattern \"{pattern}\" has no named group such as (?P<time>\\S+)");
    }
    Ok(re)
}

fn delimiter_key(key: &str) -> anyhow::Result<Delimiter> {
    Ok(match key {
        "comma" | "," => Delimiter::Byte(b','),
        "semicolon" | ";" => Delimiter::Byte(b';'),
        "tab" | "\t" => Delimiter::Byte(b'\t'),
        "whitespace" | "space" | " " => Delimiter::Whitespace,
        other => {
            bail!("input.delimiter \"{other}\" is not one of comma, semicolon, tab, whitespace")
        }
    })
}

fn role_key(key: &str) -> anyhow::Result<Role> {
    Role::from_key(key).with_context(|| {
        let keys: Vec<&str> = crate::parse::roles::ROLE_KEYS
            .iter()
            .map(|(_, k)| *k)
            .collect();
        format!("unknown role \"{key}\"; roles are {}", keys.join(", "))
    })
}

fn term_key(key: &str) -> anyhow::Result<EnergyTerm> {
    EnergyTerm::from_key(key).with_context(|| {
        format!(
            "unknown energy term \"{key}\"; terms are kinetic, internal, external_work, \
             dissipated, artificial, total"
        )
    })
}

fn sign_value(v: f64) -> anyhow::Result<f64> {
    if (v - 1.0).abs() < f64::EPSILON || (v + 1.0).abs() < f64::EPSILON {
        Ok(v.signum())
    } else {
        bail!("sign must be +1 or -1, not {v}")
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn unknown_key_is_named() {
        let mut s = Settings::default();
        let e = s
            .apply_toml("[thresholds]\nbalance_warnign = 0.1\n", true)
            .unwrap_err();
        assert!(format!("{e:#}").contains("balance_warnign"), "{e:#}");
        let e = s.apply_toml("colour = 1\n", true).unwrap_err();
        assert!(format!("{e:#}").contains("colour"), "{e:#}");
    }

    #[test]
    fn roles_signs_thresholds() {
        let mut s = Settings::default();
        s.apply_toml(
            "[roles]\n\"E hg\" = \"artificial\"\n[signs]\nexternal_work = -1\n\
             [thresholds]\nbalance_warning = 0.02\n[input]\ndelimiter = \"semicolon\"\n",
            true,
        )
        .unwrap();
        assert_eq!(s.roles.overrides[0].1, Role::Energy(EnergyTerm::Artificial));
        assert_eq!(s.roles.sign(EnergyTerm::ExternalWork), -1.0);
        assert!((s.detect.balance_warning - 0.02).abs() < 1e-15);
        assert!(matches!(
            s.parse.format,
            Format::Delimited(Delimiter::Byte(b';'))
        ));
    }

    #[test]
    fn actions_only_from_named_file() {
        let text = "[actions]\ntouch = \"STOP\"\n";
        let mut beside = Settings::default();
        beside.apply_toml(text, false).unwrap();
        assert!(beside.actions.is_none());
        assert_eq!(beside.notes.len(), 1);
        let mut named = Settings::default();
        named.apply_toml(text, true).unwrap();
        assert_eq!(
            named.actions.unwrap().touch,
            Some(std::path::PathBuf::from("STOP"))
        );
        // A named file's [actions] are checked; a file beside the history's
        // are not read at all, so a mistake there stops nothing.
        let wrong = "[actions]\nstop_file = \"STOP\"\n";
        let e = Settings::default().apply_toml(wrong, true).unwrap_err();
        assert!(format!("{e:#}").contains("stop_file"), "{e:#}");
        Settings::default().apply_toml(wrong, false).unwrap();
    }

    #[test]
    fn bad_values_are_rejected() {
        let mut s = Settings::default();
        assert!(s.apply_toml("[signs]\nkinetic = 2\n", true).is_err());
        assert!(s.apply_toml("[roles]\nx = \"speed\"\n", true).is_err());
        assert!(
            s.apply_toml("[input]\npattern = \"no groups\"\n", true)
                .is_err()
        );
    }
}
