//! Starter design files: one commented, ready-to-fill file per bias position a board commonly holds, the
//! five closed-form topologies as `[[stage]]` tables and the rest as `[[circuit]]` tables. Each is an
//! invented scenario shipped in `examples/starters/`, compiled in so the binary needs no data folder.

/// One starter.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Starter {
    /// Its name, as typed after `new`.
    pub name: &'static str,
    /// Whether it is a `[[stage]]` (closed-form) or a `[[circuit]]`.
    pub circuit: bool,
    /// What it is, in a few words.
    pub what: &'static str,
    /// The file's text.
    pub text: &'static str,
}

macro_rules! starter {
    ($name:literal, $circuit:literal, $what:literal) => {
        Starter {
            name: $name,
            circuit: $circuit,
            what: $what,
            text: include_str!(concat!("../examples/starters/", $name, ".toml")),
        }
    };
}

/// Every starter, stages first.
pub const STARTERS: &[Starter] = &[
    starter!(
        "divider",
        false,
        "voltage-divider bias, common emitter (R1, R2, RC, RE)"
    ),
    starter!(
        "split-emitter",
        false,
        "divider bias with RE split for a set gain (RE1, RE2)"
    ),
    starter!(
        "collector-feedback",
        false,
        "RB from collector to base, RC, RE"
    ),
    starter!(
        "dual-supply",
        false,
        "emitter bias from a negative rail (RB, RC, RE)"
    ),
    starter!(
        "base-resistor",
        false,
        "fixed base bias from the supply (RB, RC, RE)"
    ),
    starter!(
        "follower",
        true,
        "emitter follower, divider bias, load on the emitter"
    ),
    starter!(
        "switch",
        true,
        "saturated switch from a logic output, with overdrive at min beta"
    ),
    starter!(
        "tail-pair",
        true,
        "long-tailed differential pair on dual rails, tail resistor"
    ),
    starter!(
        "zener-current-source",
        true,
        "zener-referenced transistor current source"
    ),
    starter!("mirror", true, "two-transistor current mirror"),
    starter!("jfet-self-bias", true, "JFET with source self-bias"),
    starter!(
        "mosfet-divider",
        true,
        "enhancement MOSFET with divider gate bias"
    ),
    starter!("led-string", true, "an LED string's current resistor"),
    starter!(
        "regulator-feedback",
        true,
        "an adjustable regulator's feedback divider"
    ),
    starter!("gain-pair", true, "a non-inverting op-amp's gain pair"),
];

/// The starter with this name.
pub fn find(name: &str) -> Result<&'static Starter, UnknownStarter> {
    let name = name.trim();
    STARTERS.iter().find(|s| s.name == name).ok_or_else(|| {
        let names: Vec<&str> = STARTERS.iter().map(|s| s.name).collect();
        UnknownStarter {
            name: crate::notation::excerpt(name),
            nearest: crate::circuit::file::nearest(name, &names).map(str::to_string),
        }
    })
}

/// A name that is no starter.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("no starter is named '{name}'{}; expected one of {}", nearest.as_ref().map(|n| format!(" (did you mean '{n}'?)")).unwrap_or_default(), STARTERS.iter().map(|s| s.name).collect::<Vec<_>>().join(", "))]
pub struct UnknownStarter {
    /// The name given (a short excerpt).
    pub name: String,
    /// The nearest starter's name, if one is close.
    pub nearest: Option<String>,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_file_in_the_folder_is_a_starter_and_names_are_unique() {
        let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/starters");
        let mut files: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .filter(|n| n.ends_with(".toml"))
            .map(|n| n.trim_end_matches(".toml").to_string())
            .collect();
        files.sort();
        let mut names: Vec<String> = STARTERS.iter().map(|s| s.name.to_string()).collect();
        names.sort();
        assert_eq!(files, names);
    }

    #[test]
    fn a_slip_gets_the_nearest_name() {
        let e = find("folower").unwrap_err().to_string();
        assert!(
            e.starts_with("no starter is named 'folower' (did you mean 'follower'?)"),
            "{e}"
        );
        assert_eq!(find(" mirror ").map(|s| s.circuit), Ok(true));
    }
}
