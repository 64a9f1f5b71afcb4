//! The one textual form of a [`Preset`]: `name` or
//! `name:param=value,param=value,...`.
//!
//! [`Display`](core::fmt::Display) prints every parameter
//! (`mix:order=...,memory_mib=4,...`), so the text names the same coding
//! whatever a later release chooses as defaults; [`FromStr`] reads that
//! form, and also a name alone or any subset of parameters (the others at
//! their defaults), which is what a person types. Names are matched without
//! regard to ASCII case and spaces around names and values are ignored.
//!
//! Invariant: for every preset `p`, `p.to_string().parse() == Ok(p)`.

use core::fmt;
use core::str::FromStr;

#[cfg(doc)]
use crate::error::ErrorKind;
use crate::error::Result;
use crate::preset::registry::NAME_LIST;
use crate::preset::{Preset, PresetKind};

/// Separates the name from the parameters.
const NAME_END: char = ':';
/// Separates parameters.
const PARAM_SEP: char = ',';
/// Separates a parameter's name from its value.
const VALUE_SEP: char = '=';

fn invalid(reason: &'static str) -> crate::Error {
    crate::Error::invalid_parameter("preset", reason)
}

/// Parses the textual form; see the module docs.
///
/// # Errors
///
/// [`ErrorKind::InvalidParameter`] for an unknown name (the message lists
/// the valid ones), a parameter without `=`, a value that is not a whole
/// number, an unknown parameter, or a value out of its range or not
/// fitting with the others.
pub(crate) fn parse(text: &str) -> Result<Preset> {
    let (name, params) = match text.split_once(NAME_END) {
        Some((name, params)) => (name.trim(), Some(params)),
        None => (text.trim(), None),
    };
    let kind = PresetKind::known()
        .find(|k| k.name().eq_ignore_ascii_case(name))
        .ok_or_else(|| invalid(NAME_LIST))?;
    let mut preset = Preset::new(kind);
    let Some(params) = params else {
        return Ok(preset);
    };
    if params.trim().is_empty() {
        return Err(invalid("no parameters after ':'; give name=value pairs"));
    }
    for pair in params.split(PARAM_SEP) {
        let (key, value) = pair
            .split_once(VALUE_SEP)
            .ok_or_else(|| invalid("a parameter must be name=value"))?;
        let value: u32 = value
            .trim()
            .parse()
            .map_err(|_| invalid("a parameter value must be a whole number"))?;
        preset.set_param(key.trim(), value)?;
    }
    Ok(preset)
}

impl FromStr for Preset {
    type Err = crate::Error;

    /// Parses `name` or `name:param=value,...` (see [`Preset`]'s textual
    /// form).
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`], as for [`Preset::from_name`].
    fn from_str(text: &str) -> Result<Self> {
        parse(text)
    }
}

/// `name:param=value,...`, every parameter in the order of
/// [`Preset::param_specs`]; [`FromStr`] reads it back.
impl fmt::Display for Preset {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())?;
        for (i, (spec, v)) in self.param_specs().iter().zip(self.params()).enumerate() {
            let sep = if i == 0 { NAME_END } else { PARAM_SEP };
            write!(f, "{sep}{}{VALUE_SEP}{v}", spec.name)?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ErrorKind;
    use alloc::string::ToString;

    #[test]
    fn display_then_parse_is_the_identity_for_every_parameter_value() {
        for kind in PresetKind::known() {
            let base = Preset::new(kind);
            assert_eq!(base.to_string().parse::<Preset>().unwrap(), base);
            assert_eq!(kind.name().parse::<Preset>().unwrap(), base);
            for spec in kind.param_specs() {
                let mid = spec.min + (spec.max - spec.min) / 2;
                for value in [spec.min, spec.max, mid, spec.default] {
                    let mut p = base;
                    // Some values do not fit with the others' defaults.
                    if p.set_param(spec.name, value).is_err() {
                        continue;
                    }
                    let text = p.to_string();
                    assert_eq!(text.parse::<Preset>().unwrap(), p, "{text}");
                    assert!(text.starts_with(kind.name()), "{text}");
                    assert!(text.contains(&alloc::format!("{}={value}", spec.name)));
                }
            }
        }
    }

    #[test]
    fn people_type_subsets_spaces_and_capitals() {
        let p: Preset = " Mix : memory_mib = 32 ".parse().unwrap();
        assert_eq!(p.name(), "mix");
        assert_eq!(p.param("memory_mib"), Some(32));
        let mut want = Preset::new(PresetKind::Mix);
        want.set_param("memory_mib", 32).unwrap();
        assert_eq!(p, want);
        assert_eq!(
            "static".parse::<Preset>().unwrap().to_string(),
            "static:lanes=32,log2_total=12"
        );
    }

    #[test]
    fn malformed_text_is_a_typed_error() {
        for bad in [
            "",
            "fastest",
            "mix:",
            "mix:memory_mib",
            "mix:memory_mib=x",
            "mix:memory_mib=-1",
            "mix:speed=3",
            "mix:memory_mib=999999",
            "adaptive:period=1",
            "mix(memory_mib=4)",
        ] {
            let err = bad.parse::<Preset>().unwrap_err();
            assert!(
                matches!(err.kind(), ErrorKind::InvalidParameter { .. }),
                "{bad}: {err}"
            );
        }
        let err = "fastest".parse::<Preset>().unwrap_err().to_string();
        assert!(err.contains("static, adaptive, order2, mix"), "{err}");
    }
}
