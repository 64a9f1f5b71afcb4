//! Preset names on the command line.
//!
//! A preset is a named combination of models that the container records in
//! its header ([`subrange::preset::Preset`]). The command line accepts the
//! names the library knows — every preset of [`Preset::all`], so presets
//! added to the library appear here without change — and anything else is a
//! usage error that lists them. Parameters follow the name after a colon,
//! as `name=value` pairs separated by commas (`adaptive:period=1024,limit=65536`):
//! the library's one textual form of a preset, parsed by its `FromStr` and
//! printed by its `Display`, checked by its rules and recorded in the
//! container.

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

    /// The preset, with the parameters given on the command line (the
    /// others at their defaults).
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

/// The preset's parameters with their ranges and defaults, one a line.
fn param_list(preset: &Preset) -> String {
    preset
        .param_specs()
        .iter()
        .map(|p| {
            format!(
                "\n  {}={}..{} (default {}): {}",
                p.name, p.min, p.max, p.default, p.help
            )
        })
        .collect()
}

/// Parses a preset in the library's textual form, `NAME` or
/// `NAME:PARAM=VALUE,...` ([`Preset`]'s `FromStr`), accepting only the
/// presets offered for writing (clap value parser).
///
/// # Errors
///
/// A message listing the valid names, or the preset's parameters when one
/// is unknown, malformed, out of range or does not fit with the others.
pub fn parse_name(text: &str) -> Result<PresetName, String> {
    let name = text.split_once(':').map_or(text, |(name, _)| name).trim();
    let Some(offered) = Preset::all().find(|p| p.name().eq_ignore_ascii_case(name)) else {
        return Err(format!(
            "unknown preset '{name}'; valid presets: {}",
            valid_names()
        ));
    };
    text.parse::<Preset>().map(PresetName).map_err(|e| {
        format!(
            "preset '{}': {e}; {} takes:{}",
            text.trim(),
            offered.name(),
            param_list(&offered)
        )
    })
}

/// `--preset` long help: every name with a line about it.
pub fn preset_help() -> String {
    let mut s = format!(
        "Model preset (default: {}), optionally with parameters: \
         NAME:PARAM=VALUE,... (e.g. adaptive:period=1024). Valid presets:",
        Preset::default().name()
    );
    for p in Preset::all() {
        s.push_str(&format!("\n  {:<10} {}", p.name(), p.kind().summary()));
        let params: Vec<&str> = p.param_specs().iter().map(|s| s.name).collect();
        s.push_str(&format!("\n  {:<10} parameters: {}", "", params.join(", ")));
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
        let p = parse_name("adaptive:period=1024, limit=65536")
            .unwrap()
            .preset();
        assert_eq!(
            (p.param("period"), p.param("limit")),
            (Some(1024), Some(65_536))
        );
        assert_eq!(p.param("lanes"), Some(32));
        // What the library prints parses back; presets kept only for
        // reading are not offered.
        assert_eq!(parse_name(&p.to_string()).unwrap().preset(), p);
        assert!(parse_name("stepwise")
            .unwrap_err()
            .contains("unknown preset"));
        for bad in [
            "adaptive:period",
            "adaptive:period=x",
            "adaptive:speed=3",
            "adaptive:period=1",
        ] {
            let err = parse_name(bad).unwrap_err();
            assert!(err.contains("period=32.."), "{bad}: {err}");
        }
        let help = preset_help();
        for name in PresetName::all() {
            assert!(help.contains(name.as_str()), "{help}");
        }
    }
}
