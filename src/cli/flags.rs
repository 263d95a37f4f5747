//! Numeric flags read with the bounds they need, each refused with what is expected ("expected a whole
//! number from 1 to 3") rather than a parser's own words; and clap's refusals folded into the one `error:`
//! line every other bad input gets.

use std::time::Duration;

/// A whole number from `lo` to `hi`; `what` names it in the refusal ("a number of resistors per slot").
///
/// Signs, points and exponents are refused as well as values out of range, with the range in the message.
pub fn whole<T>(
    lo: u64,
    hi: u64,
    what: &'static str,
) -> impl Fn(&str) -> Result<T, String> + Clone + Send + Sync + 'static
where
    T: TryFrom<u64> + Clone + Send + Sync + 'static,
{
    move |text: &str| {
        let expected = if hi == u64::MAX {
            format!("expected {what}, a whole number {lo} or more")
        } else {
            format!("expected {what}, a whole number from {lo} to {hi}")
        };
        let t = text.trim();
        if t.is_empty() || !t.bytes().all(|b| b.is_ascii_digit()) {
            return Err(expected);
        }
        match t.parse::<u64>() {
            Ok(n) if (lo..=hi).contains(&n) => T::try_from(n).map_err(|_| expected),
            _ => Err(expected),
        }
    }
}

/// The longest `--time-limit` accepted: a day, far past any search worth waiting for, and well inside what a
/// [`Duration`] holds (a bare `f64` of seconds could overflow it).
pub const MAX_SECONDS: f64 = 86_400.0;

/// `design`'s and `order`'s time limit when none is given, seconds: a minute is about as long as a person
/// waits at a prompt without wondering whether the program hangs, and the demos finish in well under a
/// second. The limit covers the whole command, so every run ends; `--time-limit 3600` allows an hour.
pub const DEFAULT_TIME_LIMIT: &str = "60";

/// A time limit in seconds, above 0 and at most a day ("0.5", "30", "2e1").
pub fn seconds(text: &str) -> Result<Duration, String> {
    match text.trim().parse::<f64>() {
        Ok(s) if s > 0.0 && s <= MAX_SECONDS => Ok(Duration::from_secs_f64(s)),
        _ => Err(format!(
            "expected a number of seconds above 0 and at most {MAX_SECONDS} (a day), such as 0.5 or 30"
        )),
    }
}

/// An amount of money in the catalogue's currency, 0 or more ("25", "12.50"); no currency sign.
pub fn amount(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(x) if x.is_finite() && (0.0..=MAX_AMOUNT).contains(&x) => Ok(x),
        Ok(x) if x > MAX_AMOUNT => Err(format!(
            "it is more than any order of resistors costs; expected an amount of money from 0 to {MAX_AMOUNT}, as a plain number such as 25 or 12.50"
        )),
        _ => Err(
            "expected an amount of money, 0 or more, as a plain number such as 25 or 12.50".into(),
        ),
    }
}

/// The largest amount of money read (a thousand million in any currency): far past any purchase of
/// resistors, so that only a slip (1e308, which sums and prints as infinity) is refused.
pub const MAX_AMOUNT: f64 = 1e9;

/// One line for a refusal clap made: its message and any tip joined with "; ", the usage block dropped, and
/// the help of `command` ("biasfit design") named, so the line reads like every other `error:` biasfit
/// prints.
pub fn one_line(rendered: &str, command: &str) -> String {
    let mut pieces: Vec<String> = Vec::new();
    let mut in_usage = false;
    for line in rendered.lines().map(str::trim) {
        if line.is_empty() {
            in_usage = false;
            continue;
        }
        if line.starts_with("Usage:") {
            // The usage and its continuation lines (other forms of the command) repeat what --help says.
            in_usage = true;
            continue;
        }
        // Clap suggests `-- ARG` for any unknown argument, which only helps a value that starts with a single
        // '-' (a negative number); for a misspelt --flag it misleads.
        if in_usage
            || line.starts_with("For more information")
            || line.starts_with("tip: to pass '--")
        {
            continue;
        }
        match pieces.last_mut() {
            // A list after a colon ("not provided:\n  --use <SLOTS>") continues its sentence.
            Some(last) if last.ends_with(':') => {
                last.push(' ');
                last.push_str(line);
            }
            _ => pieces.push(line.to_string()),
        }
    }
    let mut text = pieces.join("; ");
    if !text.starts_with("error:") {
        text = format!("error: {text}");
    }
    format!("{text}; see {command} --help")
}

/// The subcommands named at the start of the arguments ("biasfit stock take"), for pointing at their help.
pub fn command_path(cmd: &clap::Command, args: &[String]) -> String {
    let mut path = vec![cmd.get_name().to_string()];
    let mut cmd = cmd;
    for a in args {
        match cmd.find_subcommand(a) {
            Some(sub) => {
                path.push(sub.get_name().to_string());
                cmd = sub;
            }
            None => break,
        }
    }
    path.join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn whole_numbers_within_bounds() {
        let parts = whole::<u8>(1, 3, "a number of resistors per slot");
        assert_eq!(parts("2"), Ok(2));
        assert_eq!(parts(" 3 "), Ok(3));
        for bad in [
            "0",
            "4",
            "-1",
            "+2",
            "2.0",
            "1e0",
            "",
            "two",
            "99999999999999999999999",
        ] {
            let e = parts(bad).unwrap_err();
            assert_eq!(
                e, "expected a number of resistors per slot, a whole number from 1 to 3",
                "{bad}"
            );
        }
        let seed = whole::<u64>(0, u64::MAX, "a seed");
        assert_eq!(seed("18446744073709551615"), Ok(u64::MAX));
        assert_eq!(
            seed("-1").unwrap_err(),
            "expected a seed, a whole number 0 or more"
        );
    }

    #[test]
    fn seconds_are_positive_and_bounded() {
        assert_eq!(seconds("0.5"), Ok(Duration::from_millis(500)));
        assert_eq!(seconds("2e1"), Ok(Duration::from_secs(20)));
        // 1e300 s would overflow a Duration; NaN and infinities are not times.
        for bad in ["0", "-1", "1e300", "NaN", "inf", "86401", "", "ten"] {
            assert!(seconds(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn amounts_are_plain_numbers_0_or_more() {
        assert_eq!(amount("12.50"), Ok(12.5));
        assert_eq!(amount("0"), Ok(0.0));
        assert_eq!(amount("1e9"), Ok(1e9));
        for bad in ["-1", "NaN", "inf", "€5", "5 EUR", "", "1e308", "1000000001"] {
            assert!(amount(bad).is_err(), "{bad}");
        }
        assert!(amount("1e308").unwrap_err().contains("more than any order"));
    }

    #[test]
    fn clap_refusals_become_one_line() {
        let missing = "error: the following required arguments were not provided:\n  --use <SLOTS>\n\nUsage: biasfit check --use <SLOTS> <FILE>\n\nFor more information, try '--help'.\n";
        assert_eq!(
            one_line(missing, "biasfit check"),
            "error: the following required arguments were not provided: --use <SLOTS>; see biasfit check --help"
        );
        let tip = "error: unexpected argument '--part' found\n\n  tip: a similar argument exists: '--parts'\n\nUsage: biasfit design --stock <STOCK> --parts <N> <FILE>\n\nFor more information, try '--help'.\n";
        assert_eq!(
            one_line(tip, "biasfit design"),
            "error: unexpected argument '--part' found; tip: a similar argument exists: '--parts'; see biasfit design --help"
        );
        let unknown = "error: unexpected argument '--frobnicate' found\n\n  tip: to pass '--frobnicate' as a value, use '-- --frobnicate'\n\nUsage: biasfit stock [OPTIONS] <FILE>\n";
        assert_eq!(
            one_line(unknown, "biasfit stock"),
            "error: unexpected argument '--frobnicate' found; see biasfit stock --help"
        );
        let top = "error: unrecognized subcommand 'bogus'\n\nUsage: biasfit <COMMAND>\n\nFor more information, try '--help'.\n";
        assert_eq!(
            one_line(top, "biasfit"),
            "error: unrecognized subcommand 'bogus'; see biasfit --help"
        );
        let stock = "error: x\n\nUsage: biasfit stock [OPTIONS] <FILE>\n       biasfit stock <COMMAND>\n\nFor more information, try '--help'.\n";
        assert_eq!(
            one_line(stock, "biasfit stock"),
            "error: x; see biasfit stock --help"
        );
    }

    #[test]
    fn the_command_path_stops_at_the_first_argument() {
        let cmd = clap::Command::new("biasfit")
            .subcommand(clap::Command::new("stock").subcommand(clap::Command::new("take")));
        let path =
            |a: &[&str]| command_path(&cmd, &a.iter().map(|s| s.to_string()).collect::<Vec<_>>());
        assert_eq!(path(&["stock", "take", "x.csv"]), "biasfit stock take");
        assert_eq!(path(&["stock", "take.csv"]), "biasfit stock");
        assert_eq!(path(&["--bogus", "stock"]), "biasfit");
    }
}
