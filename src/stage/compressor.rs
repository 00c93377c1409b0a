//! Live performance of one compressor stage from its measured end states.
//!
//! Sources: enthalpy-based stage work (first law for an adiabatic stage,
//! common practice; ASME PTC 10): actual work = h2 − h1, isentropic head
//! = h(p2, s1) − h1, isentropic efficiency = isentropic head / actual work,
//! with the states from the configured [`GasModel`]; the polytropic head and
//! efficiency by a named method of [`crate::polytropic`] (Schultz by
//! default). For the ideal gas these reduce to the relations of
//! [`crate::compression`] (Çengel & Boles ch. 7; `fluids.compressible`):
//! actual work Z·cp·(T2 − T1), polytropic efficiency ((k−1)/k)/((n−1)/n).
//! The isothermal head is Z1·R·T1·ln(p2/p1) with the suction Z.
//!
//! Cost per call (ideal gas): two logarithms, one exponential and seven
//! divisions besides those inside the logarithms; Peng–Robinson: see the
//! README's device figures.

use crate::compression::isothermal_head_from_log;
use crate::dependency::{
    check, compressor_uses, property_slots, slot, suction_slots, CompressorUses, Grades,
    OutputGrades, Slots, Users,
};
use crate::gas::{CompressionStates, GasModel, PropertyInputs, Validity};
use crate::plausibility::{efficiency_allowance, efficiency_grade, Limits};
use crate::polytropic::{schultz, PolytropicMethod};
use crate::quality::{Measured, Quality};
use crate::real::{Real, HARD_FLOAT};

/// What the stage evaluation found, besides qualities: the reason an output
/// is not good (the first that applies, in this order).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StageCondition {
    /// Inputs consistent with a compression.
    Normal,
    /// A pressure or temperature needed for the result is bad.
    InputBad,
    /// Discharge pressure not above suction pressure: no compression.
    NoCompression,
    /// Discharge temperature not above suction temperature: the work and
    /// efficiencies cannot be computed from the temperature rise.
    NoTemperatureRise,
    /// Discharge temperature below the isentropic one (efficiency above 1
    /// beyond the rounding allowance): a temperature or pressure
    /// measurement is suspect; efficiencies uncertain (bad above 1.25),
    /// the work from the temperature rise uncertain.
    EfficiencyAboveOne,
    /// A rating-point query: no discharge temperature was given (its
    /// quality is not applicable), so only the ratio, the isentropic
    /// discharge temperature and the ideal heads are computed; the work and
    /// efficiencies do not apply.
    RatingPoint,
    /// The pressure ratio is above the configured maximum for one stage
    /// (a unit slip such as bar taken as Pa): everything using it is bad.
    RatioOutOfRange,
    /// The temperature rise is too large for the pressure ratio
    /// (ln(T2/T1) >= ln(p2/p1): n not above 1): a reading is suspect; n,
    /// the polytropic head and efficiency bad, the rest uncertain.
    ImplausibleTemperatureRise,
    /// The machine is stationary (flow at or below the configured
    /// threshold): the temperature rise is not compression work; work and
    /// efficiencies uncertain.
    Stationary,
    /// The temperature rise or the pressure ratio is too small against the
    /// stated instrument accuracy for a good efficiency: efficiencies,
    /// exponent and polytropic head uncertain.
    BelowResolution,
    /// The gas model is outside its validity range at these states
    /// (near-critical, liquid-like, ideal gas at high reduced pressure; no
    /// vapour root or non-finite when bad): see
    /// [`CompressorResult::gas_validity`]. Every output using the model's
    /// states is uncertain (bad when the model has no valid state).
    OutsideGasModel,
}

/// Results of one compressor stage; every value carries its quality.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CompressorResult<T> {
    /// Discharge over suction pressure (absolute), -.
    pub pressure_ratio: Measured<T>,
    /// Discharge temperature of an isentropic compression, K.
    pub isentropic_discharge_temperature: Measured<T>,
    /// Measured temperature rise T2 - T1, K.
    pub temperature_rise: Measured<T>,
    /// Isentropic head, J/kg.
    pub isentropic_head: Measured<T>,
    /// Polytropic head along the measured path, J/kg.
    pub polytropic_head: Measured<T>,
    /// Isothermal head (the ideal), J/kg.
    pub isothermal_head: Measured<T>,
    /// Actual specific work, the enthalpy rise h2 − h1 (ideal gas:
    /// Z·cp·(T2 − T1)), J/kg.
    pub actual_work: Measured<T>,
    /// Isentropic efficiency, -.
    pub isentropic_efficiency: Measured<T>,
    /// Polytropic efficiency, -.
    pub polytropic_efficiency: Measured<T>,
    /// Polytropic exponent n inferred from the measured states, -.
    pub polytropic_exponent: Measured<T>,
    /// Mass flow used for the power, kg/s.
    pub mass_flow: Measured<T>,
    /// Gas power, mass flow × actual work, W.
    pub gas_power: Measured<T>,
    /// Actual work minus the isothermal ideal, J/kg.
    pub work_above_isothermal: Measured<T>,
    /// Gas power minus isothermal power, W.
    pub power_above_isothermal: Measured<T>,
    /// Compressibility factor at suction (ideal gas: the mean Z used, with
    /// the quality of the supplied value, or good for the configured one), -.
    pub compressibility: Measured<T>,
    /// Isentropic exponent used: the isentropic volume exponent
    /// ns = ln(p2/p1)/ln(v1/v2s) (ideal gas: the mean k), -.
    pub k: Measured<T>,
    /// Which method produced the polytropic head, efficiency and exponent.
    pub polytropic_method: PolytropicMethod,
    /// Validity of the gas model's states (worst of suction, isentropic and
    /// discharge), with its reason; mapped onto the `MODEL` check of the
    /// dependency rule ([`crate::dependency`]).
    pub gas_validity: Validity,
    /// What the evaluation found.
    pub condition: StageCondition,
}

impl<T: Real> CompressorResult<T> {
    /// All results bad (used before the first scan).
    pub fn bad() -> Self {
        let b = Measured::bad();
        CompressorResult {
            pressure_ratio: b,
            isentropic_discharge_temperature: b,
            temperature_rise: b,
            isentropic_head: b,
            polytropic_head: b,
            isothermal_head: b,
            actual_work: b,
            isentropic_efficiency: b,
            polytropic_efficiency: b,
            polytropic_exponent: b,
            mass_flow: b,
            gas_power: b,
            work_above_isothermal: b,
            power_above_isothermal: b,
            compressibility: b,
            k: b,
            polytropic_method: PolytropicMethod::Schultz,
            gas_validity: Validity::INVALID,
            condition: StageCondition::InputBad,
        }
    }
}

/// Validated inputs of one compressor stage, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CompressorInputs<T> {
    /// Suction pressure, Pa absolute.
    pub suction_pressure: Measured<T>,
    /// Suction temperature, K.
    pub suction_temperature: Measured<T>,
    /// Discharge pressure, Pa absolute.
    pub discharge_pressure: Measured<T>,
    /// Discharge temperature, K; [`Measured::not_applicable`] for a
    /// rating-point query (no discharge temperature: condition
    /// [`StageCondition::RatingPoint`], not a fault).
    pub discharge_temperature: Measured<T>,
    /// Mass flow, kg/s (bad if unknown).
    pub mass_flow: Measured<T>,
    /// Supplied mean compressibility and its quality, if any (a bad one
    /// makes every output that uses Z bad; it is not silently replaced).
    pub compressibility: Option<(T, Quality)>,
}

/// Evaluates one compressor stage with the default [`Limits`];
/// [`evaluate_compressor_into`] returning the result.
pub fn evaluate_compressor<T: Real, G: GasModel<T>>(
    gas: &G,
    inp: &CompressorInputs<T>,
) -> CompressorResult<T> {
    let mut out = CompressorResult::bad();
    evaluate_compressor_within(gas, inp, &Limits::default(), &mut out);
    out
}

/// Evaluates one compressor stage into `out` with the default [`Limits`]
/// (every field overwritten; no result copy, which matters on small
/// devices); [`evaluate_compressor_within`] with explicit limits.
pub fn evaluate_compressor_into<T: Real, G: GasModel<T>>(
    gas: &G,
    inp: &CompressorInputs<T>,
    out: &mut CompressorResult<T>,
) {
    evaluate_compressor_within(gas, inp, &Limits::default(), out);
}

/// Evaluates one compressor stage into `out` against `limits`.
///
/// Assumes inputs passed the sensor boundary ([`crate::scan`]): a value that
/// is usable is finite and positive. Values are computed from what they
/// use; qualities come from the dependency rule ([`crate::dependency`]) and
/// the plausibility checks against `limits`. Never panics; every output is
/// finite.
pub fn evaluate_compressor_within<T: Real, G: GasModel<T>>(
    gas: &G,
    inp: &CompressorInputs<T>,
    limits: &Limits<T>,
    out: &mut CompressorResult<T>,
) {
    let mut settled = NOT_SETTLED;
    evaluate_compressor_tabled(
        gas,
        inp,
        &StageThresholds::of(limits),
        None,
        out,
        &mut settled,
    );
}

/// What a stage's `settled` holds when its result's qualities were not
/// written by the nominal finish ([`evaluate_compressor_tabled`]): no
/// grading key equals it.
pub(crate) const NOT_SETTLED: u16 = 0;

/// Set in every kept grading key (so that none is [`NOT_SETTLED`]): the
/// high bit of the first pair, clear in every key of usable qualities.
const SETTLED: u16 = 1 << 1;

/// The input slots' qualities in a grading key, two bits each (P1, T1, P2,
/// T2, flow, Z from bit 0; the model's two checks follow at bits 12 and
/// 14): every one usable (good 0 or uncertain 1) exactly if no high bit of
/// a pair is set.
const KEY_NOT_USABLE: u16 = 0xaaaa;
/// The thresholds of a stage's plausibility checks, from [`Limits`]: built
/// once (a train keeps them; its limits do not change) instead of every
/// scan (the two resolution products are three multiplications, each a
/// library call on a device without a floating-point unit).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct StageThresholds<T> {
    /// [`Limits::max_stage_ratio`].
    max_stage_ratio: T,
    /// [`Limits::min_temperature_rise`], at least the smallest positive
    /// value (the same results: every rise it is compared with is
    /// positive). The nominal finish tests the rise against [it, +∞] on
    /// the bit patterns: dt > 0 and not below the minimum in one test.
    min_temperature_rise: T,
    /// [`Limits::min_log_ratio`].
    min_log_ratio: T,
    /// [`Limits::stationary_flow`].
    stationary_flow: T,
    /// The ratios of the nominal finish, (1, max_stage_ratio] and finite,
    /// as the bounds [lo, hi] of one test on the bit patterns
    /// ([`Real::within_positive`]): the value next above 1 and the maximum
    /// (the largest finite value for an infinite one; +0 twice for a
    /// maximum not above 1, which no compression passes: see
    /// [`StageThresholds::of`]).
    nominal_ratio: [T; 2],
}

/// The smallest positive (subnormal) value of `T`: 2^-149 (f32) or
/// 2^-1074 (f64), both exact in f64.
#[inline]
fn smallest_positive<T: Real>() -> T {
    T::of(if T::EPSILON > T::of(1e-10) {
        f64::from(f32::from_bits(1))
    } else {
        f64::from_bits(1)
    })
}

/// The largest finite value of `T` (f32 or f64).
#[inline]
fn largest_finite<T: Real>() -> T {
    T::of(if T::EPSILON > T::of(1e-10) {
        f64::from(f32::MAX)
    } else {
        f64::MAX
    })
}

impl<T: Real> StageThresholds<T> {
    /// The thresholds of `limits` (the same values bit for bit, except
    /// that a NaN of limits not validated becomes the infinity that gives
    /// the same results in the stage's compares of values that are not NaN:
    /// they can then be decided on the bit patterns, see [`Real::less_not_nan`]).
    #[inline]
    pub(crate) fn of(limits: &Limits<T>) -> Self {
        let or_if_nan = |x: T, instead: T| {
            if x.partial_cmp(&T::ZERO).is_some() {
                x
            } else {
                instead
            }
        };
        let inf = T::of(f64::INFINITY);
        // `ratio > NaN` and `ratio > +inf` are both false for a finite
        // ratio; `x < NaN` and `x < -inf` both false.
        let max_stage_ratio = or_if_nan(limits.max_stage_ratio, inf);
        // dt > 0 and !(dt < min): dt >= the larger of the two (the
        // smallest positive value for dt > 0). The general path compares
        // only positive rises with it: the same results.
        let min_temperature_rise = T::max(
            or_if_nan(limits.min_temperature_rise(), -inf),
            smallest_positive(),
        );
        // A finite ratio above 1 and not above the maximum. With a maximum
        // not above 1 (limits not validated; a train's are), no stage is
        // nominal: [+0, +0] then passes a ratio of +0 alone, whose ln −∞
        // fails the nominal finish's test 0 < ln(p·v ratio) < ln ratio.
        let nominal_ratio = if max_stage_ratio > T::ONE {
            [
                T::ONE + T::EPSILON,
                T::min(max_stage_ratio, largest_finite()),
            ]
        } else {
            [T::ZERO; 2]
        };
        StageThresholds {
            max_stage_ratio,
            min_temperature_rise,
            min_log_ratio: or_if_nan(limits.min_log_ratio(), -inf),
            stationary_flow: limits.stationary_flow,
            nominal_ratio,
        }
    }
}

/// The dependency table of a compressor stage with a measured discharge
/// temperature for one gas model's [`PropertyInputs`]: built once (a train
/// keeps it) instead of every scan.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct StageUses {
    /// What the table was built for.
    pub(crate) inputs: PropertyInputs,
    /// The table turned around ([`Users`]).
    users: Users,
    /// The outputs an uncertain [`check::MODEL`] and an uncertain
    /// [`check::MODEL_DISCHARGE`] make uncertain (bit i = i-th output):
    /// the common not-good checks of a stage (an ideal gas at high reduced
    /// pressure), graded by the nominal finish ([`nominal_stage`]) with
    /// one OR each instead of a pass over their bits of the table.
    model_uncertain: [u16; 2],
}

impl StageUses {
    /// The table for a model with `inputs` (by value: [`Train::with_limits`]
    /// builds it where the train is returned).
    ///
    /// [`Train::with_limits`]: crate::train::Train::with_limits
    pub(crate) fn new(inputs: PropertyInputs) -> Self {
        let mut table = Self::unbuilt(inputs);
        table.rebuild(inputs);
        table
    }

    /// Rebuilds the table in place if `inputs` are not those it was built
    /// for (a gas model replaced between scans); `true` if it did (a
    /// train's stages then forget their kept qualities, graded with the
    /// table replaced).
    /// Compared as one word ([`StageUses::packed`]: the four flags), not
    /// flag by flag.
    #[inline(never)]
    pub(crate) fn refresh(&mut self, inputs: PropertyInputs) -> bool {
        if Self::packed(inputs) != Self::packed(self.inputs) {
            self.rebuild(inputs);
            true
        } else {
            false
        }
    }

    /// The four flags of `inputs` in one word, a byte each (in their
    /// declaration order: the word the struct's four bytes load as).
    #[inline(always)]
    fn packed(inputs: PropertyInputs) -> u32 {
        let PropertyInputs {
            temperature,
            pressure,
            compressibility_from_state,
            state_functions,
        } = inputs;
        u32::from(temperature)
            | u32::from(pressure) << 8
            | u32::from(compressibility_from_state) << 16
            | u32::from(state_functions) << 24
    }

    /// A table for `inputs` that uses nothing: what [`StageUses::rebuild`]
    /// writes over (a train is built with it and rebuilds it in place).
    #[inline(always)]
    pub(crate) const fn unbuilt(inputs: PropertyInputs) -> Self {
        StageUses {
            inputs,
            users: Users([0; 32]),
            model_uncertain: [0; 2],
        }
    }

    /// Rebuilds the table in place for a model with `inputs` (what a train
    /// does at construction and after its gas model's inputs changed: a
    /// table returned by value was built on the stack and copied, 72 bytes,
    /// through `memcpy`). Out of line and cold (it runs at construction and
    /// after a model change, never in a steady scan): one copy for both
    /// callers.
    #[cold]
    #[inline(never)]
    pub(crate) fn rebuild(&mut self, inputs: PropertyInputs) {
        let uses = Self::uses(inputs, false).in_order();
        let uncertain_users = |c| {
            let mut g = Grades::new();
            g.check(c, Quality::Uncertain);
            OutputGrades::from_uses(&g, || uses, u16::MAX, 0).uncertain()
        };
        self.inputs = inputs;
        self.users.fill(&uses);
        self.model_uncertain = [
            uncertain_users(check::MODEL),
            uncertain_users(check::MODEL_DISCHARGE),
        ];
    }

    const fn uses(inputs: PropertyInputs, rating_point: bool) -> CompressorUses {
        let (props_slots, z_slots) = property_slots(inputs, !rating_point);
        let (iso_slots, z1_slots) = suction_slots(inputs, props_slots, z_slots);
        compressor_uses(
            props_slots,
            z_slots,
            iso_slots,
            z1_slots,
            inputs.compressibility_from_state,
        )
    }
}

/// Where a stage evaluation reads its inputs: [`CompressorInputs`], or a
/// train's own per-stage values after its sensor boundary, read in place
/// (building a [`CompressorInputs`] from them cost a 48-byte copy per
/// stage and scan).
pub(crate) trait StageReadings<T> {
    /// Suction pressure, discharge pressure, suction temperature, discharge
    /// temperature and mass flow, as [`CompressorInputs`] names them.
    fn readings(&self) -> [Measured<T>; 5];
    /// [`CompressorInputs::compressibility`].
    fn compressibility(&self) -> Option<(T, Quality)>;
    /// The slots' part of the grading key of these readings
    /// ([`slot_key`]; a supplied Z's quality, good without one). A train
    /// gives the key its sensor boundary built as it checked each reading.
    #[inline(always)]
    fn slot_key(&self) -> u16 {
        readings_key(self.readings(), self.compressibility())
    }
}

/// The slots' part of the grading key ([`slot_key`]) of readings in the
/// order of [`StageReadings::readings`] and a supplied Z (good without
/// one).
#[inline(always)]
fn readings_key<T>([p1, p2, t1, t2, flow]: [Measured<T>; 5], z: Option<(T, Quality)>) -> u16 {
    let q_z = match z {
        Some((_, q)) => q,
        None => Quality::Good,
    };
    slot_key([
        p1.quality,
        t1.quality,
        p2.quality,
        t2.quality,
        flow.quality,
        q_z,
    ])
}

impl<T: Copy> StageReadings<T> for CompressorInputs<T> {
    #[inline(always)]
    fn readings(&self) -> [Measured<T>; 5] {
        [
            self.suction_pressure,
            self.discharge_pressure,
            self.suction_temperature,
            self.discharge_temperature,
            self.mass_flow,
        ]
    }
    #[inline(always)]
    fn compressibility(&self) -> Option<(T, Quality)> {
        self.compressibility
    }
}

/// [`evaluate_compressor_within`] with the check thresholds and the
/// dependency tables built beforehand (`tables` for
/// `gas.property_inputs()`; `None` builds them).
///
/// With a train's tables the stage's states are found once, inline
/// ([`stage_states`]), and the common case is finished from them
/// ([`nominal_stage`]); everything else (and every caller without tables)
/// is finished by the general path ([`finish_general`]; out of line and
/// cold for a train), from the same states: one copy of the stage's maths
/// in a train's code (the nominal attempt writes nothing that the general
/// finish does not overwrite).
///
/// `settled` belongs to `out`: the grading key of the slot and model
/// qualities from which the nominal finish last wrote `out`'s sixteen
/// qualities, or [`NOT_SETTLED`] if anything else wrote them (the general
/// path sets it so). In the nominal finish the qualities follow from that
/// key alone (with these `tables`), so with an equal key they are already
/// in `out` and are not written again (a plant's qualities rarely change
/// from scan to scan). A caller that writes `out` otherwise, or changes
/// `tables`, resets `settled` to [`NOT_SETTLED`].
#[inline(always)]
pub(crate) fn evaluate_compressor_tabled<T: Real, G: GasModel<T>, I: StageReadings<T>>(
    gas: &G,
    inp: &I,
    thresholds: &StageThresholds<T>,
    tables: Option<&StageUses>,
    out: &mut CompressorResult<T>,
    settled: &mut u16,
) {
    match tables {
        Some(t) => {
            let [p1, p2, t1, t2, flow] = inp.readings();
            // The slots' part of the grading key; every slot usable in one
            // test.
            let key = inp.slot_key();
            let usable = key & KEY_NOT_USABLE == 0;
            // Every slot usable: the path values are the readings (as
            // `path_values` gives them then), without its selections.
            let path = if usable {
                PathValues {
                    p1: p1.value,
                    t1: t1.value,
                    p2: p2.value,
                    t2: t2.value,
                    has_t2: true,
                    z_supplied: inp.compressibility().map(|(z, _)| z),
                    ln_argument: p2.value / p1.value,
                }
            } else {
                // With an FPU out of line, and a copy: the call's result is
                // then not the place of `path`, whose values stay in
                // registers in the common case (not stored and read back).
                // Without one inline (a few integer selections; the
                // call's result in memory cost 32 bytes of stack or, as
                // the place of `path`, its values reloaded after every
                // library call: 500 instructions per stage on Cortex-M0).
                #[cfg(not(all(target_arch = "arm", not(target_abi = "eabihf"))))]
                let p = PathValues { ..path_values(inp) };
                #[cfg(all(target_arch = "arm", not(target_abi = "eabihf")))]
                let p = path_values_of(inp);
                p
            };
            let st = stage_states(gas, &p1, &p2, &path);
            // Finite, above 1 and not above the stage maximum: one test on
            // the bits (a NaN, a negative value and zero lie outside).
            // (Every slot usable: tested by `nominal_stage` on the key.)
            let [ratio_lo, ratio_hi] = thresholds.nominal_ratio;
            if T::within_positive(st.ratio, ratio_lo, ratio_hi) {
                if let Some(key) = nominal_stage(
                    &st.cs,
                    flow.value,
                    key,
                    st.fit,
                    [st.ratio, st.dt, st.ln_path, st.h_iso],
                    thresholds,
                    out,
                ) {
                    // The qualities follow from the key (with these
                    // tables): written only if `out` does not hold them
                    // from an equal key already.
                    if *settled != key {
                        settle_nominal(t, key, out);
                        *settled = key;
                    }
                    return;
                }
            }
            *settled = NOT_SETTLED;
            // With an FPU a copy made here, so that the common case's
            // states stay in registers (not stored for the call); without
            // one the states themselves (spilled anyway: a copy was 112
            // bytes more stack for a Peng-Robinson stage on Cortex-M0).
            #[cfg(not(all(target_arch = "arm", not(target_abi = "eabihf"))))]
            let st = &StageStates {
                cs: st.cs,
                ratio: st.ratio,
                dt: st.dt,
                ln_path: st.ln_path,
                h_iso: st.h_iso,
                fit: st.fit,
            };
            #[cfg(all(target_arch = "arm", not(target_abi = "eabihf")))]
            let st = &st;
            evaluate_compressor_with_table(gas, inp, thresholds, t, st, out);
        }
        None => {
            *settled = NOT_SETTLED;
            evaluate_compressor_general(gas, inp, thresholds, None, out);
        }
    }
}

/// The general finish with a train's tables, out of line and cold: a
/// train's stage takes it only when the nominal finish does not apply.
/// (Its own copy: with the tables known to be there, the built-in tables
/// of callers without one are not linked into a train's code.) The states
/// come from the caller's [`stage_states`]: they are the general path's.
#[cold]
#[inline(never)]
fn evaluate_compressor_with_table<T: Real, G: GasModel<T>, I: StageReadings<T>>(
    gas: &G,
    inp: &I,
    thresholds: &StageThresholds<T>,
    tables: &StageUses,
    states: &StageStates<T>,
    out: &mut CompressorResult<T>,
) {
    finish_general(gas, inp, thresholds, Some(tables), states, out);
}

/// Where the general path evaluates the gas model: the measured end states
/// where usable; without a usable T1 at a nominal temperature (only a
/// temperature-independent model's outputs can then be good, and the rule
/// sees to that), without a usable T2 no discharge state (and T2 at T1),
/// without usable pressures at a nominal pressure, as for T1 (a
/// pressure-independent model's enthalpy rise is then still good; the rule
/// marks what used the pressures), and a supplied Z only if usable.
#[derive(Clone, Copy)]
struct PathValues<T> {
    p1: T,
    t1: T,
    p2: T,
    t2: T,
    has_t2: bool,
    z_supplied: Option<T>,
    /// The ratio whose logarithm the states use: the measured one with
    /// usable pressures, else exactly 1 (both path pressures one value).
    ln_argument: T,
}

/// [`path_values_of`] out of line: one copy for the general finish and
/// the rare case of a train's stage.
#[inline(never)]
fn path_values<T: Real, I: StageReadings<T>>(inp: &I) -> PathValues<T> {
    path_values_of(inp)
}

/// The [`PathValues`] of `inp`, for any slot qualities.
#[inline(always)]
fn path_values_of<T: Real, I: StageReadings<T>>(inp: &I) -> PathValues<T> {
    let [p1, p2, t1, t2, _] = inp.readings();
    let p_ok = p1.quality.is_usable() && p2.quality.is_usable();
    let t1_ok = t1.quality.is_usable();
    let t2_ok = t2.quality.is_usable();
    let t1_path = if t1_ok { t1.value } else { T::of(288.15) };
    let p1_path = if p1.quality.is_usable() {
        p1.value
    } else {
        T::of(101_325.0)
    };
    PathValues {
        p1: p1_path,
        t1: t1_path,
        p2: if p_ok { p2.value } else { p1_path },
        t2: if t2_ok { t2.value } else { t1_path },
        has_t2: t2_ok,
        z_supplied: match inp.compressibility() {
            Some((z, q)) if q.is_usable() => Some(z),
            _ => None,
        },
        ln_argument: if p_ok { p2.value / p1.value } else { T::ONE },
    }
}

/// The gas model's states along a stage's path and what follows from them
/// alone: the measured ratio, the rise T2 − T1, the logarithm of the path
/// ratio, the isothermal head and the fit of the properties.
#[derive(Clone, Copy)]
struct StageStates<T> {
    cs: CompressionStates<T>,
    ratio: T,
    dt: T,
    ln_path: T,
    h_iso: T,
    fit: Quality,
}

/// The [`StageStates`] at `path` (the measured ratio from the readings
/// `p1`, `p2`): the one copy of the stage's maths, for the nominal and the
/// general finish.
#[inline(always)]
fn stage_states<T: Real, G: GasModel<T>>(
    gas: &G,
    p1: &Measured<T>,
    p2: &Measured<T>,
    path: &PathValues<T>,
) -> StageStates<T> {
    let ratio = p2.value / p1.value;
    // The measured rise T2 − T1 wherever it is used (both temperatures
    // usable: the path temperatures are the measured ones), from the path
    // values so that an inlined model's own T2 − T1 is the same expression
    // and computed once (on a soft-float device a library call saved).
    let dt = path.t2 - path.t1;
    let fit = gas.fit_quality(path.t1, path.t2);
    // One logarithm of the ratio for the model, the polytropic method and
    // the isothermal head (compressing implies usable pressures, so the
    // path ratio is the measured one). Without usable pressures both path
    // pressures are one value, their ratio exactly 1: no second division.
    // Inlined (`Real::ln_inline`: the stage's scan).
    let ln_path = T::ln_inline(path.ln_argument);
    // Suction, isentropic and (with a usable T2) discharge states in one
    // call. A model whose discharge state is separable is always asked for
    // one (without a usable T2 the path T2 is the path T1: the same
    // suction and isentropic results and validities as without one); the
    // general finish drops it where T2 is not usable, and the nominal
    // finish needs a usable T2. Asked for by `has_t2` alone, the common
    // case's states took a branch and the other case's placeholders (8
    // instructions per stage on Cortex-M4F).
    let t2 = if path.has_t2 || gas.discharge_separable() {
        Some(path.t2)
    } else {
        None
    };
    let mut st = StageStates {
        cs: CompressionStates::invalid(),
        ratio,
        dt,
        ln_path,
        h_iso: T::ZERO,
        fit,
    };
    // The states written in place (an out-of-line model's result not
    // copied into `st`: 80 bytes of stack on Cortex-M0).
    st.cs = gas.compression(path.p1, path.t1, path.p2, ln_path, t2, path.z_supplied);
    // The isothermal head, used only when compressing (where the general
    // finish leaves the suction Z as it is) and T1 is usable (where the
    // path T1 is the measured one). Formed right after the states: an
    // inlined model's own Z·R·T1 is then found the same and reused (two
    // multiplications fewer, library calls on a soft-float device).
    st.h_iso = isothermal_head_from_log(st.cs.suction_z, gas.gas_constant(), path.t1, ln_path);
    st
}

/// The general path of [`evaluate_compressor_tabled`]: every case, from
/// the readings.
#[inline(always)]
fn evaluate_compressor_general<T: Real, G: GasModel<T>, I: StageReadings<T>>(
    gas: &G,
    inp: &I,
    thresholds: &StageThresholds<T>,
    tables: Option<&StageUses>,
    out: &mut CompressorResult<T>,
) {
    let [p1, p2, ..] = inp.readings();
    let st = stage_states(gas, &p1, &p2, &path_values(inp));
    finish_general(gas, inp, thresholds, tables, &st, out);
}

/// The general finish: every case, from the readings and their
/// [`stage_states`].
#[inline(always)]
fn finish_general<T: Real, G: GasModel<T>, I: StageReadings<T>>(
    gas: &G,
    inp: &I,
    thresholds: &StageThresholds<T>,
    tables: Option<&StageUses>,
    st: &StageStates<T>,
    out: &mut CompressorResult<T>,
) {
    // Which outputs were computed (bit i: the i-th field in declaration
    // order); the rest are bad or not applicable once settled.
    let mut done: u16 = 0;
    let [p1, p2, t1, t2, flow] = inp.readings();
    let p_ok = p1.quality.is_usable() && p2.quality.is_usable();
    let t1_ok = t1.quality.is_usable();
    let t2_ok = t2.quality.is_usable();
    let rating_point = t2.quality == Quality::NotApplicable;
    let StageStates {
        mut cs,
        ratio,
        dt,
        ln_path,
        h_iso,
        fit,
    } = *st;
    if !t2_ok {
        // A separable model's discharge state at T1 ([`stage_states`])
        // dropped, as if not asked for: no discharge, the validity the
        // isentropic one, as every model gives them without a T2 (the
        // discharge fields are read only with a discharge). Without one
        // asked for, these are the values already.
        cs.has_discharge = false;
        cs.validity = cs.isentropic_validity;
    }
    let ratio_ok = p_ok && T::is_finite(ratio);
    let compressing = ratio_ok && T::less_not_nan(T::ONE, ratio);
    if !compressing {
        // No compression: no isentropic outputs, so the model's validity is
        // that of the suction and discharge states alone (an entropy match
        // towards a lower pressure may fail without touching them), and the
        // isentropic exponent of such a path is 0/0 for a state-function
        // model: the path-mean k instead.
        let path = path_values(inp);
        let (z1, v1, v, k) = gas.uncompressed(
            path.p1,
            path.t1,
            path.p2,
            if path.has_t2 { Some(path.t2) } else { None },
            path.z_supplied,
        );
        cs.suction_z = z1;
        cs.isentropic_validity = v1;
        cs.validity = v;
        cs.isentropic_exponent = k;
    }
    if p_ok {
        done |= 1 << 0;
        out.pressure_ratio.value = ratio;
    }
    if flow.quality.is_usable() {
        done |= 1 << 10;
        out.mass_flow.value = flow.value;
    }
    if t1_ok && t2_ok {
        done |= 1 << 2;
        out.temperature_rise.value = dt;
    }
    // The model's validity counts only where its states were evaluated at
    // usable inputs (a check that cannot be evaluated downgrades nothing:
    // the outputs using the bad input are bad by their own slots).
    let validity = if p_ok && t1_ok {
        if cs.has_discharge {
            cs.validity
        } else {
            cs.isentropic_validity
        }
    } else {
        Validity::IN_RANGE
    };
    let iso_validity = if p_ok && t1_ok {
        cs.isentropic_validity
    } else {
        Validity::IN_RANGE
    };
    let discharge_validity = if p_ok && t1_ok && cs.has_discharge {
        cs.validity.quality
    } else {
        Quality::Good
    };
    out.gas_validity = validity;
    out.polytropic_method = PolytropicMethod::Schultz;
    let iso_ok = cs.isentropic_validity.quality != Quality::Bad;
    let all_ok = iso_ok && cs.has_discharge && cs.validity.quality != Quality::Bad;
    if iso_ok && T::is_finite(cs.suction_z) {
        done |= 1 << 14;
        out.compressibility.value = cs.suction_z;
    }
    if iso_ok && T::is_finite(cs.isentropic_exponent) {
        done |= 1 << 15;
        out.k.value = cs.isentropic_exponent;
    }

    // The reasons of the condition, each set where its check is made.
    let mut checks = CompressorChecks::default();
    checks.set(CompressorChecks::INPUT_BAD, !(p_ok && t1_ok));
    checks.set(CompressorChecks::RATING_POINT, rating_point);
    checks.set(CompressorChecks::T2_BAD, !t2_ok);
    checks.model(validity.quality);
    let mut efficiency = Quality::Good;
    // Work from the enthalpy rise h2 - h1 (ideal gas: Z·cp·(T2 - T1)): T1,
    // T2, Z and the model's states.
    let rising = t1_ok && t2_ok && T::positive_at_most(dt, T::of(f64::INFINITY));
    let actual = cs.enthalpy_rise;
    if rising && all_ok {
        done |= 1 << 6;
        out.actual_work.value = actual;
        if flow.quality.is_usable() {
            done |= 1 << 11;
            out.gas_power.value = flow.value * actual;
        }
    } else if t1_ok && t2_ok && !rising {
        checks.set(CompressorChecks::NO_RISE, true);
    }
    if ratio_ok && T::less_not_nan(thresholds.max_stage_ratio, ratio) {
        checks.set(CompressorChecks::RATIO_OUT_OF_RANGE, true);
    }
    if compressing && iso_ok {
        let hs = cs.isentropic_enthalpy_rise;
        if t1_ok {
            done |= 1 << 1;
            out.isentropic_discharge_temperature.value = cs.isentropic_temperature;
            done |= 1 << 3;
            out.isentropic_head.value = hs;
            done |= 1 << 5;
            out.isothermal_head.value = h_iso;
        }
        if rising && all_ok {
            let eta_s = hs / actual;
            done |= 1 << 7;
            out.isentropic_efficiency.value = eta_s;
            done |= 1 << 12;
            out.work_above_isothermal.value = actual - h_iso;
            if flow.quality.is_usable() {
                done |= 1 << 13;
                out.power_above_isothermal.value = flow.value * (actual - h_iso);
            }
            if let Some(poly) = schultz(&cs, ln_path) {
                out.polytropic_method = poly.method;
                done |= 1 << 4;
                out.polytropic_head.value = poly.head;
                done |= 1 << 9;
                out.polytropic_exponent.value = poly.exponent;
                done |= 1 << 8;
                out.polytropic_efficiency.value = poly.efficiency;
                efficiency = efficiency_pair_grade(eta_s, poly.efficiency);
                checks.set(CompressorChecks::EFFICIENCY, efficiency != Quality::Good);
            } else {
                checks.set(CompressorChecks::EXPONENT_IMPLAUSIBLE, true);
            }
            // dt > 0 (rising) and ln_path >= 0 (compressing): not NaN.
            checks.set(
                CompressorChecks::BELOW_RESOLUTION,
                T::less_not_nan(dt, thresholds.min_temperature_rise)
                    || T::less_not_nan(ln_path, thresholds.min_log_ratio),
            );
        }
    } else if ratio_ok && !compressing {
        checks.set(CompressorChecks::NO_COMPRESSION, true);
    }
    checks.set(
        CompressorChecks::STATIONARY,
        flow.quality.is_usable() && !(flow.value > thresholds.stationary_flow),
    );

    // Qualities: the dependency rule over the slots and checks.
    // The slots from the grading key's pairs (the quality's discriminant:
    // low bit alone uncertain, high bit alone bad, both not applicable) by
    // shifts and masks, as `Grades::first_slot` for each slot gives them
    // (six inlined matches were 112 bytes more flash on Cortex-M4F).
    let key = readings_key([p1, p2, t1, t2, flow], inp.compressibility());
    let (lo, hi) = (key_slots(key, 0), key_slots(key, 1));
    let mut g = Grades::of_slots(Slots(lo & !hi), Slots(hi & !lo), Slots(lo & hi));
    if checks.has(CompressorChecks::RATIO_OUT_OF_RANGE) {
        g.check(check::RATIO, Quality::Bad);
    }
    // MODEL: the fitted range of the properties and the gas model's
    // validity at the states used (near-critical, liquid-like, ideal gas at
    // high reduced pressure, no vapour root). (The common uncertain model
    // of a train's stage is graded by `nominal_stage` with one mask each;
    // here through `g`: the same grades.)
    g.check(check::MODEL, fit.worst(iso_validity.quality));
    g.check(check::MODEL_DISCHARGE, discharge_validity);
    if checks.has(CompressorChecks::EXPONENT_IMPLAUSIBLE) {
        // n itself, the polytropic head and efficiency were not computed
        // (bad); what remains (the isentropic efficiency, the work) is a
        // number, but of a suspect reading.
        g.check(check::EXPONENT, Quality::Uncertain);
    }
    g.check(check::CONSISTENT, efficiency);
    if checks.has(CompressorChecks::NO_COMPRESSION) {
        // A temperature rise without a pressure rise is not compression
        // work: the work from it is suspect.
        g.check(check::CONSISTENT, Quality::Uncertain);
    }
    if checks.has(CompressorChecks::BELOW_RESOLUTION) {
        g.check(check::RESOLVED, Quality::Uncertain);
    }
    if checks.has(CompressorChecks::STATIONARY) {
        g.check(check::RUNNING, Quality::Uncertain);
    }
    // The table kept for measured stages; a rating-point query (rare) or a
    // caller without one builds its own (in a frame of its own: not on the
    // stack of every call).
    match tables {
        Some(t) if !rating_point => {
            settle_compressor_outputs(&OutputGrades::new(&g, &t.users, done, 0), out);
        }
        _ => settle_compressor_untabled(&g, gas.property_inputs(), rating_point, done, out),
    }
    out.condition = checks.condition();
}

/// The nominal finish of [`evaluate_compressor_tabled`]: if every input
/// slot is usable (good or uncertain; `key`, the slots' part of the grading
/// key, says so), the stage compresses (a finite ratio above 1 and not
/// above the maximum: the caller has tested it) with a rise
/// (T2 − T1 > 0), the model's fit and validity at the
/// suction, isentropic and discharge states are good or uncertain, the
/// ratio, resolution, running and efficiency checks pass and all sixteen
/// values are finite, writes the values and the validity into `out` and
/// returns the grading key of the qualities, the method and the condition
/// ([`settle_nominal`] gives them). Otherwise writes nothing that the
/// general path does not overwrite, and returns `None`.
///
/// Why the grades are the general path's: no slot is bad or not
/// applicable, no check fails but the model's (uncertain: [`StageUses`]'s
/// masks, the same grades as through [`Grades`]), and every output is computed
/// (`done` all set): `OutputGrades::new` has no bad and no not-applicable
/// output, and an output is uncertain exactly if it uses an uncertain slot
/// or an uncertain model check.
#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn nominal_stage<T: Real>(
    cs: &CompressionStates<T>,
    flow: T,
    key: u16,
    fit: Quality,
    [ratio, dt, ln_path, h_iso]: [T; 4],
    thresholds: &StageThresholds<T>,
    out: &mut CompressorResult<T>,
) -> Option<u16> {
    // The grading key: usable slots and good-or-uncertain model checks in
    // one test.
    let model = fit.worst(cs.isentropic_validity.quality);
    let discharge = cs.validity.quality;
    let key = key | u16::from(model as u8) << 12 | u16::from(discharge as u8) << 14;
    let (rise_lo, rise_hi) = (thresholds.min_temperature_rise, T::of(f64::INFINITY));
    if key & KEY_NOT_USABLE != 0
        || !cs.has_discharge
        || !T::within_positive(dt, rise_lo, rise_hi)
        || !(flow > thresholds.stationary_flow)
        || T::less_not_nan(ln_path, thresholds.min_log_ratio)
    {
        return None;
    }
    let poly = schultz(cs, ln_path)?;
    let actual = cs.enthalpy_rise;
    let hs = cs.isentropic_enthalpy_rise;
    let eta_s = hs / actual;
    if efficiency_pair_grade(eta_s, poly.efficiency) != Quality::Good {
        return None;
    }
    let above = actual - h_iso;
    // Written before the finiteness test (read back from `out`, no copy
    // on the stack): without it, the general path overwrites them all.
    out.pressure_ratio.value = ratio;
    out.isentropic_discharge_temperature.value = cs.isentropic_temperature;
    out.temperature_rise.value = dt;
    out.isentropic_head.value = hs;
    out.polytropic_head.value = poly.head;
    out.isothermal_head.value = h_iso;
    out.actual_work.value = actual;
    out.isentropic_efficiency.value = eta_s;
    out.polytropic_efficiency.value = poly.efficiency;
    out.polytropic_exponent.value = poly.exponent;
    out.mass_flow.value = flow;
    out.gas_power.value = flow * actual;
    out.work_above_isothermal.value = above;
    out.power_above_isothermal.value = flow * above;
    out.compressibility.value = cs.suction_z;
    out.k.value = cs.isentropic_exponent;
    // Finite but where a check above has shown it: the ratio (finite by
    // its gate), the two efficiencies (in (0, 1 + allowance]) and the flow
    // (a flow not finite, above the stationary one, is +inf, and +inf
    // times the finite work is not finite).
    let unchecked = [
        out.isentropic_discharge_temperature.value,
        out.temperature_rise.value,
        out.isentropic_head.value,
        out.polytropic_head.value,
        out.isothermal_head.value,
        out.actual_work.value,
        out.polytropic_exponent.value,
        out.gas_power.value,
        out.work_above_isothermal.value,
        out.power_above_isothermal.value,
        out.compressibility.value,
        out.k.value,
    ];
    if !T::all_finite(&unchecked) {
        return None;
    }
    out.gas_validity = cs.validity;
    // The method (Schultz, as `schultz` gives it) and the condition (from
    // the discharge check, in the key) are written with the qualities.
    Some(key | SETTLED)
}

/// The qualities of a nominal finish with grading `key` (from
/// [`nominal_stage`]; the slot qualities and the two model checks, two
/// bits each): an output is uncertain exactly if it uses an
/// uncertain slot or an uncertain model check, else good; with them the
/// method and the condition, which follow from the key too (Schultz;
/// normal, or outside the gas model with an uncertain discharge check).
/// Inlined into the stage's scan, where it is taken when the stage's
/// qualities change: out of line (two calls, with [`settle_usable`]) a scan
/// that regraded four stages cost 119 instructions more on Cortex-M4F.
#[inline(always)]
fn settle_nominal<T: Real>(tables: &StageUses, key: u16, out: &mut CompressorResult<T>) {
    // The uncertain slots: pair i's low bit (key bit 2i), slot i (P1, T1,
    // P2, T2, flow, Z: asserted below), read where it is (no gathering of
    // the six bits first: 8 instructions per stage on Cortex-M4F).
    const _: () = assert!(
        slot::P1.0 == 1 << 0
            && slot::T1.0 == 1 << 1
            && slot::P2.0 == 1 << 2
            && slot::T2.0 == 1 << 3
            && slot::FLOW.0 == 1 << 4
            && slot::Z.0 == 1 << 5
    );
    let mut uncertain = tables.users.spread_pairs(u32::from(key) & 0x555);
    if key >> 12 & 1 != 0 {
        uncertain |= tables.model_uncertain[0];
    }
    if key >> 14 & 1 != 0 {
        uncertain |= tables.model_uncertain[1];
    }
    settle_usable_inline(out, uncertain);
    out.polytropic_method = PolytropicMethod::Schultz;
    out.condition = if key >> 14 & 1 == 0 {
        StageCondition::Normal
    } else {
        StageCondition::OutsideGasModel
    };
}

/// The slots' part of a grading key: the qualities of P1, T1, P2, T2, the
/// flow and Z (slot order, asserted in [`settle_nominal`]), two bits each
/// (the quality's discriminant), slot i at bits 2i and 2i + 1. The one
/// packing of the nominal path's key, the general finish's slots and the
/// pump's ([`super::pump`]).
#[inline(always)]
pub(super) fn slot_key([p1, t1, p2, t2, flow, z]: [Quality; 6]) -> u16 {
    u16::from(p1 as u8)
        | u16::from(t1 as u8) << 2
        | u16::from(p2 as u8) << 4
        | u16::from(t2 as u8) << 6
        | u16::from(flow as u8) << 8
        | u16::from(z as u8) << 10
}

/// The slots (bit i = slot i: P1, T1, P2, T2, flow, Z, asserted in
/// [`settle_nominal`]) of a grading key (two bits per slot, slot i at bits
/// 2i and 2i + 1) whose pair has the bit `shift` set (0: the low bit, 1:
/// the high bit): gathered by three shift-or-mask steps instead of one
/// test per slot.
#[inline(always)]
pub(super) fn key_slots(key: u16, shift: u32) -> u16 {
    let mut slots = (key >> shift) & 0x555;
    slots = (slots | slots >> 1) & 0x333;
    slots = (slots | slots >> 2) & 0x0f0f;
    (slots | slots >> 4) & 0x3f
}

/// The sixteen values of a result, in the order of `done`.
#[inline(always)]
fn compressor_values<T: Real>(o: &CompressorResult<T>) -> [T; 16] {
    [
        o.pressure_ratio.value,
        o.isentropic_discharge_temperature.value,
        o.temperature_rise.value,
        o.isentropic_head.value,
        o.polytropic_head.value,
        o.isothermal_head.value,
        o.actual_work.value,
        o.isentropic_efficiency.value,
        o.polytropic_efficiency.value,
        o.polytropic_exponent.value,
        o.mass_flow.value,
        o.gas_power.value,
        o.work_above_isothermal.value,
        o.power_above_isothermal.value,
        o.compressibility.value,
        o.k.value,
    ]
}

/// The sixteen outputs of a result, in the order of `done`.
#[inline(always)]
fn compressor_outputs<T>(o: &mut CompressorResult<T>) -> [&mut Measured<T>; 16] {
    [
        &mut o.pressure_ratio,
        &mut o.isentropic_discharge_temperature,
        &mut o.temperature_rise,
        &mut o.isentropic_head,
        &mut o.polytropic_head,
        &mut o.isothermal_head,
        &mut o.actual_work,
        &mut o.isentropic_efficiency,
        &mut o.polytropic_efficiency,
        &mut o.polytropic_exponent,
        &mut o.mass_flow,
        &mut o.gas_power,
        &mut o.work_above_isothermal,
        &mut o.power_above_isothermal,
        &mut o.compressibility,
        &mut o.k,
    ]
}

/// [`settle_usable_inline`] out of line, for [`settle_compressor_outputs`]
/// (the general finish).
#[inline(never)]
fn settle_usable<T: Real>(o: &mut CompressorResult<T>, uncertain: u16) {
    settle_usable_inline(o, uncertain)
}

/// Every output usable: uncertain where `uncertain` has its bit (the
/// order of `done`), else good. Inlined into the nominal finish
/// ([`settle_nominal`]); the general finish calls [`settle_usable`].
#[inline(always)]
fn settle_usable_inline<T: Real>(o: &mut CompressorResult<T>, uncertain: u16) {
    let q = |bit: u16| {
        if uncertain & bit != 0 {
            Quality::Uncertain
        } else {
            Quality::Good
        }
    };
    o.pressure_ratio.quality = q(1 << 0);
    o.isentropic_discharge_temperature.quality = q(1 << 1);
    o.temperature_rise.quality = q(1 << 2);
    o.isentropic_head.quality = q(1 << 3);
    o.polytropic_head.quality = q(1 << 4);
    o.isothermal_head.quality = q(1 << 5);
    o.actual_work.quality = q(1 << 6);
    o.isentropic_efficiency.quality = q(1 << 7);
    o.polytropic_efficiency.quality = q(1 << 8);
    o.polytropic_exponent.quality = q(1 << 9);
    o.mass_flow.quality = q(1 << 10);
    o.gas_power.quality = q(1 << 11);
    o.work_above_isothermal.quality = q(1 << 12);
    o.power_above_isothermal.quality = q(1 << 13);
    o.compressibility.quality = q(1 << 14);
    o.k.quality = q(1 << 15);
}

/// The worse of the two efficiencies' grades ([`efficiency_grade`]), the
/// common case (both in (0, 1 + allowance]: good) in two integer
/// comparisons on the bit patterns ([`Real::within_positive`] from the
/// smallest positive value: the same as 0 < x <= max, with or without an
/// FPU; with one, four float compares were six instructions more).
#[inline]
fn efficiency_pair_grade<T: Real>(a: T, b: T) -> Quality {
    let good_max = T::ONE + efficiency_allowance::<T>();
    let good = |x: T| T::within_positive(x, smallest_positive(), good_max);
    if good(a) && good(b) {
        Quality::Good
    } else {
        efficiency_grade(a).worst(efficiency_grade(b))
    }
}

/// What the plausibility checks of one stage found: the reasons of a
/// [`StageCondition`] as bits in their order of precedence (the first set
/// one wins: one bit scan instead of a chain of branches), each set where
/// its check is made (no flags gathered again afterwards).
#[derive(Clone, Copy, Debug, Default)]
struct CompressorChecks(u16);

impl CompressorChecks {
    /// P1, P2 or T1 not usable.
    const INPUT_BAD: u16 = 1 << 0;
    const RATIO_OUT_OF_RANGE: u16 = 1 << 1;
    /// The model's validity bad.
    const MODEL_BAD: u16 = 1 << 2;
    const NO_COMPRESSION: u16 = 1 << 3;
    const RATING_POINT: u16 = 1 << 4;
    /// T2 not usable.
    const T2_BAD: u16 = 1 << 5;
    const NO_RISE: u16 = 1 << 6;
    const EXPONENT_IMPLAUSIBLE: u16 = 1 << 7;
    /// The efficiency pair's grade not good.
    const EFFICIENCY: u16 = 1 << 8;
    /// The model's validity not good.
    const MODEL: u16 = 1 << 9;
    const STATIONARY: u16 = 1 << 10;
    const BELOW_RESOLUTION: u16 = 1 << 11;

    #[inline]
    fn set(&mut self, reason: u16, found: bool) {
        if found {
            self.0 |= reason;
        }
    }

    #[inline]
    fn has(self, reason: u16) -> bool {
        self.0 & reason != 0
    }

    /// The reasons from the model's validity grade.
    #[inline]
    fn model(&mut self, q: Quality) {
        self.set(Self::MODEL_BAD, q == Quality::Bad);
        self.set(Self::MODEL, q != Quality::Good);
    }

    fn condition(self) -> StageCondition {
        use StageCondition as C;
        const PRECEDENCE: [StageCondition; 13] = [
            C::InputBad,
            C::RatioOutOfRange,
            C::OutsideGasModel,
            C::NoCompression,
            C::RatingPoint,
            C::InputBad,
            C::NoTemperatureRise,
            C::ImplausibleTemperatureRise,
            C::EfficiencyAboveOne,
            C::OutsideGasModel,
            C::Stationary,
            C::BelowResolution,
            C::Normal,
        ];
        PRECEDENCE
            .get((self.0 | 1 << 12).trailing_zeros() as usize)
            .copied()
            .unwrap_or(C::Normal)
    }
}

/// Every output's quality from the per-output grades (bit i = the i-th
/// field, the order of [`CompressorUses::in_order`] and of `done`).
/// Out of line: one copy per number type instead of one per gas model
/// (measured: controller firmware 1,076 B smaller than inlined, for 22
/// instructions per stage on Cortex-M4F).
#[inline(never)]
fn settle_compressor_outputs<T: Real>(g: &OutputGrades, o: &mut CompressorResult<T>) {
    // The common case first: every output usable (computed, of no bad or
    // not-applicable use) and every value finite, tested once for all;
    // each output then good or uncertain as [`OutputGrades::settle`] gives
    // it. Otherwise (and always with soft float, where the one test saves
    // nothing: measured 60 instructions per stage slower on Cortex-M0)
    // output by output.
    if HARD_FLOAT && g.all_usable(u16::MAX) && T::all_finite(&compressor_values(o)) {
        settle_usable(o, g.uncertain());
        return;
    }
    // A loop: the rare case since the nominal finish (16 inlined copies
    // were 594 bytes more flash on Cortex-M4F).
    let mut bit = 1;
    for m in compressor_outputs(o) {
        g.settle(m, bit);
        bit <<= 1;
    }
}

/// The turned-around measured-stage tables ([`StageUses`]) for the
/// property inputs of the built-in models, built at compile time: the ideal
/// gas with constant k and with cp(T), Peng–Robinson, and the default a
/// table model keeps. A caller without a train's table grades from them as
/// a train does.
static BUILT_IN_USERS: [(PropertyInputs, Users); 4] = {
    const fn entry(
        temperature: bool,
        pressure: bool,
        compressibility_from_state: bool,
        state_functions: bool,
    ) -> (PropertyInputs, Users) {
        let p = PropertyInputs {
            temperature,
            pressure,
            compressibility_from_state,
            state_functions,
        };
        (p, Users::of(&StageUses::uses(p, false).in_order()))
    }
    [
        entry(false, false, false, false),
        entry(true, false, false, false),
        entry(true, true, true, true),
        entry(true, true, true, false),
    ]
};

/// Every output's quality for a caller without the train's table (a
/// rating-point query, or [`evaluate_compressor_within`]): from a built-in
/// table where one applies, else from the uses, built only when some slot
/// or check is not good.
#[inline(never)]
fn settle_compressor_untabled<T: Real>(
    g: &Grades,
    inputs: PropertyInputs,
    rating_point: bool,
    done: u16,
    o: &mut CompressorResult<T>,
) {
    // (All good: no table needed, see `OutputGrades::from_uses`.)
    let built_in = if g.all_good() {
        None
    } else {
        BUILT_IN_USERS
            .iter()
            .find(|(p, _)| !rating_point && *p == inputs)
    };
    let grades = match built_in {
        Some((_, users)) => OutputGrades::new(g, users, done, 0),
        None => OutputGrades::from_uses(
            g,
            || StageUses::uses(inputs, rating_point).in_order(),
            done,
            0,
        ),
    };
    settle_compressor_outputs(&grades, o);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compression::isentropic_discharge_temperature;
    use crate::gas::{IdealGas, AIR};

    fn inputs(p1: f64, t1: f64, p2: f64, t2: f64) -> CompressorInputs<f64> {
        CompressorInputs {
            suction_pressure: Measured::good(p1),
            suction_temperature: Measured::good(t1),
            discharge_pressure: Measured::good(p2),
            discharge_temperature: Measured::good(t2),
            mass_flow: Measured::good(2.0),
            compressibility: None,
        }
    }

    #[test]
    fn polytropic_n13_reproduces_cengel_values() {
        // Çengel & Boles worked example: air 100 -> 900 kPa from 300 K;
        // n = 1.3 gives T2 = 498.1 K and 246.4 kJ/kg.
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let t2 = isentropic_discharge_temperature(300.0, 9.0, 1.3);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 900e3, t2));
        // n = 1.3 < k: the book's process is cooled, so T2 is below the
        // isentropic T2 and the adiabatic efficiency (> 1) is flagged.
        assert_eq!(r.condition, StageCondition::EfficiencyAboveOne);
        assert_ne!(r.isentropic_efficiency.quality, Quality::Good);
        assert!((r.polytropic_exponent.value - 1.3).abs() < 1e-9);
        // R here is Ru/28.97 = 287.0 J/(kg K); the book uses 0.287 kJ/(kg K).
        assert!((r.polytropic_head.value / 1e3 - 246.4).abs() < 0.15);
        assert!((r.isentropic_head.value / 1e3 - 263.2).abs() < 0.15);
        assert!((r.isothermal_head.value / 1e3 - 189.2).abs() < 0.15);
        assert!((r.gas_power.value - 2.0 * r.actual_work.value).abs() < 1e-6);
    }

    #[test]
    fn adiabatic_stage_has_polytropic_above_isentropic_efficiency() {
        // n = 1.55 > k = 1.4: an uncooled stage with losses. For compression
        // the polytropic efficiency exceeds the isentropic one (common practice).
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let t2 = isentropic_discharge_temperature(300.0, 4.0, 1.55);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 400e3, t2));
        assert_eq!(r.condition, StageCondition::Normal);
        let (es, ep) = (r.isentropic_efficiency.value, r.polytropic_efficiency.value);
        assert!(0.0 < es && es < ep && ep < 1.0, "{es} {ep}");
        assert!((ep - (0.4 / 1.4) / (0.55 / 1.55)).abs() < 1e-12);
        assert!(r.isothermal_head.value < r.isentropic_head.value);
        assert!(r.isentropic_head.value < r.actual_work.value);
    }

    #[test]
    fn inconsistent_data_is_flagged_not_hidden() {
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 90e3, 320.0));
        assert_eq!(r.condition, StageCondition::NoCompression);
        assert_eq!(r.isentropic_head.quality, Quality::Bad);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 300e3, 295.0));
        assert_eq!(r.condition, StageCondition::NoTemperatureRise);
        assert_eq!(r.isentropic_efficiency.quality, Quality::Bad);
        assert_eq!(r.isentropic_head.quality, Quality::Good);
        // T2 a little below isentropic: efficiency just above 1, uncertain.
        let t2s = isentropic_discharge_temperature(300.0, 3.0, 1.4);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 300e3, t2s - 2.0));
        assert_eq!(r.condition, StageCondition::EfficiencyAboveOne);
        assert_eq!(r.isentropic_efficiency.quality, Quality::Uncertain);
        assert!(r.isentropic_efficiency.value > 1.0);
    }

    /// Consistency check (two gradings of the project's own rule): a
    /// caller without a train's table (built-in table or uses) grades
    /// every output as the train's table does, for each built-in model's
    /// property inputs and input qualities good, uncertain, bad and not
    /// applicable in every slot.
    #[test]
    fn untabled_grading_equals_the_tabled_one() {
        use crate::gas::{components, PengRobinson};
        fn check<G: GasModel<f64>>(gas: &G) {
            let qs = [
                Quality::Good,
                Quality::Uncertain,
                Quality::Bad,
                Quality::NotApplicable,
            ];
            let table = StageUses::new(gas.property_inputs());
            let limits = Limits::default();
            for (case, &(p2, t2)) in [(300e3, 420.0), (300e3, 290.0), (90e3, 330.0)]
                .iter()
                .enumerate()
            {
                for slot in 0..6 {
                    for q in qs {
                        let mut i = inputs(100e3, 300.0, p2, t2);
                        let m = |x: f64| Measured::new(x, q);
                        match slot {
                            0 => i.suction_pressure = m(100e3),
                            1 => i.suction_temperature = m(300.0),
                            2 => i.discharge_pressure = m(p2),
                            3 => i.discharge_temperature = m(t2),
                            4 => i.mass_flow = m(2.0),
                            _ => i.compressibility = Some((0.98, q)),
                        }
                        let (mut a, mut b) = (CompressorResult::bad(), CompressorResult::bad());
                        evaluate_compressor_within(gas, &i, &limits, &mut a);
                        evaluate_compressor_tabled(
                            gas,
                            &i,
                            &StageThresholds::of(&limits),
                            Some(&table),
                            &mut b,
                            &mut 0,
                        );
                        assert_eq!(a, b, "case {case} slot {slot} {q:?}");
                    }
                }
            }
        }
        check(&IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap());
        check(&IdealGas::<f64>::from_spec(&AIR, true, 1.0).unwrap());
        check(&PengRobinson::<f64, 1>::pure(components::METHANE).unwrap());
        // Outside the ideal gas's validity (p·K > T³ at these states): the
        // model checks uncertain, graded through the table's masks.
        let outside = IdealGas::<f64>::from_spec(&AIR, false, 1.0)
            .unwrap()
            .with_validity_limit(1e3);
        let r = evaluate_compressor(&outside, &inputs(100e3, 300.0, 300e3, 420.0));
        assert_eq!(r.gas_validity.quality, Quality::Uncertain);
        check(&outside);
    }

    /// Consistency check (the project's own rule, two implementations):
    /// a train's stage, which finishes the common case in
    /// `nominal_stage`, gives the result of the general path (a caller
    /// without the table never takes it) bit for bit, for seeded random
    /// stages around every check's boundary: input qualities, ratios near
    /// 1 and the stage maximum, rises near 0 and the resolution limit,
    /// flows near the stationary threshold, efficiencies above 1, supplied
    /// Z, models inside and outside their validity, f32 and f64. The
    /// tabled result is evaluated into one result for all cases, as a
    /// train's stage is: its qualities are kept from the case before when
    /// its grading key is the same (counted: it happens).
    #[test]
    fn nominal_finish_equals_the_general_path() {
        use crate::gas::{components, PengRobinson};
        fn check<T: Real, G: GasModel<T>>(gas: &G, seed: u32) -> usize {
            let mut next = crate::xorshift32(seed);
            let table = StageUses::new(gas.property_inputs());
            let limits = Limits::<T> {
                stationary_flow: T::of(0.5),
                ..Limits::default()
            };
            let thresholds = StageThresholds::of(&limits);
            let mut nominal = 0;
            let mut b = CompressorResult::bad();
            let mut settled = NOT_SETTLED;
            let mut kept = 0;
            for case in 0..20_000 {
                let mut draw = [0.0; 10];
                for d in &mut draw {
                    *d = f64::from(next() >> 8) / f64::from(1u32 << 24);
                }
                let [u0, u1, u2, u3, u4, u5, u6, u7, u8, u9] = draw;
                // Six 4-bit draws: good 11 in 16, uncertain 3, bad and
                // not applicable 1 each.
                let qualities = next();
                let quality = |k: u32| match (qualities >> (4 * k)) & 15 {
                    0 => Quality::Bad,
                    1 => Quality::NotApplicable,
                    2..=4 => Quality::Uncertain,
                    _ => Quality::Good,
                };
                let p1 = 50e3 + 5e6 * u0;
                let ratio = match (u1 * 6.0) as u32 {
                    0 => 1.0 + 0.02 * (u2 - 0.5),
                    1 => 50.0 * (1.0 + 0.01 * (u2 - 0.5)),
                    _ => 1.0 + 4.0 * u2,
                };
                let t1 = 220.0 + 200.0 * u3;
                let ideal_rise = t1 * (ratio.powf(0.2857) - 1.0);
                let rise = match (u4 * 6.0) as u32 {
                    0 => 10.0 * (u5 - 0.5),
                    1 => ideal_rise * (0.9 + 0.2 * u5),
                    _ => ideal_rise * (1.0 + 0.6 * u5),
                };
                let flow = if u6 < 0.2 { u7 } else { 10.0 * u7 };
                let m = |x: f64, k: u32| Measured::new(T::of(x), quality(k));
                let i = CompressorInputs {
                    suction_pressure: m(p1, 0),
                    suction_temperature: m(t1, 1),
                    discharge_pressure: m(p1 * ratio, 2),
                    discharge_temperature: m(t1 + rise, 3),
                    mass_flow: m(flow, 4),
                    compressibility: if u8 < 0.3 {
                        Some((T::of(0.9 + 0.15 * u9), quality(5)))
                    } else {
                        None
                    },
                };
                let mut a = CompressorResult::bad();
                evaluate_compressor_tabled(gas, &i, &thresholds, None, &mut a, &mut 0);
                // Twice: after the case before, then after itself (the
                // qualities kept whenever the nominal finish applies).
                for _ in 0..2 {
                    let before = settled;
                    evaluate_compressor_tabled(
                        gas,
                        &i,
                        &thresholds,
                        Some(&table),
                        &mut b,
                        &mut settled,
                    );
                    if before != NOT_SETTLED && settled == before {
                        kept += 1;
                    }
                    // Bit for bit (`==` would let -0.0 equal 0.0).
                    assert_eq!(
                        compressor_values(&a).map(|x| T::to_f64(x).to_bits()),
                        compressor_values(&b).map(|x| T::to_f64(x).to_bits()),
                        "case {case}: {i:?}"
                    );
                    assert_eq!(a, b, "case {case}: {i:?}");
                }
                let usable = [
                    a.pressure_ratio,
                    a.isentropic_discharge_temperature,
                    a.temperature_rise,
                    a.isentropic_head,
                    a.polytropic_head,
                    a.isothermal_head,
                    a.actual_work,
                    a.isentropic_efficiency,
                    a.polytropic_efficiency,
                    a.polytropic_exponent,
                    a.mass_flow,
                    a.gas_power,
                    a.work_above_isothermal,
                    a.power_above_isothermal,
                    a.compressibility,
                    a.k,
                ]
                .iter()
                .all(|m| m.quality.is_usable());
                if usable
                    && matches!(
                        a.condition,
                        StageCondition::Normal | StageCondition::OutsideGasModel
                    )
                {
                    nominal += 1;
                }
            }
            assert!(kept > 2_000, "{kept}");
            nominal
        }
        let air = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let counts = [
            check(&air, 1),
            check(&air.with_validity_limit(1e3), 2),
            check(&IdealGas::<f64>::from_spec(&AIR, true, 1.0).unwrap(), 3),
            check(&IdealGas::<f32>::from_spec(&AIR, false, 1.0).unwrap(), 4),
            check(
                &IdealGas::<f32>::from_spec(&AIR, false, 1.0)
                    .unwrap()
                    .with_validity_limit(1e3),
                5,
            ),
            check(&IdealGas::<f32>::from_spec(&AIR, true, 1.0).unwrap(), 6),
            check(
                &PengRobinson::<f64, 1>::pure(components::METHANE).unwrap(),
                7,
            ),
        ];
        // The common case is among them (the nominal finish is exercised).
        for n in counts {
            assert!(n > 2_000, "{counts:?}");
        }
    }

    /// Consistency check (the project's own rule, two implementations): the
    /// nominal finish's ranges of ratio and rise, built from limits that a
    /// train would refuse (maximum ratio not above 1, NaN, infinite or
    /// huge thresholds), give the general path's result bit for bit, at
    /// ratios and rises around 1, the maximum and the resolution limit.
    #[test]
    fn nominal_ranges_follow_unvalidated_limits() {
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let table = StageUses::new(gas.property_inputs());
        let variants: [fn(&mut Limits<f64>); 8] = [
            |_| {},
            |l| l.max_stage_ratio = 1.0,
            |l| l.max_stage_ratio = 0.5,
            |l| l.max_stage_ratio = f64::NAN,
            |l| l.max_stage_ratio = f64::INFINITY,
            |l| l.resolution_factor = f64::NAN,
            |l| l.resolution_factor = f64::MAX,
            |l| l.temperature_accuracy = f64::INFINITY,
        ];
        let mut nominal = 0;
        for (v, set) in variants.iter().enumerate() {
            let mut limits = Limits::default();
            set(&mut limits);
            let thresholds = StageThresholds::of(&limits);
            for ratio in [1.0_f64 + 1e-15, 1.001, 1.5, 3.0, 49.99, 50.0, 50.01, 1e300] {
                for rise_factor in [1e-12, 0.01, 1.0, 1.2, 1e300] {
                    let t2 = 300.0 + 300.0 * (ratio.powf(0.2857) - 1.0) * rise_factor;
                    let i = inputs(100e3, 300.0, 100e3 * ratio, t2);
                    let (mut a, mut b) = (CompressorResult::bad(), CompressorResult::bad());
                    evaluate_compressor_tabled(&gas, &i, &thresholds, None, &mut a, &mut 0);
                    let mut settled = NOT_SETTLED;
                    evaluate_compressor_tabled(
                        &gas,
                        &i,
                        &thresholds,
                        Some(&table),
                        &mut b,
                        &mut settled,
                    );
                    if settled != NOT_SETTLED {
                        nominal += 1;
                    }
                    assert_eq!(
                        compressor_values(&a).map(f64::to_bits),
                        compressor_values(&b).map(f64::to_bits),
                        "variant {v} ratio {ratio} rise {rise_factor}"
                    );
                    assert_eq!(a, b, "variant {v} ratio {ratio} rise {rise_factor}");
                }
            }
        }
        // The nominal finish is among them.
        assert!(nominal > 20, "{nominal}");
    }

    /// Consistency check: the pair grade is the worse of the two single
    /// grades, at and around every boundary, NaN and infinities included.
    #[test]
    fn efficiency_pair_grade_is_the_worse_single_grade() {
        let lim = 1.0 + efficiency_allowance::<f64>();
        let hi = crate::plausibility::EFFICIENCY_UNCERTAIN_MAX;
        let up = |x: f64| x + x.abs() * 1e-12 + 1e-300;
        let points = [
            f64::NAN,
            f64::NEG_INFINITY,
            -1.0,
            0.0,
            1e-300,
            0.5,
            1.0,
            lim,
            up(lim),
            hi,
            up(hi),
            2.0,
            f64::INFINITY,
        ];
        for a in points {
            for b in points {
                assert_eq!(
                    efficiency_pair_grade(a, b),
                    efficiency_grade(a).worst(efficiency_grade(b)),
                    "{a} {b}"
                );
            }
        }
    }

    /// Consistency check (two forms of the project's own rule): the
    /// condition from the precedence bits equals the first-match chain it
    /// replaced, for every combination of the check flags, of the model's
    /// and the efficiency's grades and of the four inputs' usability.
    #[test]
    fn condition_bits_equal_the_precedence_chain() {
        type K = CompressorChecks;
        let grades = [Quality::Good, Quality::Uncertain, Quality::Bad];
        let mut seen = 0;
        for flags in 0u32..1 << 11 {
            let bit = |i: u32| flags & (1 << i) != 0;
            for model in grades {
                for efficiency in grades {
                    let [ratio_out_of_range, no_compression, no_rise, exponent_implausible] =
                        [bit(0), bit(1), bit(2), bit(3)];
                    let [below_resolution, stationary] = [bit(4), bit(5)];
                    let [p1, p2, t1, t2] = [bit(6), bit(7), bit(8), bit(9)];
                    let rating_point = bit(10);
                    let mut c = K::default();
                    c.set(K::INPUT_BAD, p1 || p2 || t1);
                    c.set(K::RATING_POINT, rating_point);
                    c.set(K::T2_BAD, t2);
                    c.model(model);
                    c.set(K::NO_RISE, no_rise);
                    c.set(K::RATIO_OUT_OF_RANGE, ratio_out_of_range);
                    c.set(K::EFFICIENCY, efficiency != Quality::Good);
                    c.set(K::EXPONENT_IMPLAUSIBLE, exponent_implausible);
                    c.set(K::BELOW_RESOLUTION, below_resolution);
                    c.set(K::NO_COMPRESSION, no_compression);
                    c.set(K::STATIONARY, stationary);
                    use StageCondition as C;
                    let chain = if p1 || p2 || t1 {
                        C::InputBad
                    } else if ratio_out_of_range {
                        C::RatioOutOfRange
                    } else if model == Quality::Bad {
                        C::OutsideGasModel
                    } else if no_compression {
                        C::NoCompression
                    } else if rating_point {
                        C::RatingPoint
                    } else if t2 {
                        C::InputBad
                    } else if no_rise {
                        C::NoTemperatureRise
                    } else if exponent_implausible {
                        C::ImplausibleTemperatureRise
                    } else if efficiency != Quality::Good {
                        C::EfficiencyAboveOne
                    } else if model != Quality::Good {
                        C::OutsideGasModel
                    } else if stationary {
                        C::Stationary
                    } else if below_resolution {
                        C::BelowResolution
                    } else {
                        C::Normal
                    };
                    assert_eq!(c.condition(), chain, "{flags:b} {model:?} {efficiency:?}");
                    seen += 1;
                }
            }
        }
        assert_eq!(seen, 2048 * 9);
    }

    #[test]
    fn bad_suction_temperature_keeps_the_ratio_but_not_the_heads() {
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let mut i = inputs(100e3, 300.0, 300e3, 420.0);
        i.suction_temperature = Measured::new(300.0, Quality::Bad);
        let r = evaluate_compressor(&gas, &i);
        assert_eq!(r.pressure_ratio.quality, Quality::Good);
        assert!((r.pressure_ratio.value - 3.0).abs() < 1e-12);
        assert_eq!(r.isentropic_head.quality, Quality::Bad);
        assert_eq!(r.isentropic_efficiency.quality, Quality::Bad);
    }
}
