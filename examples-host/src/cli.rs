//! A small command-line parser: subcommands declare their options in a
//! table; `--name value` and `--name=value` are accepted; unknown,
//! repeated or missing-value options are errors, never panics.

use polytrope::ConfigError;

/// One option of a subcommand.
#[derive(Clone, Copy, Debug)]
pub struct Opt {
    /// Name without the leading `--`.
    pub name: &'static str,
    /// Placeholder of the value, or `None` for a flag.
    pub value: Option<&'static str>,
    /// One-line help.
    pub help: &'static str,
}

/// A subcommand: its name, options and entry point. `run` returns the text
/// to print on standard output.
#[derive(Clone, Copy)]
pub struct Command {
    /// Name as typed.
    pub name: &'static str,
    /// One-line summary for the command list.
    pub summary: &'static str,
    /// Accepted options.
    pub options: &'static [Opt],
    /// Entry point.
    pub run: fn(&Parsed) -> Result<String, CliError>,
}

/// Why the tool stopped.
#[derive(Debug, Clone, PartialEq)]
pub enum CliError {
    /// Bad command line (unknown command or option, missing value): exit 2.
    Usage(String),
    /// A value that cannot be used (bad number, unit, unknown gas): exit 1.
    Input(String),
    /// The kernel rejected the configuration: exit 1.
    Config(ConfigError),
}

impl CliError {
    /// Process exit code.
    pub fn exit_code(&self) -> u8 {
        match self {
            CliError::Usage(_) => 2,
            CliError::Input(_) | CliError::Config(_) => 1,
        }
    }
}

impl core::fmt::Display for CliError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            CliError::Usage(m) | CliError::Input(m) => f.write_str(m),
            CliError::Config(e) => write!(f, "configuration rejected by the kernel: {e}"),
        }
    }
}

impl From<ConfigError> for CliError {
    fn from(e: ConfigError) -> Self {
        CliError::Config(e)
    }
}

/// Parsed options of one subcommand.
#[derive(Debug, Default)]
pub struct Parsed {
    given: Vec<(&'static str, Option<String>)>,
}

impl Parsed {
    /// The value of option `name`, if given.
    pub fn get(&self, name: &str) -> Option<&str> {
        self.given
            .iter()
            .find(|(n, _)| *n == name)
            .and_then(|(_, v)| v.as_deref())
    }
    /// Whether flag or option `name` was given.
    pub fn has(&self, name: &str) -> bool {
        self.given.iter().any(|(n, _)| *n == name)
    }
}

/// Parses `args` (after the subcommand name) against `options`.
/// `--help` / `-h` is handled by the caller before this.
pub fn parse(cmd: &Command, args: &[String]) -> Result<Parsed, CliError> {
    let mut parsed = Parsed::default();
    let mut it = args.iter();
    while let Some(arg) = it.next() {
        let Some(body) = arg.strip_prefix("--") else {
            return Err(CliError::Usage(format!(
                "unexpected argument '{arg}' for '{}' (options start with --; see '{} {} --help')",
                cmd.name,
                crate::BIN,
                cmd.name
            )));
        };
        let (name, inline) = match body.split_once('=') {
            Some((n, v)) => (n, Some(v.to_string())),
            None => (body, None),
        };
        let Some(opt) = cmd.options.iter().find(|o| o.name == name) else {
            return Err(CliError::Usage(format!(
                "unknown option '--{name}' for '{}' (see '{} {} --help')",
                cmd.name,
                crate::BIN,
                cmd.name
            )));
        };
        if parsed.has(opt.name) {
            return Err(CliError::Usage(format!("option '--{name}' given twice")));
        }
        let value = match (opt.value, inline) {
            (None, None) => None,
            (None, Some(_)) => {
                return Err(CliError::Usage(format!(
                    "option '--{name}' is a flag and takes no value"
                )))
            }
            (Some(_), Some(v)) => Some(v),
            (Some(placeholder), None) => match it.next() {
                Some(v) => Some(v.clone()),
                None => {
                    return Err(CliError::Usage(format!(
                        "option '--{name}' needs a value: --{name} {placeholder}"
                    )))
                }
            },
        };
        parsed.given.push((opt.name, value));
    }
    Ok(parsed)
}

/// Help text of one subcommand.
pub fn help(cmd: &Command) -> String {
    let mut s = format!(
        "{} {} — {}\n\nOptions:\n",
        crate::BIN,
        cmd.name,
        cmd.summary
    );
    let width = cmd
        .options
        .iter()
        .map(|o| o.name.len() + o.value.map_or(0, |v| v.len() + 1))
        .max()
        .unwrap_or(0);
    for o in cmd.options {
        let left = match o.value {
            Some(v) => format!("{} {v}", o.name),
            None => o.name.to_string(),
        };
        s.push_str(&format!("  --{left:<width$}  {}\n", o.help));
    }
    s.push_str(&format!("  --{:<width$}  this help\n", "help"));
    s
}

/// Which kernel build to run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Precision {
    /// The f32 device build.
    F32,
    /// The f64 reference build.
    F64,
}

impl Precision {
    /// From `--precision f32|f64`, with a default.
    pub fn from_option(text: Option<&str>, default: Precision) -> Result<Precision, CliError> {
        match text {
            None => Ok(default),
            Some("f32") => Ok(Precision::F32),
            Some("f64") => Ok(Precision::F64),
            Some(other) => Err(CliError::Usage(format!(
                "--precision: '{other}' is not f32 or f64"
            ))),
        }
    }
    /// `f32` or `f64`.
    pub fn word(self) -> &'static str {
        match self {
            Precision::F32 => "f32",
            Precision::F64 => "f64",
        }
    }
}

/// Parses a whole number in `lo..=hi`, naming the option in the error.
pub fn count(option: &str, text: &str, lo: u32, hi: u32) -> Result<u32, CliError> {
    match text.trim().parse::<u32>() {
        Ok(n) if (lo..=hi).contains(&n) => Ok(n),
        _ => Err(CliError::Input(format!(
            "--{option}: '{text}' is not a whole number from {lo} to {hi}"
        ))),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const OPTS: &[Opt] = &[
        Opt {
            name: "n",
            value: Some("N"),
            help: "",
        },
        Opt {
            name: "json",
            value: None,
            help: "",
        },
    ];
    const CMD: Command = Command {
        name: "t",
        summary: "",
        options: OPTS,
        run: |_| Ok(String::new()),
    };

    fn args(a: &[&str]) -> Vec<String> {
        a.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn parses_both_value_forms_and_flags() {
        let p = parse(&CMD, &args(&["--n", "5", "--json"])).unwrap();
        assert_eq!(p.get("n"), Some("5"));
        assert!(p.has("json"));
        let p = parse(&CMD, &args(&["--n=-3"])).unwrap();
        assert_eq!(p.get("n"), Some("-3"));
        assert!(!p.has("json"));
    }

    #[test]
    fn rejects_bad_command_lines() {
        for bad in [
            &["--x"][..],
            &["n"],
            &["--n"],
            &["--n", "1", "--n", "2"],
            &["--json=yes"],
        ] {
            let e = parse(&CMD, &args(bad)).unwrap_err();
            assert_eq!(e.exit_code(), 2, "{bad:?}");
        }
    }
}
