//! The one configuration error type.
//!
//! Configuration is validated once, at construction; the per-scan update path
//! never returns an error (bad measurements become bad *quality*, see
//! [`crate::quality`]).

use core::fmt;

/// A configuration that cannot be right, naming the offending field.
///
/// `stage` fields are zero-based stage indices.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ConfigError {
    /// `gas.molar_mass` is not a finite positive number (kg/kmol).
    MolarMass,
    /// `gas.k`, the heat-capacity ratio, is not finite or not above 1.
    HeatCapacityRatio,
    /// `gas.cp_polynomial` gives a non-positive or non-finite cp, or a
    /// heat-capacity ratio not above 1, somewhere in its validity range, or
    /// the range itself is empty.
    HeatCapacityPolynomial,
    /// `gas.compressibility` is not in (0, 2].
    Compressibility,
    /// `gas.critical_pressure` is not finite and positive (Pa).
    CriticalPressure,
    /// `gas.composition[component]`: a mole fraction is not finite and in
    /// [0, 1], the fractions do not sum to 1 within 1e-4, or a component
    /// appears twice.
    Composition {
        /// Component index.
        component: u8,
    },
    /// `stages[stage].design_suction_pressure` is not finite and positive.
    DesignSuctionPressure {
        /// Stage index.
        stage: u8,
    },
    /// `stages[stage].design_discharge_pressure` is not above the stage's
    /// design suction pressure.
    DesignDischargePressure {
        /// Stage index.
        stage: u8,
    },
    /// `stages[stage].design_suction_pressure` does not chain with the
    /// previous stage's design discharge pressure: it is above it, or lower
    /// than `max_interstage_pressure_drop` allows.
    PressureChain {
        /// Stage index.
        stage: u8,
    },
    /// `max_interstage_pressure_drop` is not in [0, 0.9].
    MaxInterstagePressureDrop,
    /// A pump stage's `density` is not finite and positive (kg/m3).
    PumpDensity {
        /// Stage index.
        stage: u8,
    },
    /// A pump stage's `efficiency` is not in (0, 1].
    PumpEfficiency {
        /// Stage index.
        stage: u8,
    },
    /// A compressor stage follows a pump stage: pumps may only end a train.
    PumpPosition {
        /// Stage index of the offending compressor.
        stage: u8,
    },
    /// A cooler's `coolant_cp` is not finite and positive (J/(kg K)).
    CoolantSpecificHeat {
        /// Index of the stage the cooler follows.
        stage: u8,
    },
    /// A `steady_state` tolerance is not finite and positive.
    SteadyStateTolerance,
    /// The train has no compressor stage.
    NoCompressorStage,
    /// Signal channel `channel`: `range_low` / `range_high` (engineering
    /// range) not finite or `range_high <= range_low`.
    SignalRange {
        /// Channel id.
        channel: u8,
    },
    /// Signal channel `channel`: the `signal` span (ADC counts, volts) is
    /// not finite or empty.
    SignalSpan {
        /// Channel id.
        channel: u8,
    },
    /// Signal channel `channel`: `plausible_low` / `plausible_high` not
    /// finite or not increasing.
    PlausibilityLimits {
        /// Channel id.
        channel: u8,
    },
    /// Signal channel `channel`: `noise_floor` or the instrument tolerance
    /// is not finite and non-negative.
    NoiseFloor {
        /// Channel id.
        channel: u8,
    },
    /// Signal channel `channel`: `max_rate` is not finite and positive.
    RateLimit {
        /// Channel id.
        channel: u8,
    },
    /// Signal channel `channel`: `filter_time_constant_s` is not finite and
    /// non-negative.
    FilterTimeConstant {
        /// Channel id.
        channel: u8,
    },
    /// Signal channel `channel`: the gauge unit's `atmosphere` is not finite
    /// and positive.
    AtmosphericPressure {
        /// Channel id.
        channel: u8,
    },
    /// A cross-check tolerance is not finite and non-negative.
    CrossCheckTolerance,
    /// Orifice `pipe_diameter` is not finite and positive (m).
    OrificePipeDiameter,
    /// Orifice `bore_diameter` is not finite, positive and below the pipe
    /// diameter (m).
    OrificeBoreDiameter,
    /// Flow `viscosity` is not finite and positive (Pa s).
    FlowViscosity,
    /// Flow `isentropic_exponent` is not finite and above 1.
    FlowIsentropicExponent,
    /// Flow `gas_constant` is not finite and positive (J/(kg K)).
    FlowGasConstant,
    /// Flow element `coefficient` is not finite and positive.
    FlowCoefficient,
    /// Low-flow `cutoff_dp` / `zero_tolerance` not finite and non-negative.
    LowFlowCutoff,
    /// The surge-line table has fewer than 2 points or more than its
    /// capacity.
    SurgeLineLength,
    /// `points[point]` of the surge-line table has a speed, flow, pressure
    /// ratio or control margin that is not finite and in range.
    SurgeLinePoint {
        /// Point index.
        point: u8,
    },
    /// `points[point]` of the surge-line table does not rise above the
    /// previous point in speed, reduced head and reduced flow.
    SurgeLineNotMonotonic {
        /// Point index.
        point: u8,
    },
    /// A surge-protection or recycle-control setting is out of range.
    SurgeSetting {
        /// The offending field, as named in its configuration struct.
        field: &'static str,
    },
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use ConfigError::*;
        match *self {
            MolarMass => f.write_str("gas.molar_mass must be finite and > 0 (kg/kmol)"),
            HeatCapacityRatio => f.write_str("gas.k must be finite and > 1"),
            HeatCapacityPolynomial => f.write_str(
                "gas.cp_polynomial must give finite cp > R over a non-empty validity range",
            ),
            Compressibility => f.write_str("gas.compressibility must be in (0, 2]"),
            CriticalPressure => f.write_str("gas.critical_pressure must be finite and > 0 Pa"),
            Composition { component } => write!(
                f,
                "gas.composition[{component}]: mole fractions must be in [0, 1], sum to 1 within 1e-4, no component twice"
            ),
            DesignSuctionPressure { stage } => write!(
                f,
                "stages[{stage}].design_suction_pressure must be finite and > 0 Pa"
            ),
            DesignDischargePressure { stage } => write!(
                f,
                "stages[{stage}].design_discharge_pressure must exceed its design suction pressure"
            ),
            PressureChain { stage } => write!(
                f,
                "stages[{stage}].design_suction_pressure does not chain with stage {} discharge",
                stage.saturating_sub(1)
            ),
            MaxInterstagePressureDrop => {
                f.write_str("max_interstage_pressure_drop must be in [0, 0.9]")
            }
            PumpDensity { stage } => {
                write!(
                    f,
                    "stages[{stage}] pump density must be finite and > 0 kg/m3"
                )
            }
            PumpEfficiency { stage } => {
                write!(f, "stages[{stage}] pump efficiency must be in (0, 1]")
            }
            PumpPosition { stage } => write!(
                f,
                "stages[{stage}] is a compressor after a pump: pumps may only end a train"
            ),
            CoolantSpecificHeat { stage } => write!(
                f,
                "stages[{stage}].cooler.coolant_cp must be finite and > 0 J/(kg K)"
            ),
            SteadyStateTolerance => f.write_str("steady_state tolerances must be finite and > 0"),
            NoCompressorStage => f.write_str("the train needs at least one compressor stage"),
            SignalRange { channel } => write!(
                f,
                "channel {channel}: range_low/range_high must be finite with range_high > range_low"
            ),
            SignalSpan { channel } => {
                write!(
                    f,
                    "channel {channel}: signal span must be finite and non-empty"
                )
            }
            PlausibilityLimits { channel } => write!(
                f,
                "channel {channel}: plausible_low/plausible_high must be finite and increasing"
            ),
            NoiseFloor { channel } => write!(
                f,
                "channel {channel}: noise_floor and instrument tolerance must be finite and >= 0"
            ),
            RateLimit { channel } => {
                write!(f, "channel {channel}: max_rate must be finite and > 0")
            }
            FilterTimeConstant { channel } => write!(
                f,
                "channel {channel}: filter_time_constant_s must be finite and >= 0"
            ),
            AtmosphericPressure { channel } => write!(
                f,
                "channel {channel}: gauge atmosphere must be finite and > 0 Pa"
            ),
            CrossCheckTolerance => f.write_str("cross-check tolerances must be finite and >= 0"),
            OrificePipeDiameter => f.write_str("orifice pipe_diameter must be finite and > 0 m"),
            OrificeBoreDiameter => {
                f.write_str("orifice bore_diameter must be finite, > 0 and below pipe_diameter (m)")
            }
            FlowViscosity => f.write_str("flow viscosity must be finite and > 0 Pa s"),
            FlowIsentropicExponent => {
                f.write_str("flow isentropic_exponent must be finite and > 1")
            }
            FlowGasConstant => f.write_str("flow gas_constant must be finite and > 0 J/(kg K)"),
            FlowCoefficient => f.write_str("flow element coefficient must be finite and > 0"),
            LowFlowCutoff => {
                f.write_str("low-flow cutoff_dp and zero_tolerance must be finite and >= 0")
            }
            SurgeLineLength => {
                f.write_str("the surge line needs at least 2 points and at most its capacity")
            }
            SurgeLinePoint { point } => write!(
                f,
                "surge line points[{point}]: speed, flow and control margin must be finite and in range, ratio > 1"
            ),
            SurgeLineNotMonotonic { point } => write!(
                f,
                "surge line points[{point}] must rise above points[{}] in speed, reduced head and reduced flow",
                point.saturating_sub(1)
            ),
            SurgeSetting { field } => write!(f, "surge/recycle setting {field} is out of range"),
        }
    }
}

impl core::error::Error for ConfigError {}
