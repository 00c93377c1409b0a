//! Where the power goes: a loss ledger in watts that walks from the
//! isothermal power of the train's duty to the measured power, one named
//! cause at a time.
//!
//! Sources: the staging relations of Çengel & Boles, *Thermodynamics: An
//! Engineering Approach*, ch. 7, "Multistage compression with
//! intercooling" (isothermal work as the limit of many intercooled stages;
//! ideal stages with perfect intercooling least when the stage ratios are
//! equal; isentropic work w = h(p2, s1) − h1); the reversible isothermal work
//! as the Gibbs energy rise Δh − T·Δs = ∫v dp (any thermodynamics text);
//! the recycle loss m_recycle · w_actual ([`crate::control::recycle_power()`]).
//! Every work is computed through the configured [`GasModel`], so the
//! ledger is real-gas when the gas model is.
//!
//! # Order of attribution
//!
//! The ledger is a chain of reference trains, each one cause closer to the
//! measured train; a line is the power difference between two neighbouring
//! references, evaluated with every earlier cause already present (so an
//! interaction between two causes is charged to the later one). The order
//! runs from what the machine's layout fixes to what operation and upkeep
//! change, the order in which an engineer explains a train's power:
//!
//! | step | reference train (all at the forward mass flow) | line = this − previous |
//! |---|---|---|
//! | 0 | reversible isothermal compression at the first suction temperature from the first suction to the last compressor discharge pressure | `isothermal_power` (the start) |
//! | 1 | the same number of isentropic stages, equal ratios, no pressure drops, every suction at the first suction temperature | `stage_count` |
//! | 2 | as 1, but every stage makes the ratio it must make up for the measured interstage pressure drops (equal stage ratios, the measured drop fractions between them) | `pressure_drops` |
//! | 3 | isentropic stages at the measured suction and discharge pressures, every suction at the first suction temperature | `pressure_split` |
//! | 4 | (only with [`CoolingReference::CoolantInletPlusApproach`]) as 3, each later suction at its cooler's coolant inlet plus the design approach | `coolant_temperature` |
//! | 5 | as 3 at the measured suction temperatures: the measured stages' isentropic heads | `intercooling[i]` for stage i's suction |
//! | 6 | the measured stages' actual work (h2 − h1) | `stage_inefficiency[i]` |
//! | 7 | the gas the recycle valve sends round the loop, m_recycle · Σ w_actual over the loop's stages | `recycle` |
//! | 8 | pump stages' shaft power (outside the gas ledger) | `pumps` |
//! | – | measured total power (compressor gas power + pump power) | `remainder` = measured − all of the above |
//!
//! Why this order: the stage count and the pressure drops are set by the
//! machine and its piping; the split of the ratio between the stages is
//! then the next thing that can be re-balanced (step 3 isolates it: its line
//! is zero when the measured stage ratios are equal, whatever the drops);
//! intercooling and the stages' own losses are what upkeep changes (clean
//! this cooler, repair that stage) and are charged last, each per stage, so
//! they add up without a cross term. Stage inefficiency is measured against
//! the **isentropic** head of the measured stage (not the polytropic one):
//! then steps 5 and 6 telescope to the measured work exactly.
//!
//! Because the chain telescopes, the remainder holds only what the chain
//! cannot attribute: stages whose measured flows differ from the forward
//! flow plus the recycle (side streams, meters that disagree), a line that
//! could not be computed (its share falls into the remainder, which is then
//! bad), for a model whose isentropic head of a stage depends on the
//! measured discharge temperature (the ideal gas with cp(T) takes the
//! path-mean cp) the first stage's difference between its own isentropic
//! head and the reference's at the same suction state, and rounding. It is
//! reported, never hidden.
//!
//! Each line's quality is the worst of exactly what it used: the
//! measurements, the forward flow and the gas model's validity of every
//! state in the two references it compares.
//!
//! # Worked example (an invented scenario)
//!
//! Air as an ideal gas (k = 1.4, R = 287 J/(kg K), Z = 1), 5 kg/s from
//! 1.00 bar a, 300 K to 27.0 bar a in three stages; measured: stage 1
//! 1.00 → 3.20 bar a, stage 2 3.10 → 9.00 bar a at 310 K suction, stage 3
//! 8.80 → 27.0 bar a at 315 K suction, isentropic efficiencies 0.85, 0.82
//! and 0.80; no recycle, no pumps. The ledger (from
//! `tests/ledger.rs::worked_example_in_the_module_docs`, rounded to 0.1 kW):
//!
//! | line | kW |
//! |---|---:|
//! | isothermal power (start) | 1,418.9 |
//! | stage count (3 ideal stages vs isothermal) | 247.9 |
//! | pressure drops (3.1 % and 2.2 %) | 32.0 |
//! | pressure split | 0.4 |
//! | intercooling before stage 2 (310 K) | 17.9 |
//! | intercooling before stage 3 (315 K) | 28.4 |
//! | stage 1 inefficiency | 104.8 |
//! | stage 2 inefficiency | 121.7 |
//! | stage 3 inefficiency | 149.3 |
//! | remainder | 0.0 |
//! | **measured** | **2,121.4** |
//!
//! Read: 67 % of the measured power is the duty itself; three stages cost
//! 248 kW over isothermal, the 5.3 % of pressure lost between the stages
//! 32 kW, the uneven split under 1 kW, the two intercoolers 46 kW together,
//! and the stages' own losses 376 kW, the largest share.
//!
//! # Use
//!
//! A separate call after [`crate::train::Train::update`], with the same
//! scan:
//!
//! ```
//! use polytrope::gas::{IdealGas, AIR};
//! use polytrope::ledger::{evaluate_ledger_into, Ledger, LedgerConfig};
//! use polytrope::scan::{Scan, StageScan};
//! use polytrope::steady::SteadyStateConfig;
//! use polytrope::train::{StageConfig, StageKind, Train, TrainConfig};
//! use polytrope::units::PressureAbs;
//! use polytrope::Measured;
//!
//! let stage = |p1: f64, p2: f64| StageConfig {
//!     kind: StageKind::Compressor,
//!     design_suction_pressure: PressureAbs::from_bar(p1),
//!     design_discharge_pressure: PressureAbs::from_bar(p2),
//!     cooler: None,
//! };
//! let config = TrainConfig {
//!     gas: IdealGas::from_spec(&AIR, false, 1.0)?,
//!     stages: [stage(1.0, 3.0), stage(2.9, 9.0)],
//!     max_interstage_pressure_drop: 0.1,
//!     steady_state: SteadyStateConfig::default(),
//! };
//! let mut train = Train::<f64, _, 2, 8>::new(config)?;
//! let mut scan = Scan {
//!     stages: [
//!         StageScan::from_si(1.0e5, 300.0, 3.0e5, 430.0),
//!         StageScan::from_si(2.9e5, 305.0, 9.0e5, 440.0),
//!     ],
//! };
//! scan.stages[0].mass_flow = Some(Measured::good(2.0)); // kg/s
//! let ledger_config = LedgerConfig::default(); // first-suction reference, no recycle
//! ledger_config.validate(2)?;
//! train.update(&scan);
//! let mut ledger = Ledger::bad();
//! evaluate_ledger_into(
//!     train.config(),
//!     &ledger_config,
//!     &scan,
//!     train.snapshot(),
//!     Measured::bad(), // no recycle flow
//!     &mut ledger,
//! );
//! let total = ledger.measured_total.value;
//! assert!((ledger.sum_of_lines() - total).abs() < 1e-9 * total);
//! // Stage 2's suction is 5 K warmer than stage 1's: its intercooler costs.
//! assert!(ledger.intercooling[1].value > 0.0);
//! # Ok::<(), polytrope::ConfigError>(())
//! ```
//!
//! The cost per scan is a few isentropic evaluations per stage; the ideal
//! gas evaluates one stage for all the equal ones ([`GasModel::ratio_only`]).
//! Measured on the device: see the README.

use crate::control::recycle_power;
use crate::error::{check_range, ConfigError, Problem};
use crate::fields::{Derivation, FieldSpec, FieldValue, QuantityKind, ResultFields};
use crate::gas::GasModel;
use crate::plausibility::Limits;
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::scan::{compressibility, mass_flow_kg_s, temperature_k, Scan, StageScan};
use crate::stage::CompressorResult;
use crate::staging::Sum;
use crate::train::{Snapshot, TrainConfig};
use crate::units::{Kelvin, PressureAbs};

/// What a later stage's suction temperature is compared with.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CoolingReference<T> {
    /// The first stage's suction temperature: perfect intercooling.
    FirstSuction,
    /// The coolant inlet temperature of the cooler before the stage plus a
    /// design approach (K, in [0, 100]): what a clean cooler can reach. The
    /// difference between that and the first suction temperature is the
    /// `coolant_temperature` line.
    CoolantInletPlusApproach {
        /// Design approach (gas outlet − coolant inlet), K.
        design_approach: T,
    },
}

/// A recycle loop around compressor stages `first_stage..=last_stage`
/// (zero-based): the stages' measured flows include the recycled gas.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RecycleLoop {
    /// First stage inside the loop.
    pub first_stage: u8,
    /// Last stage inside the loop (the valve takes gas from its discharge).
    pub last_stage: u8,
}

/// Configuration of the ledger; check it once with
/// [`LedgerConfig::validate`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LedgerConfig<T> {
    /// What a later stage's suction temperature is compared with.
    pub cooling_reference: CoolingReference<T>,
    /// The recycle loop, if the train has one and its flow is known.
    pub recycle: Option<RecycleLoop>,
}

impl<T: Real> Default for LedgerConfig<T> {
    fn default() -> Self {
        LedgerConfig {
            cooling_reference: CoolingReference::FirstSuction,
            recycle: None,
        }
    }
}

impl<T: Real> LedgerConfig<T> {
    /// Checks the configuration against a train with `compressor_stages`
    /// compressor stages (`TrainTotals::compressor_stages`).
    pub fn validate(&self, compressor_stages: u8) -> Result<(), ConfigError> {
        if let CoolingReference::CoolantInletPlusApproach { design_approach } =
            self.cooling_reference
        {
            check_range("ledger.design_approach", design_approach, 0.0, 100.0)?;
        }
        if let Some(r) = self.recycle {
            let last = f64::from(compressor_stages.saturating_sub(1));
            if r.last_stage >= compressor_stages {
                return Err(ConfigError::out_of_range(
                    "ledger.recycle.last_stage",
                    0.0,
                    last,
                ));
            }
            if r.first_stage > r.last_stage {
                return Err(ConfigError::new(
                    "ledger.recycle.first_stage",
                    Problem::Inconsistent {
                        with: "ledger.recycle.last_stage",
                    },
                ));
            }
        }
        Ok(())
    }
}

/// One scan's loss ledger; every line in W with its quality.
///
/// The sum identity, to rounding: `isothermal_power`, `stage_count`,
/// `pressure_drops`, `pressure_split`, `coolant_temperature`, every
/// `intercooling` and `stage_inefficiency` entry, `recycle`, `pumps` and
/// `remainder` add up to `measured_total` ([`Ledger::sum_of_lines`]).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Ledger<T, const N: usize> {
    /// Number of compressor stages (the per-stage lines that exist).
    pub compressor_stages: u8,
    /// Forward (delivered) mass flow used for every reference: the first
    /// stage's flow less the recycle flow if the loop includes it, kg/s.
    pub forward_mass_flow: Measured<T>,
    /// Reversible isothermal power for the overall ratio at the first
    /// suction temperature, W (the start).
    pub isothermal_power: Measured<T>,
    /// Equal-ratio isentropic stages with perfect intercooling against
    /// isothermal: the price of the stage count, W.
    pub stage_count: Measured<T>,
    /// The extra ratio the stages make up for interstage pressure drops, W.
    pub pressure_drops: Measured<T>,
    /// The measured stage ratios against equal ones, W.
    pub pressure_split: Measured<T>,
    /// Coolant inlet plus design approach above the first suction
    /// temperature (zero with [`CoolingReference::FirstSuction`]), W.
    pub coolant_temperature: Measured<T>,
    /// Per stage: its suction warmer than the reference (the intercooler
    /// before it, or its absence), W; zero for the first stage and pumps.
    pub intercooling: [Measured<T>; N],
    /// Per stage: actual work above the stage's isentropic head, W; zero for
    /// pumps.
    pub stage_inefficiency: [Measured<T>; N],
    /// Power spent on gas the recycle valve sends back, W (zero without a
    /// configured loop).
    pub recycle: Measured<T>,
    /// Pump stages' shaft power, outside the gas ledger, W.
    pub pumps: Measured<T>,
    /// What the chain does not attribute (flow differences between stages,
    /// lines that could not be computed, rounding), W.
    pub remainder: Measured<T>,
    /// The measured total power, W: the train totals' `total_power`
    /// (compressor gas power m·Δh, before mechanical losses, plus pump shaft
    /// power from the configured pump efficiency).
    pub measured_total: Measured<T>,
}

impl<T: Real, const N: usize> Ledger<T, N> {
    /// Every line bad.
    pub fn bad() -> Self {
        let b = Measured::bad();
        Ledger {
            compressor_stages: 0,
            forward_mass_flow: b,
            isothermal_power: b,
            stage_count: b,
            pressure_drops: b,
            pressure_split: b,
            coolant_temperature: b,
            intercooling: [b; N],
            stage_inefficiency: [b; N],
            recycle: b,
            pumps: b,
            remainder: b,
            measured_total: b,
        }
    }

    /// Calls `visit` once per line, in the order of attribution: the start
    /// (`Cause::Isothermal`), the causes, the remainder and last the
    /// measured total. Per-stage lines carry the zero-based stage index and
    /// are visited only where the cause can exist (intercooling from the
    /// second compressor stage, inefficiency for every compressor stage).
    pub fn visit_lines(&self, visit: &mut dyn FnMut(Cause, Option<u8>, Measured<T>)) {
        let nc = usize::from(self.compressor_stages);
        visit(Cause::Isothermal, None, self.isothermal_power);
        visit(Cause::StageCount, None, self.stage_count);
        visit(Cause::PressureDrops, None, self.pressure_drops);
        visit(Cause::PressureSplit, None, self.pressure_split);
        visit(Cause::CoolantTemperature, None, self.coolant_temperature);
        for (i, m) in self.intercooling.iter().enumerate().take(nc).skip(1) {
            visit(Cause::Intercooling, u8::try_from(i).ok(), *m);
        }
        for (i, m) in self.stage_inefficiency.iter().enumerate().take(nc) {
            visit(Cause::StageInefficiency, u8::try_from(i).ok(), *m);
        }
        visit(Cause::Recycle, None, self.recycle);
        visit(Cause::Pumps, None, self.pumps);
        visit(Cause::Remainder, None, self.remainder);
        visit(Cause::MeasuredTotal, None, self.measured_total);
    }

    /// Sum of every line from the start through the remainder, W (equals
    /// `measured_total` to rounding when that is usable).
    pub fn sum_of_lines(&self) -> T {
        let mut s = self.isothermal_power.value
            + self.stage_count.value
            + self.pressure_drops.value
            + self.pressure_split.value
            + self.coolant_temperature.value;
        for m in self
            .intercooling
            .iter()
            .chain(self.stage_inefficiency.iter())
        {
            s += m.value;
        }
        s + self.recycle.value + self.pumps.value + self.remainder.value
    }
}

/// One compressor stage's ledger lines ([`Ledger::stage`]), W.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LedgerStage<T> {
    /// The stage's suction warmer than the reference (zero for the first).
    pub intercooling: Measured<T>,
    /// The stage's actual work above its isentropic head.
    pub stage_inefficiency: Measured<T>,
}

impl<T: Real, const N: usize> Ledger<T, N> {
    /// Compressor stage `i`'s lines; `None` for pumps and beyond.
    pub fn stage(&self, i: usize) -> Option<LedgerStage<T>> {
        if i >= usize::from(self.compressor_stages) {
            return None;
        }
        Some(LedgerStage {
            intercooling: *self.intercooling.get(i)?,
            stage_inefficiency: *self.stage_inefficiency.get(i)?,
        })
    }
}

/// A power line of the field lists.
const fn power_field(
    name: &'static str,
    key: &'static str,
    label: &'static str,
    derivation: Derivation,
    meaning: &'static str,
) -> FieldSpec {
    FieldSpec {
        name,
        key,
        label,
        unit: "W",
        kind: QuantityKind::Power,
        derivation,
        meaning,
    }
}

/// The train-wide lines of [`Ledger`] in [`crate::fields`] form (the
/// per-stage lines are [`LedgerStage`]'s), in the order of attribution.
impl<T: Real, const N: usize> ResultFields<T> for Ledger<T, N> {
    const FIELDS: &'static [FieldSpec] = &[
        FieldSpec {
            name: "forward_mass_flow",
            key: "ledger_forward_mass_flow_kg_per_s",
            label: "Forward mass flow",
            unit: "kg/s",
            kind: QuantityKind::MassFlow,
            derivation: Derivation::Computed,
            meaning: "Delivered mass flow every reference uses: the first stage's flow less the recycle flow if the loop includes it.",
        },
        power_field(
            "isothermal_power",
            "ledger_isothermal_power_W",
            "Isothermal power (the duty)",
            Derivation::Computed,
            "Reversible isothermal power for the overall ratio at the first suction temperature (the Gibbs energy rise); the ledger's start.",
        ),
        power_field(
            "stage_count",
            "ledger_stage_count_W",
            "Stage count",
            Derivation::Difference,
            "Equal-ratio isentropic stages with perfect intercooling against isothermal.",
        ),
        power_field(
            "pressure_drops",
            "ledger_pressure_drops_W",
            "Interstage pressure drops",
            Derivation::Difference,
            "The extra ratio the stages make up for the measured interstage pressure drops.",
        ),
        power_field(
            "pressure_split",
            "ledger_pressure_split_W",
            "Unequal pressure split",
            Derivation::Difference,
            "The measured stage ratios against equal ones.",
        ),
        power_field(
            "coolant_temperature",
            "ledger_coolant_temperature_W",
            "Coolant temperature + design approach",
            Derivation::Difference,
            "Coolant inlet plus design approach above the first suction temperature (zero with the first-suction reference).",
        ),
        power_field(
            "recycle",
            "ledger_recycle_W",
            "Recycle",
            Derivation::Computed,
            "Power spent on gas the recycle valve sends back (zero without a configured loop).",
        ),
        power_field(
            "pumps",
            "ledger_pumps_W",
            "Pumps (outside the gas ledger)",
            Derivation::PassThrough,
            "Pump stages' shaft power.",
        ),
        power_field(
            "remainder",
            "ledger_remainder_W",
            "Remainder (not attributed)",
            Derivation::Difference,
            "Measured power minus every line above: flow differences between stages, lines that could not be computed, rounding.",
        ),
        power_field(
            "measured_total",
            "ledger_measured_total_W",
            "Measured total power",
            Derivation::PassThrough,
            "The train's total power (`total_power_W`): compressor gas power (m·Δh, before mechanical losses) plus pump shaft power; the ledger's end.",
        ),
    ];

    fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>)) {
        let values = [
            self.forward_mass_flow,
            self.isothermal_power,
            self.stage_count,
            self.pressure_drops,
            self.pressure_split,
            self.coolant_temperature,
            self.recycle,
            self.pumps,
            self.remainder,
            self.measured_total,
        ];
        for (spec, m) in Self::FIELDS.iter().zip(values) {
            visit(spec, FieldValue::Real(m));
        }
    }
}

impl<T: Real> ResultFields<T> for LedgerStage<T> {
    const FIELDS: &'static [FieldSpec] = &[
        power_field(
            "intercooling",
            "ledger_intercooling_W",
            "Intercooling (suction above reference)",
            Derivation::Difference,
            "The stage's suction warmer than the reference: the intercooler before it, or its absence (zero for the first stage).",
        ),
        power_field(
            "stage_inefficiency",
            "ledger_stage_inefficiency_W",
            "Stage inefficiency (actual vs isentropic)",
            Derivation::Difference,
            "The stage's actual work above its isentropic head, times the forward flow.",
        ),
    ];

    fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>)) {
        for (spec, m) in Self::FIELDS
            .iter()
            .zip([self.intercooling, self.stage_inefficiency])
        {
            visit(spec, FieldValue::Real(m));
        }
    }
}

/// The name of a ledger line ([`Ledger::visit_lines`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Cause {
    /// The start: reversible isothermal power.
    Isothermal,
    /// Equal-ratio ideal stages against isothermal.
    StageCount,
    /// Interstage pressure drops.
    PressureDrops,
    /// Unequal stage ratios.
    PressureSplit,
    /// Coolant inlet plus design approach above the first suction.
    CoolantTemperature,
    /// A stage's suction warmer than the reference.
    Intercooling,
    /// A stage's actual work above its isentropic head.
    StageInefficiency,
    /// Gas sent round the recycle loop.
    Recycle,
    /// Pump stages (outside the gas ledger).
    Pumps,
    /// Not attributed.
    Remainder,
    /// The measured total power (the end).
    MeasuredTotal,
}

impl Cause {
    /// Stable kebab-case name (keys, CSV columns, logs).
    pub const fn as_str(self) -> &'static str {
        match self {
            Cause::Isothermal => "isothermal",
            Cause::StageCount => "stage-count",
            Cause::PressureDrops => "pressure-drops",
            Cause::PressureSplit => "pressure-split",
            Cause::CoolantTemperature => "coolant-temperature",
            Cause::Intercooling => "intercooling",
            Cause::StageInefficiency => "stage-inefficiency",
            Cause::Recycle => "recycle",
            Cause::Pumps => "pumps",
            Cause::Remainder => "remainder",
            Cause::MeasuredTotal => "measured-total",
        }
    }

    /// Human label for tables and plots.
    pub const fn label(self) -> &'static str {
        match self {
            Cause::Isothermal => "Isothermal power (the duty)",
            Cause::StageCount => "Stage count (ideal stages vs isothermal)",
            Cause::PressureDrops => "Interstage pressure drops",
            Cause::PressureSplit => "Unequal pressure split",
            Cause::CoolantTemperature => "Coolant temperature + design approach",
            Cause::Intercooling => "Intercooling, suction above reference",
            Cause::StageInefficiency => "Stage inefficiency (actual vs isentropic)",
            Cause::Recycle => "Recycle",
            Cause::Pumps => "Pumps (outside the gas ledger)",
            Cause::Remainder => "Remainder (not attributed)",
            Cause::MeasuredTotal => "Measured total power",
        }
    }
}

/// A specific work with the quality of everything it used.
#[derive(Clone, Copy)]
struct Work<T> {
    value: T,
    quality: Quality,
}

impl<T: Real> Work<T> {
    fn of(m: Measured<T>) -> Self {
        Work {
            value: m.value,
            quality: m.quality,
        }
    }
    fn zero() -> Self {
        Work {
            value: T::ZERO,
            quality: Quality::Good,
        }
    }
    fn add(&mut self, value: T, quality: Quality) {
        self.value += value;
        self.quality = self.quality.worst(quality);
    }
}

/// Isentropic head from (p1, t1) to p2 with the quality of its states.
#[inline]
fn isentropic<T: Real, G: GasModel<T>>(
    gas: &G,
    p1: T,
    t1: T,
    p2: T,
    ln_ratio: T,
    z: Option<T>,
) -> (T, Quality) {
    let cs = gas.compression(p1, t1, p2, ln_ratio, None, z);
    (cs.isentropic_enthalpy_rise, cs.isentropic_validity.quality)
}

/// Line `m · (to − from)` with the worst quality of both and the flow,
/// not yet checked: [`close_ledger`] makes it a [`Measured::derived`].
#[inline]
fn line<T: Real>(m: Measured<T>, from: Work<T>, to: Work<T>) -> Measured<T> {
    Measured::new(
        m.value * (to.value - from.value),
        m.quality.worst(from.quality).worst(to.quality),
    )
}

/// Builds the ledger for one scan after [`crate::train::Train::update`]:
/// `config` is the train's configuration (`train.config()`), `snapshot` the
/// snapshot that update returned for this same `scan`, and
/// `recycle_mass_flow` the recycle flow in kg/s (a meter, or
/// [`crate::control::valve_mass_flow`]); it is ignored without a configured
/// loop. `ledger` should have passed [`LedgerConfig::validate`].
///
/// Never panics, never allocates; every value is finite with its quality.
pub fn evaluate_ledger_into<T: Real, G: GasModel<T>, const N: usize>(
    config: &TrainConfig<T, G, N>,
    ledger: &LedgerConfig<T>,
    scan: &Scan<T, N>,
    snapshot: &Snapshot<T, N>,
    recycle_mass_flow: Measured<T>,
    out: &mut Ledger<T, N>,
) {
    let totals = &snapshot.totals;
    out.compressor_stages = totals.compressor_stages;
    let nc = usize::from(totals.compressor_stages);
    out.measured_total = totals.total_power;

    // Per-stage lines where a cause cannot exist: zero (the first stage's
    // intercooling, pump stages). The chain writes every other line, or
    // they are set bad below if it cannot run.
    let zero = Measured::good(T::ZERO);
    if let Some(ic) = out.intercooling.first_mut() {
        *ic = zero;
    }
    for ic in out.intercooling.iter_mut().skip(nc) {
        *ic = zero;
    }
    for ie in out.stage_inefficiency.iter_mut().skip(nc) {
        *ie = zero;
    }
    // Pumps only end a train: the update's pump-power sum, read.
    out.pumps = if nc < N { totals.pump_power } else { zero };

    // Forward flow and recycle.
    let first = snapshot.stages.first().and_then(|s| s.compressor());
    let m0 = first.map_or(Measured::bad(), |c| c.mass_flow);
    let (m_rec, in_loop_first) = match ledger.recycle {
        Some(r) => (mass_flow_kg_s(recycle_mass_flow), r.first_stage == 0),
        None => (Measured::good(T::ZERO), false),
    };
    let m_fwd = if in_loop_first {
        let f = m0.value - m_rec.value;
        let q = m0.quality.worst(m_rec.quality);
        if f < T::ZERO {
            Measured::derived(T::ZERO, q.worst(Quality::Uncertain))
        } else {
            Measured::derived(f, q)
        }
    } else {
        m0
    };
    out.forward_mass_flow = m_fwd;
    out.recycle = match ledger.recycle {
        None => Measured::good(T::ZERO),
        Some(r) => {
            let mut w = Sum::new();
            for st in snapshot
                .stages
                .iter()
                .take(usize::from(r.last_stage) + 1)
                .skip(usize::from(r.first_stage))
            {
                if let Some(c) = st.compressor() {
                    w.add(c.actual_work);
                }
            }
            recycle_power(m_rec, w.get())
        }
    };

    if !evaluate_chain(&config.gas, ledger, scan, snapshot, nc, m_fwd, out) {
        // The chain could not run: every line it prices is bad.
        let bad = Measured::bad();
        for (i, (ic, ie)) in out
            .intercooling
            .iter_mut()
            .zip(out.stage_inefficiency.iter_mut())
            .enumerate()
            .take(nc)
        {
            if i > 0 {
                *ic = bad;
            }
            *ie = bad;
        }
        out.isothermal_power = bad;
        out.stage_count = bad;
        out.pressure_drops = bad;
        out.pressure_split = bad;
        out.coolant_temperature = bad;
    }

    close_ledger(out);
}

/// Sum of the lines in the order of attribution with the worst of their
/// qualities and the measured total's.
#[inline]
fn sum_lines<T: Real, const N: usize>(out: &Ledger<T, N>) -> (T, Quality) {
    let mut q = out.measured_total.quality;
    let mut attributed = T::ZERO;
    for m in [
        out.isothermal_power,
        out.stage_count,
        out.pressure_drops,
        out.pressure_split,
        out.coolant_temperature,
        out.recycle,
        out.pumps,
    ] {
        attributed += m.value;
        q = q.worst(m.quality);
    }
    // The first stage's intercooling line is always a good +0 (see
    // `close_ledger`): left out.
    for m in out.intercooling.iter().skip(1) {
        attributed += m.value;
        q = q.worst(m.quality);
    }
    for m in out.stage_inefficiency.iter() {
        attributed += m.value;
        q = q.worst(m.quality);
    }
    (attributed, q)
}

/// Makes every line the chain wrote a [`Measured::derived`] and closes the
/// ledger on the measured total with the remainder (the lines added in the
/// order of attribution).
///
/// The chain's lines arrive unchecked. A finite sum of finite and
/// non-finite addends does not exist (an infinity stays infinite or becomes
/// NaN, a NaN stays NaN), so when the sum is finite and every quality
/// usable, every line already is what `Measured::derived` would return, and
/// the sum is the one of the checked lines: one test instead of one per
/// line. Otherwise every line is checked and the sum taken again.
#[inline]
fn close_ledger<T: Real, const N: usize>(out: &mut Ledger<T, N>) {
    // The usable qualities are Good (0) and Uncertain (1): where every
    // quality is one of them, their bitwise or is their worst (one `or`
    // per line instead of a comparison).
    const _: () = assert!(Quality::Good as u8 == 0 && Quality::Uncertain as u8 == 1);
    let mut or = out.measured_total.quality as u8;
    let mut attributed = T::ZERO;
    for m in [
        out.isothermal_power,
        out.stage_count,
        out.pressure_drops,
        out.pressure_split,
        out.coolant_temperature,
        out.recycle,
        out.pumps,
    ] {
        attributed += m.value;
        or |= m.quality as u8;
    }
    // The first stage's intercooling line is a good +0 (written so, and
    // `Measured::derived` keeps it): its quality changes nothing, and
    // neither does adding it, because no partial sum is -0 (the first is
    // +0 + x, and x + y is -0 only for two -0 addends), and s + (+0) is s
    // for every other s, NaN and the infinities included. Left out.
    for m in out.intercooling.iter().skip(1) {
        attributed += m.value;
        or |= m.quality as u8;
    }
    for m in out.stage_inefficiency.iter() {
        attributed += m.value;
        or |= m.quality as u8;
    }
    let q = if or <= Quality::Uncertain as u8 && T::is_finite(attributed) {
        if or == 0 {
            Quality::Good
        } else {
            Quality::Uncertain
        }
    } else {
        for m in [
            &mut out.isothermal_power,
            &mut out.stage_count,
            &mut out.pressure_drops,
            &mut out.pressure_split,
            &mut out.coolant_temperature,
        ] {
            *m = Measured::derived(m.value, m.quality);
        }
        for m in out
            .intercooling
            .iter_mut()
            .chain(out.stage_inefficiency.iter_mut())
        {
            *m = Measured::derived(m.value, m.quality);
        }
        let q;
        (attributed, q) = sum_lines(out);
        q
    };
    out.remainder = Measured::derived(out.measured_total.value - attributed, q);
}

/// Steps 0 to 6 of the chain (see the module docs); `false` (nothing
/// written) if the chain cannot run.
#[inline(never)]
fn evaluate_chain<T: Real, G: GasModel<T>, const N: usize>(
    gas: &G,
    ledger: &LedgerConfig<T>,
    scan: &Scan<T, N>,
    snapshot: &Snapshot<T, N>,
    nc: usize,
    m_fwd: Measured<T>,
    out: &mut Ledger<T, N>,
) -> bool {
    if nc == 0 || !m_fwd.quality.is_usable() {
        return false;
    }
    // The train's ends through the sensor boundary (only the three values
    // the references use). The default limits are finite: the boundary's
    // form for validated limits, without the separate finiteness test, is
    // `pressure_pa` / `temperature_k` to the bit.
    let (Some(s0), Some(sl)) = (scan.stages.first(), scan.stages.get(nc - 1)) else {
        return false;
    };
    let limits = Limits::<T>::default();
    let (p_s, t_s, p_d) = (
        limits.pressure_valid(s0.suction_pressure.map(PressureAbs::pa)),
        limits.temperature_valid(s0.suction_temperature.map(Kelvin::kelvin)),
        limits.pressure_valid(sl.discharge_pressure.map(PressureAbs::pa)),
    );
    let q_base = p_s.quality.worst(t_s.quality).worst(p_d.quality);
    let overall = p_d.value / p_s.value;
    // In (1, ∞): above one and finite (NaN fails both comparisons).
    if q_base == Quality::Bad || !(overall > T::ONE && overall < T::of(f64::INFINITY)) {
        return false;
    }

    // Step 0: reversible isothermal, the train totals' row (one definition:
    // `GasModel::isothermal_work` in the update, read here, not recomputed).
    let totals = &snapshot.totals;
    let iso = Work {
        value: totals.isothermal_work.value,
        quality: totals.isothermal_work.quality,
    };
    out.isothermal_power = Measured::new(m_fwd.value * iso.value, m_fwd.quality.worst(iso.quality));

    // Steps 3 to 6, stage by stage; the measured ratios on the way.
    // The stage loop runs exactly `nc` times (`nc` <= N: the last
    // compressor stage's scan exists).
    let n = T::from_u32(u32::try_from(nc).unwrap_or(0));
    let scan_stages = scan.stages.get(..nc).unwrap_or_default();
    // Without any supplied Z (the usual scan) the loop leaves Z out.
    // Tested over every stage of the scan (a fixed-length array: no loop
    // bound): a pump's Z only selects the loop that reads Z, which finds
    // none on the compressor stages (the same result).
    // With the coolant reference, the intercooling lines are priced by
    // [`coolant_reference`] alone.
    let first_suction = matches!(ledger.cooling_reference, CoolingReference::FirstSuction);
    let priced = if scan.stages.iter().any(|s| s.compressibility.is_some()) {
        price_stages::<T, G, N, true>(gas, scan_stages, snapshot, t_s, m_fwd, first_suction, out)
    } else {
        price_stages::<T, G, N, false>(gas, scan_stages, snapshot, t_s, m_fwd, first_suction, out)
    };
    let Priced {
        ratio_product,
        q_pressures,
        uniform,
        mut ref_c,
        c_first,
    } = priced;
    let q_chain = q_base.worst(q_pressures);
    // Step 4 (the coolant reference, pricing the intercooling lines).
    let ref_d = match ledger.cooling_reference {
        CoolingReference::FirstSuction => None,
        CoolingReference::CoolantInletPlusApproach { design_approach } => {
            let mut d = coolant_reference(
                gas,
                scan,
                snapshot,
                nc,
                t_s,
                design_approach,
                m_fwd,
                c_first,
                out,
            );
            d.quality = d.quality.worst(q_chain);
            Some(d)
        }
    };
    ref_c.quality = ref_c.quality.worst(q_chain);

    // Step 1: equal ratios, no drops. Step 2: equal ratios, measured drops.
    let ln_b = T::ln(ratio_product) / n;
    let (ref_a, ref_b) = if uniform {
        // By the `ratio_only` contract the pressures enter only through
        // the ratio passed and the higher pressure (validity): one stage
        // stands for all. Without supplied Z the update's ideal staged work
        // is that reference (same model, Z, k and suction state): read, not
        // recomputed; its states' validity is the isothermal row's (same
        // highest pressure, same temperature).
        let staged = totals.ideal_staged_isentropic_work;
        let (wb, qb) = isentropic(gas, p_s.value, t_s.value, p_d.value, ln_b, None);
        (
            Work {
                value: staged.value,
                quality: staged.quality.worst(iso.quality).worst(q_base),
            },
            Work {
                value: n * wb,
                quality: qb.worst(q_chain),
            },
        )
    } else {
        references_stage_by_stage(
            gas, scan, snapshot, nc, p_s.value, t_s.value, overall, ln_b, n, q_base, q_chain,
        )
    };
    out.stage_count = line(m_fwd, iso, ref_a);
    out.pressure_drops = line(m_fwd, ref_a, ref_b);
    out.pressure_split = line(m_fwd, ref_b, ref_c);
    out.coolant_temperature = match ref_d {
        None => Measured::good(T::ZERO),
        Some(ref_d) => line(m_fwd, ref_c, ref_d),
    };
    true
}

/// What [`price_stages`] gathers for the whole-train references.
struct Priced<T> {
    /// Product of the measured stage pressure ratios.
    ratio_product: T,
    /// Worst quality of the measured stage pressure ratios.
    q_pressures: Quality,
    /// The model is [`GasModel::ratio_only`] and no stage has a usable
    /// supplied Z: one stage stands for all.
    uniform: bool,
    /// Step 3: the stages' isentropic heads from the first suction
    /// temperature (without the chain's pressure quality).
    ref_c: Work<T>,
    /// The first stage's share of `ref_c`.
    c_first: Work<T>,
}

/// Steps 3, 5 and 6 stage by stage, over `stages` (the compressor stages'
/// scans): the step-3 reference, the intercooling lines against it if
/// `intercooling` (the first-suction reference; the coolant reference
/// prices them, [`coolant_reference`]) and the stage-inefficiency lines.
/// `SUPPLIED_Z`: whether any stage's scan carries a Z (without, the reads
/// of it are left out; the same result).
#[inline(always)]
fn price_stages<T: Real, G: GasModel<T>, const N: usize, const SUPPLIED_Z: bool>(
    gas: &G,
    stages: &[StageScan<T>],
    snapshot: &Snapshot<T, N>,
    t_s: Measured<T>,
    m_fwd: Measured<T>,
    intercooling: bool,
    out: &mut Ledger<T, N>,
) -> Priced<T> {
    let mut p = Priced {
        ratio_product: T::ONE,
        q_pressures: Quality::Good,
        uniform: gas.ratio_only(),
        ref_c: Work::zero(),
        c_first: Work::zero(),
    };
    // By iterator over the scan, the snapshot and the two per-stage lines
    // (no index checks).
    let stages = stages
        .iter()
        .zip(snapshot.stages.iter())
        .zip(
            out.intercooling
                .iter_mut()
                .zip(out.stage_inefficiency.iter_mut()),
        )
        .enumerate();
    for (i, ((s, st), (ic, ie))) in stages {
        let mut e = stage_read_of(Some(s), st.compressor(), SUPPLIED_Z);
        if !SUPPLIED_Z {
            // (Already so; stated for the optimiser, which otherwise kept
            // a per-stage test of the supplied Z: 21 instructions more.)
            e.z = None;
            e.q_z = Quality::Good;
        }
        p.ratio_product = p.ratio_product * e.ratio.value;
        p.q_pressures = p.q_pressures.worst(e.ratio.quality);
        p.uniform &= e.z.is_none();
        let c_stage = reference_head(gas, &e, t_s, e.head);
        p.ref_c.add(c_stage.value, c_stage.quality);
        let head = Work::of(e.head);
        if i == 0 {
            p.c_first = c_stage;
        } else if intercooling {
            *ic = line(m_fwd, c_stage, head);
        }
        *ie = line(m_fwd, head, Work::of(e.actual));
    }
    p
}

/// Step 4: the reference with each later stage's suction at its cooler's
/// coolant inlet plus `design_approach` (the first stage's, `c_first`, and
/// a stage's without a cooler stay at the first suction temperature), and
/// the intercooling lines priced against it; returns the reference's work
/// (without the chain's pressure quality).
#[inline(never)]
#[allow(clippy::too_many_arguments)]
fn coolant_reference<T: Real, G: GasModel<T>, const N: usize>(
    gas: &G,
    scan: &Scan<T, N>,
    snapshot: &Snapshot<T, N>,
    nc: usize,
    t_s: Measured<T>,
    design_approach: T,
    m_fwd: Measured<T>,
    c_first: Work<T>,
    out: &mut Ledger<T, N>,
) -> Work<T> {
    let mut ref_d = Work::zero();
    ref_d.add(c_first.value, c_first.quality);
    for (i, ic) in out.intercooling.iter_mut().enumerate().take(nc).skip(1) {
        let e = stage_read(scan, snapshot, i);
        let t_ref = match scan.stages.get(i - 1) {
            Some(StageScan {
                cooler: Some(c), ..
            }) => {
                let t = temperature_k(c.coolant_inlet_temperature);
                Some(Measured::derived(t.value + design_approach, t.quality))
            }
            // A configured cooler without its readings: unknown.
            _ => config_has_cooler(snapshot, i - 1).then(Measured::bad),
        };
        // Without a cooler before it, the stage's suction keeps the first
        // suction temperature as its reference.
        let d_stage = reference_head(gas, &e, t_ref.unwrap_or(t_s), e.head);
        ref_d.add(d_stage.value, d_stage.quality);
        *ic = line(m_fwd, d_stage, Work::of(e.head));
    }
    ref_d
}

/// Steps 1 and 2 stage by stage, where one stage cannot stand for all
/// (a model that is not [`GasModel::ratio_only`], or supplied Z).
#[inline(never)]
#[allow(clippy::too_many_arguments)]
fn references_stage_by_stage<T: Real, G: GasModel<T>, const N: usize>(
    gas: &G,
    scan: &Scan<T, N>,
    snapshot: &Snapshot<T, N>,
    nc: usize,
    p_s: T,
    t_s: T,
    overall: T,
    ln_b: T,
    n: T,
    q_base: Quality,
    q_chain: Quality,
) -> (Work<T>, Work<T>) {
    let ln_a = T::ln(overall) / n;
    let mut a = Work::zero();
    let mut b = Work::zero();
    a.add(T::ZERO, q_base);
    b.add(T::ZERO, q_chain);
    let (ra, rb) = (T::exp(ln_a), T::exp(ln_b));
    let (mut pa, mut pb) = (p_s, p_s);
    for i in 0..nc {
        let e = stage_read(scan, snapshot, i);
        let (wa, qa) = isentropic(gas, pa, t_s, pa * ra, ln_a, e.z);
        a.add(wa, qa.worst(e.q_z));
        let (wb, qb) = isentropic(gas, pb, t_s, pb * rb, ln_b, e.z);
        b.add(wb, qb.worst(e.q_z));
        pa = pa * ra;
        // The next suction sits below this discharge by the measured
        // drop fraction.
        let next = stage_read(scan, snapshot, i + 1);
        pb = pb * rb * (next.p1 / e.p2);
    }
    (a, b)
}

/// One compressor stage as the ledger reads it: the raw pressures and
/// suction temperature (valid wherever the qualities that guard them are
/// usable: the train's sensor boundary passed them), the stage's pressure
/// ratio with the quality of both pressures, its supplied Z, and its
/// isentropic head and actual work from the snapshot.
#[derive(Clone, Copy)]
struct StageRead<T> {
    p1: T,
    p2: T,
    t1: T,
    ratio: Measured<T>,
    z: Option<T>,
    q_z: Quality,
    head: Measured<T>,
    actual: Measured<T>,
}

#[inline]
fn stage_read<T: Real, const N: usize>(
    scan: &Scan<T, N>,
    snapshot: &Snapshot<T, N>,
    i: usize,
) -> StageRead<T> {
    stage_read_of(
        scan.stages.get(i),
        snapshot.stages.get(i).and_then(|s| s.compressor()),
        true,
    )
}

/// [`stage_read`] of a stage's scan and compressor results; its supplied Z
/// is read only if `read_z` (a caller that knows there is none passes
/// `false`).
#[inline]
fn stage_read_of<T: Real>(
    s: Option<&StageScan<T>>,
    c: Option<&CompressorResult<T>>,
    read_z: bool,
) -> StageRead<T> {
    let b = Measured::bad();
    match (s, c) {
        (Some(s), Some(c)) => {
            let (z, q_z) = match s.compressibility {
                supplied @ Some(_) if read_z => supplied_z(supplied),
                _ => (None, Quality::Good),
            };
            StageRead {
                p1: s.suction_pressure.value.pa(),
                p2: s.discharge_pressure.value.pa(),
                t1: s.suction_temperature.value.kelvin(),
                ratio: c.pressure_ratio,
                z,
                q_z,
                head: c.isentropic_head,
                actual: c.actual_work,
            }
        }
        _ => StageRead {
            p1: T::ZERO,
            p2: T::ZERO,
            t1: T::ZERO,
            ratio: b,
            z: None,
            q_z: Quality::Bad,
            head: b,
            actual: b,
        },
    }
}

/// A stage's supplied Z through the sensor boundary, with its quality
/// (`None`, good, where it is not usable). Out of line: most scans supply
/// none, and inlined its range checks ran for every stage.
#[inline(never)]
fn supplied_z<T: Real>(m: Option<Measured<T>>) -> (Option<T>, Quality) {
    match compressibility(m) {
        Some((z, q)) => (Some(z), q),
        None => (None, Quality::Good),
    }
}

/// Isentropic head of a stage's measured pressures from suction temperature
/// `t_ref`, with the quality of what it depends on (the pressure ratio's
/// pressures, the supplied Z, `t_ref`, the model's validity). Rescales the
/// stage's own head `head` where the model allows it
/// ([`GasModel::isentropic_head_rescaled`]: the value then depends on the
/// stage's suction temperature only through a factor that cancels),
/// otherwise evaluates the model.
// Always inlined (the rescale is a few instructions; as a call the stage's
// read was spilled to the stack for it); the model's path is out of line.
#[inline(always)]
fn reference_head<T: Real, G: GasModel<T>>(
    gas: &G,
    e: &StageRead<T>,
    t_ref: Measured<T>,
    head: Measured<T>,
) -> Work<T> {
    let q = t_ref.quality.worst(e.ratio.quality).worst(e.q_z);
    if q == Quality::Bad {
        return Work {
            value: T::ZERO,
            quality: Quality::Bad,
        };
    }
    if head.quality.is_usable() {
        if let Some((w, v)) = gas.isentropic_head_rescaled(head.value, e.t1, t_ref.value, e.p2, e.z)
        {
            return Work {
                value: w,
                quality: q.worst(v.quality),
            };
        }
    }
    reference_head_model(gas, e.p1, e.p2, e.ratio.value, e.z, t_ref.value, q)
}

/// [`reference_head`] through the model (no rescale available): from
/// (`p1`, `t_ref`) to `p2`, `ratio` = p2/p1.
#[inline(never)]
fn reference_head_model<T: Real, G: GasModel<T>>(
    gas: &G,
    p1: T,
    p2: T,
    ratio: T,
    z: Option<T>,
    t_ref: T,
    q: Quality,
) -> Work<T> {
    let ln_r = T::ln(ratio);
    let (w, qv) = isentropic(gas, p1, t_ref, p2, ln_r, z);
    Work {
        value: w,
        quality: q.worst(qv),
    }
}

/// Whether stage `i` has a cooler configured (the snapshot has a slot).
#[inline]
fn config_has_cooler<T, const N: usize>(snapshot: &Snapshot<T, N>, i: usize) -> bool {
    matches!(snapshot.coolers.get(i), Some(Some(_)))
}
