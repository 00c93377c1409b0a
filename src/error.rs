//! The one configuration error shape.
//!
//! Configuration is validated once, at construction; the per-scan update path
//! never returns an error (bad measurements become bad *quality*, see
//! [`crate::quality`]). Every refusal is a [`ConfigError`]: the configuration
//! path of the offending field, its index for array fields, and what is wrong
//! ([`Problem`]). The field paths are stable (a host tool maps them to its own
//! key names).

use core::fmt;

use crate::real::Real;

/// A configuration that cannot be right: which field, and what is wrong.
///
/// `field` is the dotted path of the field in the kernel's configuration
/// structs, without indices (`"gas.molar_mass"`,
/// `"stages.design_suction_pressure"`, `"channel.max_rate"`,
/// `"surge_line.points"`); `index` is the stage, channel or table-point index
/// for array fields.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ConfigError {
    /// Configuration path of the offending field (dotted, no indices).
    pub field: &'static str,
    /// Stage, channel or table-point index for array fields.
    pub index: Option<u16>,
    /// What is wrong with it.
    pub problem: Problem,
}

/// What is wrong with a configuration field.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Problem {
    /// NaN or infinite.
    NotFinite,
    /// Outside the allowed range `[min, max]` (an infinite end means no bound
    /// on that side; the field's documentation says if an end is open).
    OutOfRange {
        /// Lowest allowed value.
        min: f64,
        /// Highest allowed value.
        max: f64,
    },
    /// Must exceed another field (a high limit over a low one, discharge over
    /// suction).
    NotAbove {
        /// The field it must exceed.
        other: &'static str,
    },
    /// A table entry does not rise above the previous entry.
    NotIncreasing,
    /// The number of entries is outside `[min, max]`.
    Count {
        /// Fewest entries allowed.
        min: u16,
        /// Most entries allowed.
        max: u16,
    },
    /// Conflicts with another field.
    Inconsistent {
        /// The field it conflicts with.
        with: &'static str,
    },
    /// An unknown name, component or identifier.
    Unknown,
}

impl ConfigError {
    /// An error for `field` with `problem`, no index.
    pub const fn new(field: &'static str, problem: Problem) -> Self {
        ConfigError {
            field,
            index: None,
            problem,
        }
    }

    /// The same error for entry `index` of an array field (saturating at
    /// `u16::MAX`).
    pub const fn at(self, index: usize) -> Self {
        let index = if index > u16::MAX as usize {
            u16::MAX
        } else {
            index as u16
        };
        ConfigError {
            index: Some(index),
            ..self
        }
    }

    /// `field` is NaN or infinite.
    pub const fn not_finite(field: &'static str) -> Self {
        Self::new(field, Problem::NotFinite)
    }

    /// `field` is outside `[min, max]`.
    pub const fn out_of_range(field: &'static str, min: f64, max: f64) -> Self {
        Self::new(field, Problem::OutOfRange { min, max })
    }
}

/// Checks that `value` is finite and in `[min, max]`; returns it.
///
/// NaN or infinity gives [`Problem::NotFinite`], anything else outside the
/// range [`Problem::OutOfRange`]. Inlined (the bounds fold into the
/// comparisons); the refusal itself is built out of line, once for every
/// check of the firmware (configuration-time flash).
#[inline(always)]
pub(crate) fn check_range<T: Real>(
    field: &'static str,
    value: T,
    min: f64,
    max: f64,
) -> Result<T, ConfigError> {
    let (lo, hi) = (T::of(min), T::of(max));
    // With finite bounds (the usual case, known at compile time where the
    // bounds are constants) the two compares alone refuse NaN and both
    // infinities: the finiteness test is left out of the accepting path
    // (configuration-time flash); the refusal still tells them apart.
    let within = if T::is_finite(lo) && T::is_finite(hi) {
        value >= lo && value <= hi
    } else {
        T::is_finite(value) && value >= lo && value <= hi
    };
    if within {
        Ok(value)
    } else {
        Err(unindexed(refusal(field, T::is_finite(value), min, max)))
    }
}

/// Checks that `value` is finite and strictly above zero (the range is
/// reported as `[0, inf]`, open at 0); returns it.
#[inline(always)]
pub(crate) fn check_positive<T: Real>(field: &'static str, value: T) -> Result<T, ConfigError> {
    if T::is_finite(value) && value > T::ZERO {
        Ok(value)
    } else {
        Err(unindexed(refusal(
            field,
            T::is_finite(value),
            0.0,
            f64::INFINITY,
        )))
    }
}

/// The refusal of a range check: [`Problem::NotFinite`] for a NaN or
/// infinite value, [`Problem::OutOfRange`] otherwise. Cold and out of line:
/// one copy serves every check (configuration-time flash).
#[cold]
#[inline(never)]
pub(crate) fn refusal(field: &'static str, finite: bool, min: f64, max: f64) -> ConfigError {
    if finite {
        ConfigError::out_of_range(field, min, max)
    } else {
        ConfigError::not_finite(field)
    }
}

/// `error` with its index restated as `None` (which [`refusal`] returns):
/// inlined at each check, it tells the optimiser that the out-of-line
/// refusal's result is an error (its `Result` tag lives in the index's
/// niche), so nothing after a refusal is kept live across the call
/// (configuration-time flash).
#[inline(always)]
const fn unindexed(error: ConfigError) -> ConfigError {
    ConfigError {
        index: None,
        ..error
    }
}

/// A setting outside the range its documentation states (used where a list
/// of checks does not carry the range itself).
pub(crate) const fn outside_documented_range(field: &'static str) -> ConfigError {
    ConfigError::new(
        field,
        Problem::Inconsistent {
            with: "the range in its documentation",
        },
    )
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // Print the path with the index after its first segment that names
        // an array ("stages[2].design_suction_pressure").
        match (self.index, self.field.split_once('.')) {
            (Some(i), Some((head, tail))) => write!(f, "{head}[{i}].{tail}")?,
            (Some(i), None) => write!(f, "{}[{i}]", self.field)?,
            (None, _) => f.write_str(self.field)?,
        }
        f.write_str(": ")?;
        match self.problem {
            Problem::NotFinite => f.write_str("must be a finite number"),
            Problem::OutOfRange { min, max } => write!(f, "must be in [{min}, {max}]"),
            Problem::NotAbove { other } => write!(f, "must be above {other}"),
            Problem::NotIncreasing => f.write_str("must rise above the previous entry"),
            Problem::Count { min, max } => write!(f, "needs {min} to {max} entries"),
            Problem::Inconsistent { with } => write!(f, "conflicts with {with}"),
            Problem::Unknown => f.write_str("unknown name"),
        }
    }
}

impl core::error::Error for ConfigError {}

// The field-output error (`control::outputs`) gets its text here, beside the
// other public error, so every public error prints and chains the same way.
#[cfg(feature = "embedded-hal")]
impl<V: fmt::Debug, A: fmt::Debug, R: fmt::Debug> fmt::Display
    for crate::control::OutputError<V, A, R>
{
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use crate::control::OutputError;
        match self {
            OutputError::Valve(e) => write!(f, "recycle valve output failed: {e:?}"),
            OutputError::Alarm(e) => write!(f, "surge alarm output failed: {e:?}"),
            OutputError::Trip(e) => write!(f, "trip request output failed: {e:?}"),
        }
    }
}

#[cfg(feature = "embedded-hal")]
impl<V: fmt::Debug, A: fmt::Debug, R: fmt::Debug> core::error::Error
    for crate::control::OutputError<V, A, R>
{
}

#[cfg(test)]
mod tests {

    #[cfg(feature = "embedded-hal")]
    #[test]
    fn output_error_prints_which_output_failed() {
        use std::string::ToString;
        let e: crate::control::OutputError<u8, u8, u8> = crate::control::OutputError::Trip(7);
        assert_eq!(e.to_string(), "trip request output failed: 7");
        let _: &dyn core::error::Error = &e;
    }
    use super::*;

    #[test]
    fn display_names_field_index_and_problem() {
        extern crate std;
        use std::string::ToString;
        let e = ConfigError::out_of_range("stages.design_suction_pressure", 1.0, 1e8).at(2);
        assert_eq!(
            e.to_string(),
            "stages[2].design_suction_pressure: must be in [1, 100000000]"
        );
        assert_eq!(
            ConfigError::not_finite("gas.molar_mass").to_string(),
            "gas.molar_mass: must be a finite number"
        );
        assert_eq!(
            ConfigError::new("x", Problem::Unknown).at(70_000).index,
            Some(u16::MAX)
        );
    }

    #[test]
    fn range_checks_refuse_nan_and_bounds() {
        assert_eq!(check_range("f", 1.5f64, 1.0, 2.0), Ok(1.5));
        assert_eq!(
            check_range("f", f64::NAN, 1.0, 2.0),
            Err(ConfigError::not_finite("f"))
        );
        assert_eq!(
            check_range("f", 2.5f32, 1.0, 2.0),
            Err(ConfigError::out_of_range("f", 1.0, 2.0))
        );
        assert_eq!(
            check_positive("f", 0.0f64),
            Err(ConfigError::out_of_range("f", 0.0, f64::INFINITY))
        );
        assert_eq!(
            check_positive("f", f32::INFINITY),
            Err(ConfigError::not_finite("f"))
        );
        assert_eq!(check_positive("f", 1e-30f64), Ok(1e-30));
    }
}
