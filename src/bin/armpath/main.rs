//! The `armpath` command: parses flags, builds the job, runs the library, writes the outputs
//! and picks the exit code (0 pass or warnings, 1 error findings, 2 bad input or usage).
//!
//! The command line lives here alone: the library takes plain values.

mod commands;
mod fix;
mod flags;
mod place;
mod progress;

use clap::error::{ContextKind, ContextValue, ErrorKind};
use clap::{Parser, Subcommand};
use commands::{CheckArgs, FkArgs, IkArgs, RobotArgs};
use flags::FlagError;
use std::io::Write;
use std::process::ExitCode;

/// Checks offline-programmed tool paths for industrial robot arms: reach, joint limits,
/// configuration jumps, singularities, tool angular speed and joint speeds.
#[derive(Parser, Debug)]
#[command(name = "armpath", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Check a tool path (YAML path file, or CSV waypoints with --robot and --speed).
    Check(Box<CheckArgs>),
    /// Show a robot: joints, ranges, speeds, reach and wrist type.
    Robot(RobotArgs),
    /// Forward kinematics: the TCP pose for given joints.
    Fk(FkArgs),
    /// Inverse kinematics: joints for a TCP pose.
    Ik(IkArgs),
    /// Search speeds, corner blends, arm configuration and tool spin that make a path pass;
    /// write the amended path file and compare the check before and after.
    Fix(fix::FixArgs),
    /// Check the path with the work frame moved over a grid of placements.
    Place(place::PlaceArgs),
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            return match e.kind() {
                ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
                    let _ = e.print();
                    ExitCode::SUCCESS
                }
                ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand => {
                    let _ = e.print();
                    ExitCode::from(2)
                }
                _ => {
                    let _ = writeln!(
                        std::io::stderr(),
                        "armpath: error: {}",
                        one_line_usage_error(&e)
                    );
                    ExitCode::from(2)
                }
            };
        }
    };
    if let Err(e) = armpath::output::remove_temp_files_on_signal() {
        let _ = writeln!(
            std::io::stderr(),
            "armpath: error: {}",
            armpath::report::visible(&e.to_string())
        );
        return ExitCode::from(2);
    }
    let result = match cli.command {
        Command::Check(a) => commands::run_check(*a),
        Command::Robot(a) => commands::run_robot(a),
        Command::Fk(a) => commands::run_fk(a),
        Command::Ik(a) => commands::run_ik(a),
        Command::Fix(a) => fix::run_fix(a),
        Command::Place(a) => place::run_place(a),
    };
    match result {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            let _ = writeln!(
                std::io::stderr(),
                "armpath: error: {}",
                armpath::report::visible(&e.to_string())
            );
            ExitCode::from(2)
        }
    }
}

/// A command-line parse error as one line, like every other error: what is wrong (naming the
/// option), the parser's suggestion if any, and where to find the options. Built from the
/// error's kind and context, not from its rendered text.
fn one_line_usage_error(e: &clap::Error) -> String {
    let command = match std::env::args().nth(1).as_deref() {
        Some(c @ ("check" | "robot" | "fk" | "ik" | "fix" | "place")) => format!("armpath {c}"),
        _ => "armpath".to_string(),
    };
    let see = format!("see `{command} --help` for the options");
    let string = |kind| match e.get(kind) {
        Some(ContextValue::String(s)) => Some(s.as_str()),
        _ => None,
    };
    // A value refused by one of armpath's own value parsers: `--option: why`.
    let own = std::error::Error::source(e).and_then(|s| s.downcast_ref::<FlagError>());
    if let (Some(why), Some(option)) = (own, string(ContextKind::InvalidArg)) {
        let option = option.split(' ').next().unwrap_or(option);
        return format!("{option}: {why}: {see}");
    }
    let what = usage_what(e).unwrap_or_else(|| {
        e.kind()
            .as_str()
            .unwrap_or("the command line could not be read")
            .to_string()
    });
    let tip = usage_tip(e).map(|t| format!("{t}; ")).unwrap_or_default();
    format!("{what}: {tip}{see}")
}

/// What is wrong, from the error's context; `None` when the context says too little.
fn usage_what(e: &clap::Error) -> Option<String> {
    let string = |kind| match e.get(kind) {
        Some(ContextValue::String(s)) => Some(s.as_str()),
        _ => None,
    };
    let strings = |kind| match e.get(kind) {
        Some(ContextValue::Strings(v)) => Some(v.as_slice()),
        _ => None,
    };
    let number = |kind| match e.get(kind) {
        Some(ContextValue::Number(n)) => Some(*n),
        _ => None,
    };
    // A list "[NAME: a, b]" appended to the message when the context has one.
    let listed = |name: &str, kind| match strings(kind) {
        Some(v) if !v.is_empty() => format!(" [{name}: {}]", v.join(", ")),
        _ => String::new(),
    };
    let were = |n: isize| {
        if n > 1 {
            "were provided"
        } else {
            "was provided"
        }
    };
    let arg = string(ContextKind::InvalidArg);
    let value = string(ContextKind::InvalidValue);
    Some(match e.kind() {
        ErrorKind::UnknownArgument => format!("unexpected argument '{}' found", arg?),
        ErrorKind::InvalidSubcommand => format!(
            "unrecognized subcommand '{}'",
            string(ContextKind::InvalidSubcommand)?
        ),
        ErrorKind::MissingRequiredArgument => format!(
            "the following required arguments were not provided: {}",
            strings(ContextKind::InvalidArg)?.join(" ")
        ),
        ErrorKind::MissingSubcommand => format!(
            "'{}' requires a subcommand but one was not provided{}",
            string(ContextKind::InvalidSubcommand)?,
            listed("subcommands", ContextKind::ValidSubcommand)
        ),
        ErrorKind::InvalidValue => {
            let (arg, value) = (arg?, value?);
            let head = if value.is_empty() {
                format!("a value is required for '{arg}' but none was supplied")
            } else {
                format!("invalid value '{value}' for '{arg}'")
            };
            format!(
                "{head}{}",
                listed("possible values", ContextKind::ValidValue)
            )
        }
        ErrorKind::ValueValidation => {
            let why = std::error::Error::source(e)
                .map(|s| format!(": {s}"))
                .unwrap_or_default();
            format!("invalid value '{}' for '{}'{why}", value?, arg?)
        }
        ErrorKind::TooManyValues => format!(
            "unexpected value '{}' for '{}' found; no more were expected",
            value?, arg?
        ),
        ErrorKind::TooFewValues => {
            let actual = number(ContextKind::ActualNumValues)?;
            format!(
                "{} values required by '{}'; only {actual} {}",
                number(ContextKind::MinValues)?,
                arg?,
                were(actual)
            )
        }
        ErrorKind::WrongNumberOfValues => {
            let actual = number(ContextKind::ActualNumValues)?;
            format!(
                "{} values required for '{}' but {actual} {}",
                number(ContextKind::ExpectedNumValues)?,
                arg?,
                were(actual)
            )
        }
        ErrorKind::NoEquals => {
            format!("equal sign is needed when assigning values to '{}'", arg?)
        }
        ErrorKind::ArgumentConflict => {
            let subject = match (arg, string(ContextKind::InvalidSubcommand)) {
                (Some(a), _) => format!("the argument '{a}'"),
                (None, Some(s)) => format!("the subcommand '{s}'"),
                (None, None) => return None,
            };
            match e.get(ContextKind::PriorArg) {
                Some(ContextValue::String(p)) if Some(p.as_str()) == arg => {
                    format!("{subject} cannot be used multiple times")
                }
                Some(ContextValue::String(p)) => format!("{subject} cannot be used with '{p}'"),
                Some(ContextValue::Strings(v)) => {
                    format!("{subject} cannot be used with: {}", v.join(" "))
                }
                _ => format!(
                    "{subject} cannot be used with one or more of the other specified arguments"
                ),
            }
        }
        _ => return None,
    })
}

/// The parser's first suggestion (a similar name, or how to pass a value that looks like a
/// flag), if it has one.
fn usage_tip(e: &clap::Error) -> Option<String> {
    for (kind, what) in [
        (ContextKind::SuggestedSubcommand, "subcommand"),
        (ContextKind::SuggestedArg, "argument"),
        (ContextKind::SuggestedValue, "value"),
    ] {
        match e.get(kind) {
            Some(ContextValue::String(s)) => {
                return Some(format!("a similar {what} exists: '{s}'"))
            }
            Some(ContextValue::Strings(v)) if !v.is_empty() => {
                let names: Vec<String> = v.iter().map(|s| format!("'{s}'")).collect();
                return Some(if v.len() == 1 {
                    format!("a similar {what} exists: {}", names[0])
                } else {
                    format!("some similar {what}s exist: {}", names.join(", "))
                });
            }
            _ => {}
        }
    }
    match e.get(ContextKind::Suggested) {
        Some(ContextValue::StyledStrs(v)) => v.first().map(|s| s.to_string()),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse_error(args: &[&str]) -> clap::Error {
        match Cli::try_parse_from(args) {
            Ok(_) => panic!("{args:?} parsed"),
            Err(e) => e,
        }
    }

    #[test]
    fn usage_errors_are_assembled_from_kind_and_context() {
        // source: clap 4.6 error kinds and context (the parser's own wording of each kind)
        let e = parse_error(&["armpath", "check", "p.yaml", "--jsn", "r.json"]);
        assert_eq!(e.kind(), ErrorKind::UnknownArgument);
        assert_eq!(
            usage_what(&e).as_deref(),
            Some("unexpected argument '--jsn' found")
        );
        assert_eq!(
            usage_tip(&e).as_deref(),
            Some("a similar argument exists: '--json'")
        );

        let e = parse_error(&["armpath", "ik", "r.urdf", "--pose", "1", "--pose", "2"]);
        assert_eq!(
            usage_what(&e).as_deref(),
            Some("the argument '--pose <LIST>' cannot be used multiple times")
        );

        let e = parse_error(&["armpath", "check", "p.yaml", "--ik", "closed"]);
        assert_eq!(
            usage_what(&e).as_deref(),
            Some("invalid value 'closed' for '--ik <MODE>' [possible values: auto, numeric]")
        );

        let e = parse_error(&["armpath", "check", "p.yaml", "--quiet=3"]);
        assert_eq!(
            usage_what(&e).as_deref(),
            Some("unexpected value '3' for '--quiet' found; no more were expected")
        );

        let e = parse_error(&["armpath", "place", "p.yaml", "--x", "0:1:1"]);
        assert_eq!(
            usage_what(&e).as_deref(),
            Some("the following required arguments were not provided: --y <FROM:TO:STEP>")
        );
        assert_eq!(usage_tip(&e), None);

        let e = parse_error(&["armpath", "check", "-x"]);
        assert_eq!(
            usage_tip(&e).as_deref(),
            Some("to pass '-x' as a value, use '-- -x'")
        );
    }
}
