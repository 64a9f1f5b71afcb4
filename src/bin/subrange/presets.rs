//! Preset names on the command line.
//!
//! A preset is a named combination of models that the container records in
//! its header ([`subrange::preset::Preset`]). The command line accepts the
//! names the library knows — every preset of [`Preset::all`], so presets
//! added to the library appear here without change — and anything else is a
//! usage error that lists them.

use std::fmt;

use subrange::preset::Preset;

/// A valid preset, as named on the command line.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PresetName(Preset);

impl PresetName {
    /// The canonical name.
    pub fn as_str(&self) -> &'static str {
        self.0.name()
    }

    /// The preset, with default parameters.
    pub fn preset(&self) -> Preset {
        self.0
    }

    /// Every preset, in the library's order.
    pub fn all() -> Vec<PresetName> {
        Preset::all().map(PresetName).collect()
    }
}

impl fmt::Display for PresetName {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// The valid names, comma separated.
pub fn valid_names() -> String {
    Preset::names().collect::<Vec<_>>().join(", ")
}

/// Parses a preset name (clap value parser).
///
/// # Errors
///
/// A message listing the valid names.
pub fn parse_name(text: &str) -> Result<PresetName, String> {
    let wanted = text.trim();
    Preset::all()
        .find(|p| p.name().eq_ignore_ascii_case(wanted))
        .map(PresetName)
        .ok_or_else(|| format!("unknown preset '{text}'; valid presets: {}", valid_names()))
}

/// `--preset` long help: every name with a line about it.
pub fn preset_help() -> String {
    let mut s = format!(
        "Model preset (default: {}). Valid presets:",
        Preset::default().name()
    );
    for p in Preset::all() {
        s.push_str(&format!("\n  {:<10} {}", p.name(), p.kind().summary()));
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
        let help = preset_help();
        for name in PresetName::all() {
            assert!(help.contains(name.as_str()), "{help}");
        }
    }
}
