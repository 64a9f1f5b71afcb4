//! Preset names on the command line.
//!
//! A preset is a named combination of models. The command line accepts the
//! names the library knows; anything else is a usage error that lists them.

use std::fmt;

/// The presets this build measures and codes with, in order of strength.
const NAMES: &[(&str, &str)] = &[
    (
        "static",
        "one order-0 frequency table per block, stored in the block; fastest",
    ),
    (
        "adaptive",
        "order-0 counts that learn as they code; no table to store",
    ),
];

/// A valid preset name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PresetName(&'static str);

impl PresetName {
    /// The canonical name.
    pub fn as_str(&self) -> &'static str {
        self.0
    }

    /// Every preset, in order.
    pub fn all() -> Vec<PresetName> {
        NAMES.iter().map(|(n, _)| PresetName(n)).collect()
    }
}

impl fmt::Display for PresetName {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.0)
    }
}

/// The valid names, comma separated.
pub fn valid_names() -> String {
    NAMES.iter().map(|(n, _)| *n).collect::<Vec<_>>().join(", ")
}

/// Parses a preset name (clap value parser).
///
/// # Errors
///
/// A message listing the valid names.
pub fn parse_name(text: &str) -> Result<PresetName, String> {
    NAMES
        .iter()
        .find(|(n, _)| n.eq_ignore_ascii_case(text.trim()))
        .map(|(n, _)| PresetName(n))
        .ok_or_else(|| format!("unknown preset '{text}'; valid presets: {}", valid_names()))
}

/// `--preset` long help: every name with a line about it.
pub fn preset_help() -> String {
    let mut s = String::from("Model preset. Valid presets:");
    for (name, about) in NAMES {
        s.push_str(&format!("\n  {name:<10} {about}"));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_and_unknown_names() {
        assert_eq!(parse_name("static").unwrap().as_str(), "static");
        assert_eq!(parse_name("Adaptive").unwrap().as_str(), "adaptive");
        let err = parse_name("fastest").unwrap_err();
        for name in PresetName::all() {
            assert!(err.contains(name.as_str()), "{err}");
        }
    }
}
