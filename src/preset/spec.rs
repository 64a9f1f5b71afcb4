//! A preset's parameters as a header records them: one [`ParamSpec`] per
//! parameter (name, default, range, help), and [`Values`], the recorded
//! values read by spec instead of by position.
//!
//! A header lists a preset's parameter values in the order of its specs.
//! Each preset file declares its specs as constants and reads every value
//! through [`Values::get`] with the constant itself, so the order lives in
//! one place (the preset's spec list) and inserting a parameter moves no
//! other code.
//!
//! Invariant: [`Values`] holds one value per spec, each within its spec's
//! range (the [`Preset`](super::Preset) constructors check that before a
//! preset parses its values).

use crate::error::Result;

/// One integer parameter of a preset: its name, default and valid range.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ParamSpec {
    /// Name, as used by [`Preset::set_param`](super::Preset::set_param)
    /// (e.g. `increment`).
    pub name: &'static str,
    /// The value a new preset starts with.
    pub default: u32,
    /// Smallest valid value.
    pub min: u32,
    /// Largest valid value.
    pub max: u32,
    /// What the parameter does, one line.
    pub help: &'static str,
    /// The value a header that stops before this parameter implies; `None`
    /// for parameters every header records.
    pub absent: Option<u32>,
}

/// A preset's recorded parameter values beside its specs.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Values<'a> {
    specs: &'static [ParamSpec],
    values: &'a [u32],
}

impl<'a> Values<'a> {
    /// `values[i]` is the value of `specs[i]`.
    pub(crate) fn new(specs: &'static [ParamSpec], values: &'a [u32]) -> Self {
        Values { specs, values }
    }

    /// The value of the parameter `spec`.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter)
    /// when the preset has no parameter of that name (a preset reading a
    /// spec it does not list; every preset's unit tests parse its defaults).
    pub(crate) fn get(&self, spec: &ParamSpec) -> Result<u32> {
        self.specs
            .iter()
            .zip(self.values)
            .find(|(s, _)| s.name == spec.name)
            .map(|(_, &v)| v)
            .ok_or_else(|| {
                crate::Error::invalid_parameter(spec.name, "not a parameter of this preset")
            })
    }

    /// The value of the 0-or-1 parameter `spec`, as a flag.
    ///
    /// # Errors
    ///
    /// As for [`get`](Values::get), and
    /// [`ErrorKind::InvalidParameter`](crate::ErrorKind::InvalidParameter)
    /// for a value other than 0 or 1.
    pub(crate) fn flag(&self, spec: &ParamSpec) -> Result<bool> {
        match self.get(spec)? {
            0 => Ok(false),
            1 => Ok(true),
            _ => Err(crate::Error::invalid_parameter(spec.name, "must be 0 or 1")),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const A: ParamSpec = ParamSpec {
        name: "a",
        default: 1,
        min: 0,
        max: 1,
        help: "",
        absent: None,
    };
    const B: ParamSpec = ParamSpec { name: "b", ..A };
    const C: ParamSpec = ParamSpec { name: "c", ..A };

    #[test]
    fn values_are_read_by_spec_whatever_their_position() {
        const SPECS: &[ParamSpec] = &[B, A];
        let v = Values::new(SPECS, &[7, 1]);
        assert_eq!(v.get(&A).unwrap(), 1);
        assert_eq!(v.get(&B).unwrap(), 7);
        assert!(v.flag(&A).unwrap());
        assert!(v.flag(&B).is_err());
        assert!(v.get(&C).is_err());
    }
}
