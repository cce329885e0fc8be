//! `rhoscope completions` and `rhoscope man`: wiring only — clap_complete and
//! clap_mangen write what clap knows of the command line to stdout.

use clap::CommandFactory;
use clap_complete::Shell as Target;

use crate::cli::Cli;
use crate::cli::shell::{CompletionsArgs, ManArgs, Shell};

/// Run `rhoscope completions`; returns the exit code.
pub fn completions(args: CompletionsArgs) -> anyhow::Result<i32> {
    let target = match args.shell {
        Shell::Bash => Target::Bash,
        Shell::Zsh => Target::Zsh,
        Shell::Fish => Target::Fish,
        Shell::Elvish => Target::Elvish,
        Shell::Powershell => Target::PowerShell,
    };
    let mut out = Vec::new();
    clap_complete::generate(target, &mut Cli::command(), "rhoscope", &mut out);
    super::out::write_stdout(&out)?;
    Ok(0)
}

/// Run `rhoscope man`; returns the exit code.
pub fn man(_args: ManArgs) -> anyhow::Result<i32> {
    super::out::print(&man_page()?)?;
    Ok(0)
}

/// The roff lines every rendered piece begins with (a string for the
/// apostrophe); kept once, after the title.
const PREAMBLE: [&str; 2] = [".ie \\n(.g .ds Aq \\(aq", ".el .ds Aq '"];

fn rendered(f: impl FnOnce(&mut Vec<u8>) -> std::io::Result<()>) -> anyhow::Result<String> {
    let mut out = Vec::new();
    f(&mut out)?;
    let text = String::from_utf8(out)?;
    Ok(text
        .lines()
        .filter(|l| !PREAMBLE.contains(l))
        .map(|l| format!("{l}\n"))
        .collect())
}

/// One manual page: the program's sections, then one section per command
/// with its synopsis, options and examples. It begins with `.TH`.
pub fn man_page() -> anyhow::Result<String> {
    let cli = Cli::command();
    let man = clap_mangen::Man::new(cli.clone());
    let mut page = rendered(|w| man.render_title(w))?;
    for l in PREAMBLE {
        page += l;
        page.push('\n');
    }
    page += &rendered(|w| man.render_name_section(w))?;
    page += &rendered(|w| man.render_synopsis_section(w))?;
    page += &rendered(|w| man.render_description_section(w))?;
    page += ".SH COMMANDS\n";
    for sub in cli.get_subcommands().filter(|s| s.get_name() != "help") {
        let about = sub.get_about().map(|a| a.to_string()).unwrap_or_default();
        page += &format!(
            ".TP\n\\fBrhoscope {}\\fR\n{}\n",
            sub.get_name(),
            about.replace('-', "\\-")
        );
    }
    for sub in cli.get_subcommands().filter(|s| s.get_name() != "help") {
        let name = format!("rhoscope {}", sub.get_name());
        let sub = sub.clone().bin_name(name.clone());
        let man = clap_mangen::Man::new(sub.clone());
        page += &format!(".SH \"{}\"\n", name.to_uppercase());
        for part in [
            rendered(|w| man.render_name_section(w))?,
            rendered(|w| man.render_synopsis_section(w))?,
            rendered(|w| man.render_options_section(w))?,
        ] {
            page += &demote(&part);
        }
        if sub.get_after_help().is_some() || sub.get_after_long_help().is_some() {
            page += ".SS Notes and examples\n";
            page += &demote(&rendered(|w| man.render_extra_section(w))?);
        }
    }
    page += &rendered(|w| man.render_version_section(w))?;
    Ok(page)
}

/// A command's sections as subsections of its own section: `.SH NAME` and
/// `.SH EXTRA` headings dropped (the command's section names it), others as `.SS`.
fn demote(part: &str) -> String {
    part.lines()
        .filter_map(|l| match l.strip_prefix(".SH ") {
            Some("NAME") | Some("EXTRA") => None,
            Some(h) => {
                let mut c = h.to_lowercase();
                if let Some(f) = c.get(..1) {
                    c = f.to_uppercase() + &c[1..];
                }
                Some(format!(".SS {c}\n"))
            }
            None => Some(format!("{l}\n")),
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_man_page_begins_with_its_title_and_covers_every_command() {
        let page = man_page().expect("clap renders the page");
        assert!(page.starts_with(".TH "), "{}", &page[..80.min(page.len())]);
        assert_eq!(page.matches(PREAMBLE[0]).count(), 1);
        for sub in Cli::command().get_subcommands() {
            if sub.get_name() != "help" {
                let heading = format!(".SH \"RHOSCOPE {}\"", sub.get_name().to_uppercase());
                assert!(page.contains(&heading), "no section {heading}");
            }
        }
    }
}
