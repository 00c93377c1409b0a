//! Intercooler (and aftercooler) performance from temperatures, pressures
//! and flows.
//!
//! Sources:
//! - Thermal effectiveness as the ratio of the gas temperature drop to the
//!   largest possible drop, (Tg,in - Tg,out) / (Tg,in - Tc,in): the
//!   effectiveness definition of Incropera & DeWitt, *Fundamentals of Heat
//!   and Mass Transfer*, ch. 11 (effectiveness-NTU method), with the gas as
//!   the stream of smaller heat-capacity rate (common practice for
//!   gas-to-water intercoolers, where the water rate is several times larger).
//! - Counterflow log-mean temperature difference and UA = Q / LMTD
//!   (Incropera & DeWitt ch. 11), available when the coolant outlet is
//!   measured; a falling UA at steady state is the usual fouling indicator
//!   (common practice).
//! - Approach temperature, gas outlet minus coolant inlet (common practice).
//! - Heat duty from the gas side as m·(h_in − h_out) with the enthalpies of
//!   the configured gas model (first law, steady flow), the same basis as the
//!   stage work, so a stage's gas power and the following cooler's duty
//!   balance. For the ideal gas with compressibility Z this is m·Z·cp·ΔT
//!   (before the gas-model seam it was m·cp·ΔT, without Z).
//! - LMTD near equal terminal differences: with u = (a - b)/(a + b),
//!   ln(a/b) = 2·atanh(u), so LMTD = (a + b)/2 · u/atanh(u) and
//!   u/atanh(u) = 1/(1 + u²/3 + u⁴/5 + u⁶/7 + …) (the Taylor series of
//!   atanh, e.g. Abramowitz & Stegun 4.6.33); no logarithm of a ratio near
//!   one, so no cancellation in f32.
//!
//! Qualities follow the dependency rule ([`crate::dependency::cooler_uses`]).

use crate::dependency::{cooler_users, slot, Grades, OutputGrades};
use crate::gas::PropertyInputs;
use crate::plausibility::Limits;
use crate::quality::{Measured, Quality};
use crate::real::{Real, HARD_FLOAT};

/// Smallest inlet temperature difference (gas in - coolant in) for which the
/// effectiveness is defined, K.
pub const MIN_EFFECTIVENESS_SPAN_K: f64 = 0.5;
/// Temperature noise tolerated before "outlet above inlet" is declared, K.
pub const TEMPERATURE_NOISE_K: f64 = 0.5;

/// Configuration of a cooler after a stage.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerConfig<T> {
    /// Coolant specific heat, J/(kg K) (water about 4180, common practice).
    pub coolant_cp: T,
}

/// What the cooler evaluation found about its inputs, besides qualities.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CoolerCondition {
    /// Consistent.
    Normal,
    /// A temperature needed for the result is bad.
    InputBad,
    /// Gas outlet warmer than gas inlet (beyond noise).
    OutletAboveInlet,
    /// Gas outlet colder than the coolant inlet (impossible).
    OutletBelowCoolant,
    /// Gas inlet not warmer than the coolant inlet: nothing to cool.
    NoDrivingDifference,
    /// The gas temperature drop is inside the temperature noise band: the
    /// duty (and UA) are uncertain.
    DutyWithinNoise,
    /// No gas flow (at or below the stationary threshold): UA is
    /// uncertain (a zero duty is not fouling).
    NoGasFlow,
}

/// Results of one cooler.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerResult<T> {
    /// Gas temperature drop Tg,in - Tg,out, K.
    pub gas_temperature_drop: Measured<T>,
    /// Approach Tg,out - Tc,in, K.
    pub approach: Measured<T>,
    /// Thermal effectiveness, -.
    pub effectiveness: Measured<T>,
    /// Heat removed from the gas, m·(h_in − h_out), W.
    pub heat_duty: Measured<T>,
    /// Gas-side pressure drop, Pa.
    pub pressure_drop: Measured<T>,
    /// Gas-side pressure drop over inlet pressure, -.
    pub relative_pressure_drop: Measured<T>,
    /// Coolant temperature rise, K (bad if the outlet is not measured).
    pub coolant_temperature_rise: Measured<T>,
    /// Counterflow log-mean temperature difference, K.
    pub lmtd: Measured<T>,
    /// Overall conductance Q / LMTD, W/K.
    pub ua: Measured<T>,
    /// (gas duty - coolant duty) / gas duty, - (needs coolant flow).
    pub heat_balance_error: Measured<T>,
    /// Temperature rise across the next stage, K (the interstage temperature
    /// rise the cooler's performance feeds into; bad for the last stage).
    pub next_stage_temperature_rise: Measured<T>,
    /// What the evaluation found.
    pub condition: CoolerCondition,
}

impl<T: Real> CoolerResult<T> {
    /// All results bad.
    pub fn bad() -> Self {
        let b = Measured::bad();
        CoolerResult {
            gas_temperature_drop: b,
            approach: b,
            effectiveness: b,
            heat_duty: b,
            pressure_drop: b,
            relative_pressure_drop: b,
            coolant_temperature_rise: b,
            lmtd: b,
            ua: b,
            heat_balance_error: b,
            next_stage_temperature_rise: b,
            condition: CoolerCondition::InputBad,
        }
    }
}

/// Validated cooler inputs in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerInputs<T> {
    /// Gas inlet temperature (the stage discharge), K.
    pub gas_inlet_temperature: Measured<T>,
    /// Gas outlet temperature, K.
    pub gas_outlet_temperature: Measured<T>,
    /// Coolant inlet temperature, K.
    pub coolant_inlet_temperature: Measured<T>,
    /// Coolant outlet temperature, K (bad if not measured).
    pub coolant_outlet_temperature: Measured<T>,
    /// Gas inlet pressure, Pa.
    pub gas_inlet_pressure: Measured<T>,
    /// Gas outlet pressure, Pa.
    pub gas_outlet_pressure: Measured<T>,
    /// Gas mass flow, kg/s.
    pub gas_mass_flow: Measured<T>,
    /// Coolant mass flow, kg/s (bad if not measured).
    pub coolant_mass_flow: Measured<T>,
    /// Gas enthalpy drop h(inlet) − h(outlet) from the gas model, J/kg,
    /// with the model's quality for the two states.
    pub gas_enthalpy_drop: Measured<T>,
    /// Coolant cp, J/(kg K).
    pub coolant_cp: T,
}

// Bits of the computed / suspect masks, one per result field.
const F_DROP: u16 = 1 << 0;
const F_APPROACH: u16 = 1 << 1;
const F_EFF: u16 = 1 << 2;
const F_DUTY: u16 = 1 << 3;
const F_DP: u16 = 1 << 4;
const F_REL_DP: u16 = 1 << 5;
const F_COOLANT_RISE: u16 = 1 << 6;
const F_LMTD: u16 = 1 << 7;
const F_UA: u16 = 1 << 8;
const F_BALANCE: u16 = 1 << 9;

/// Every output of a cooler result with its `F_*` bit, in declaration
/// order (the one list both grading paths of [`evaluate_cooler_packed`]
/// walk).
#[inline(always)]
fn fields_with_bits<T: Real>(out: &mut CoolerResult<T>) -> [(&mut Measured<T>, u16); 10] {
    [
        (&mut out.gas_temperature_drop, F_DROP),
        (&mut out.approach, F_APPROACH),
        (&mut out.effectiveness, F_EFF),
        (&mut out.heat_duty, F_DUTY),
        (&mut out.pressure_drop, F_DP),
        (&mut out.relative_pressure_drop, F_REL_DP),
        (&mut out.coolant_temperature_rise, F_COOLANT_RISE),
        (&mut out.lmtd, F_LMTD),
        (&mut out.ua, F_UA),
        (&mut out.heat_balance_error, F_BALANCE),
    ]
}

/// Counterflow LMTD from the two terminal differences; returns `None` unless
/// both are positive. Well conditioned everywhere: near equal differences
/// (|u| = |a - b|/(a + b) below 0.2 in f32, 0.01 in f64) it uses the atanh
/// series (module header; terms to u⁸, truncation about u¹⁰/11, below the
/// type's rounding), else (a - b)/ln(a/b), whose logarithm is then of a
/// ratio at least 1.5 (f32) or 1.02 (f64) away from one.
#[inline]
pub fn lmtd_counterflow<T: Real>(dt_a: T, dt_b: T) -> Option<T> {
    lmtd_counterflow_ordered::<T, false, { !HARD_FLOAT }>(dt_a, dt_b)
}

/// [`lmtd_counterflow`]; `NOT_NAN`: neither difference is NaN (the
/// bounded cooler evaluation's differences of finite inputs), so without an
/// FPU the positivity tests may be compares on the bits
/// ([`Real::less_than`]: no library call).
///
/// The series test |u| < 0.2 (f32) needs u = (a - b)/(a + b), a division
/// the logarithm's branch does not use. `RATIO_FIRST` (without an FPU,
/// where a division is a library call): it is made only where the ratio
/// a/b (which that branch needs anyway) is within [0.66, 1.51] (f32) or
/// [0.98, 1.021] (f64). Outside, |u| exceeds the series bound by more
/// than 1 % (|u| = |r - 1|/(r + 1) is at least 0.2032 for r = 1.51 and
/// 0.2048 for r = 0.66), far more than the few roundings between r, u and
/// their computed values, so the computed |u| is not below the bound
/// either and the branch taken is the same (an infinite or NaN ratio lies
/// outside the bit range, as its NaN u fails the test): the same result,
/// bit for bit.
#[inline(always)]
fn lmtd_counterflow_ordered<T: Real, const NOT_NAN: bool, const RATIO_FIRST: bool>(
    dt_a: T,
    dt_b: T,
) -> Option<T> {
    let positive = |x: T| {
        if NOT_NAN && !HARD_FLOAT {
            T::less_than(T::ZERO, x)
        } else {
            x > T::ZERO
        }
    };
    if !(positive(dt_a) && positive(dt_b)) {
        return None;
    }
    let diff = dt_a - dt_b;
    let ratio = dt_a / dt_b;
    // Series range: where its truncation (about u^10/11) is below the
    // type's rounding: |u| < 0.2 in f32, |u| < 0.01 in f64; the ratios
    // outside which |u| is surely not below it (see above).
    let f32_like = T::EPSILON > T::of(1e-10);
    let (series_below, ratio_lo, ratio_hi) = if f32_like {
        (0.2, 0.66, 1.51)
    } else {
        (0.01, 0.98, 1.021)
    };
    // `ratio` is positive, infinite or NaN: ordered as its bits. With an
    // FPU the division is as cheap as the range test: always made.
    if !RATIO_FIRST || T::within_positive(ratio, T::of(ratio_lo), T::of(ratio_hi)) {
        let sum = dt_a + dt_b;
        let u = diff / sum;
        if T::abs(u) < T::of(series_below) {
            return Some(lmtd_series(sum, u));
        }
    }
    Some(diff / T::ln(ratio))
}

/// (a + b)/2 · u/atanh(u) by the series (module header), for |u| below the
/// series bound. Out of line: the rare branch, whose constants would
/// otherwise be held in registers across a caller's whole loop.
#[cold]
#[inline(never)]
fn lmtd_series<T: Real>(sum: T, u: T) -> T {
    let u2 = u * u;
    let series = T::ONE
        + u2 * (T::of(1.0 / 3.0)
            + u2 * (T::of(1.0 / 5.0) + u2 * (T::of(1.0 / 7.0) + u2 * T::of(1.0 / 9.0))));
    T::of(0.5) * sum / series
}

/// Evaluates one cooler with the default [`Limits`] and a gas cp that
/// depends on the temperatures and pressures (the safe assumption);
/// [`evaluate_cooler_into`] returning the result.
pub fn evaluate_cooler<T: Real>(inp: &CoolerInputs<T>) -> CoolerResult<T> {
    let mut out = CoolerResult::bad();
    evaluate_cooler_into(inp, &mut out);
    out
}

/// Evaluates one cooler into `out` (every field overwritten; no result
/// copy) with the default [`Limits`]. Inputs passed the sensor boundary;
/// never panics.
pub fn evaluate_cooler_into<T: Real>(inp: &CoolerInputs<T>, out: &mut CoolerResult<T>) {
    let all = PropertyInputs {
        temperature: true,
        pressure: true,
        compressibility_from_state: true,
        state_functions: false,
    };
    evaluate_cooler_within(inp, &Limits::default(), all, Quality::Good, out);
}

/// Evaluates one cooler into `out` against `limits`; `cp_inputs` says what
/// the gas cp was evaluated from (the dependency rule) and `cp_fit` whether
/// the gas model was inside its fitted range there (uncertain: the duty,
/// UA and heat balance are at most uncertain).
pub fn evaluate_cooler_within<T: Real>(
    inp: &CoolerInputs<T>,
    limits: &Limits<T>,
    cp_inputs: PropertyInputs,
    cp_fit: Quality,
    out: &mut CoolerResult<T>,
) {
    evaluate_cooler_bounded::<T, false>(inp, limits, cp_inputs, cp_fit, out);
}

// The inputs' two-bit quality fields in `evaluate_cooler_bounded`'s packed
// word (in this order), by their high bit (set: not usable).
pub(crate) const I_TIN: u32 = 2;
pub(crate) const I_TOUT: u32 = 2 << 2;
pub(crate) const I_TC: u32 = 2 << 4;
pub(crate) const I_TCO: u32 = 2 << 6;
pub(crate) const I_PIN: u32 = 2 << 8;
pub(crate) const I_POUT: u32 = 2 << 10;
pub(crate) const I_FLOW: u32 = 2 << 12;
pub(crate) const I_MC: u32 = 2 << 14;
pub(crate) const I_DH: u32 = 2 << 16;
const NOT_USABLE: u32 = I_TIN | I_TOUT | I_TC | I_TCO | I_PIN | I_POUT | I_FLOW | I_MC | I_DH;
/// `q` as the two-bit field `input` of the packed word (`input` is the
/// field's `I_*` high bit): the word [`evaluate_cooler_packed`] takes,
/// built by its caller as each input is produced.
#[inline(always)]
pub(crate) const fn packed_quality(q: Quality, input: u32) -> u32 {
    (q as u32) * (input >> 1)
}

/// Both bits of the eight inputs that are dependency slots (all but the
/// enthalpy drop, which enters through the duty's checks).
const SLOT_INPUTS: u32 = (1 << 16) - 1;
const _: () = assert!(
    Quality::Good as u32 == 0
        && Quality::Uncertain as u32 == 1
        && Quality::Bad as u32 == 2
        && Quality::NotApplicable as u32 == 3,
    "the packed qualities of the cooler evaluation rely on these discriminants"
);

/// Every result field's bit.
const ALL_FIELDS: u16 = (1 << 10) - 1;

/// [`evaluate_cooler_within`], inlined into its caller (the train: no
/// inputs struct in memory, no call). `BOUNDED`: every usable input value
/// is within limits that passed [`Limits::first_invalid`] (the train's
/// sensor boundary) and every unusable one is the boundary's zero, so only
/// the results that can be computed from usable inputs and still not be
/// finite (the LMTD, UA and heat balance: a ratio or logarithm) need a
/// finiteness test and the compares of input differences may be ordered
/// compares ([`Real::less_than`]). The others are differences of the
/// inputs, a ratio over a span of at least [`MIN_EFFECTIVENESS_SPAN_K`], or
/// the duty (tested where it is computed), finite when the inputs are
/// (validated limits, [`Limits::first_invalid`]: every bound finite,
/// temperatures in [1, 2000] K, pressures in [1e-3, 1e10] Pa). Otherwise (a
/// caller's own inputs) every result but the duty gets one. Either way a
/// computed value that is not finite is bad.
#[inline(always)]
pub(crate) fn evaluate_cooler_bounded<T: Real, const BOUNDED: bool>(
    inp: &CoolerInputs<T>,
    limits: &Limits<T>,
    cp_inputs: PropertyInputs,
    cp_fit: Quality,
    out: &mut CoolerResult<T>,
) {
    let (tin, tout, tc, tco) = (
        inp.gas_inlet_temperature,
        inp.gas_outlet_temperature,
        inp.coolant_inlet_temperature,
        inp.coolant_outlet_temperature,
    );
    let (pin, pout, flow, mc) = (
        inp.gas_inlet_pressure,
        inp.gas_outlet_pressure,
        inp.gas_mass_flow,
        inp.coolant_mass_flow,
    );
    let dh = inp.gas_enthalpy_drop;
    // The inputs' qualities two bits each, in one word (the discriminants:
    // good 0, uncertain 1, bad 2, not applicable 3; the high bit of a pair
    // is set exactly when the input is not usable). One register instead
    // of nine flags: every usability test below is one mask test.
    let qualities = [
        tin.quality,
        tout.quality,
        tc.quality,
        tco.quality,
        pin.quality,
        pout.quality,
        flow.quality,
        mc.quality,
        dh.quality,
    ];
    let packed = qualities
        .iter()
        .enumerate()
        .fold(0u32, |a, (i, &q)| a | (q as u32) << (2 * i));
    evaluate_cooler_packed::<T, BOUNDED>(inp, packed, limits, cp_inputs, cp_fit, out);
    // A lone cooler: no next stage (the train sets the next stage's rise).
    out.next_stage_temperature_rise = Measured::bad();
}

/// [`evaluate_cooler_bounded`] with the inputs' qualities given as its
/// packed word (`packed`: the [`packed_quality`] of every input; their
/// qualities in `inp` are not read), which the train builds as it
/// validates each input: one register then, not nine live qualities.
#[inline(always)]
pub(crate) fn evaluate_cooler_packed<T: Real, const BOUNDED: bool>(
    inp: &CoolerInputs<T>,
    packed: u32,
    limits: &Limits<T>,
    cp_inputs: PropertyInputs,
    cp_fit: Quality,
    out: &mut CoolerResult<T>,
) {
    let (tin, tout, tc, tco) = (
        inp.gas_inlet_temperature.value,
        inp.gas_outlet_temperature.value,
        inp.coolant_inlet_temperature.value,
        inp.coolant_outlet_temperature.value,
    );
    let (pin, pout, flow, mc) = (
        inp.gas_inlet_pressure.value,
        inp.gas_outlet_pressure.value,
        inp.gas_mass_flow.value,
        inp.coolant_mass_flow.value,
    );
    let dh = inp.gas_enthalpy_drop.value;
    let unusable = packed & NOT_USABLE;
    let ok = |inputs: u32| unusable & inputs == 0;
    let noise = limits.temperature_noise;
    // `a < b` of values that are not NaN: differences of finite inputs and
    // the limits. Bounded, every input value is finite (usable ones within
    // validated limits, the others the boundary's zero), so without an FPU
    // the ordered compare on the bits applies ([`Real::less_than`]: no
    // library call); otherwise, and with an FPU, the float compare.
    #[cfg(all(target_arch = "arm", not(target_abi = "eabihf")))]
    let lt = |a: T, b: T| if BOUNDED { T::less_than(a, b) } else { a < b };
    #[cfg(not(all(target_arch = "arm", not(target_abi = "eabihf"))))]
    let lt = |a: T, b: T| a < b;
    // Which outputs the inputs' usability allows (bit i: the i-th field in
    // declaration order): each output needs the inputs it is computed
    // from. With every input usable (the usual scan) all of them, without
    // a test per output.
    let usable_fields = if unusable == 0 {
        ALL_FIELDS
    } else {
        let allow = |inputs: u32, bits: u16| if ok(inputs) { bits } else { 0 };
        allow(I_PIN | I_POUT, F_DP | F_REL_DP)
            | allow(I_TIN | I_TOUT, F_DROP)
            | allow(I_TIN | I_TOUT | I_FLOW | I_DH, F_DUTY)
            | allow(I_TOUT | I_TC, F_APPROACH)
            | allow(I_TIN | I_TOUT | I_TC, F_EFF)
            | allow(I_TC | I_TCO, F_COOLANT_RISE)
            | allow(I_TIN | I_TOUT | I_TC | I_TCO, F_LMTD)
            | allow(I_TIN | I_TOUT | I_TC | I_TCO | I_FLOW | I_DH, F_UA)
            | allow(
                I_TIN | I_TOUT | I_TC | I_TCO | I_FLOW | I_DH | I_MC,
                F_BALANCE,
            )
    };
    // Every difference and ratio of the inputs at once, whether its output
    // is computed or not: an output whose inputs are not usable is not in
    // `done` and is settled bad below (its value overwritten), and a
    // check on it does not count (a suspect bit counts only for a computed
    // output: one not computed is bad, which uncertain does not change).
    // Bounded, unusable values are the boundary's zero, so every
    // difference is finite and the ordered compares apply.
    let dp = pin - pout;
    let relative_dp = dp / pin;
    let drop = tin - tout;
    // Also the LMTD's cold-end difference (one subtraction for both).
    let approach = tout - tc;
    let span = tin - tc;
    let rise = tco - tc;
    let eff = drop / span;
    // Duty from the gas model's enthalpy drop (its quality: the model's
    // validity at the two states and the supplied Z); a model outside its
    // fitted or valid range makes the duty and what uses it suspect, no
    // valid state makes them bad.
    let duty = flow * dh;
    // The field-local checks (each counts for its output where that is
    // computed, which implies the inputs the check reads are usable): a
    // negative pressure drop; the outlet above the inlet; the outlet below
    // the coolant; an effectiveness outside [0, 1]; a falling coolant; the
    // duty and what uses it inside the noise band or from a gas model
    // outside its fitted or valid range; UA also without flow (a zero duty
    // is not fouling; a negative duty in the noise band gives a negative
    // UA).
    let effectiveness_in_unit_range = || {
        // `0 <= eff <= 1` (false for NaN); without an FPU on the bits
        // ([`Real::within_nonnegative`], exact for every value, NaN and
        // -0.0 included: no library call).
        if HARD_FLOAT {
            eff >= T::ZERO && eff <= T::ONE
        } else {
            T::within_nonnegative(eff, T::ZERO, T::ONE)
        }
    };
    let cp_suspect = cp_fit != Quality::Good || packed & (3 * (I_DH >> 1)) != 0;
    let flag = |c: bool, bits: u16| if c { bits } else { 0 };
    // The usual cooler first: no check fires (the same compares as below,
    // each false, tested in turn and left at the first that is not), so
    // only the gas model's suspicion is left to mark. The drop not below
    // +noise implies it is not below -noise where the noise is not
    // negative (bounded: validated limits, noise in [0, 10] K); a caller's
    // own limits get the second test too.
    let typical = !lt(drop, noise)
        && (BOUNDED || !lt(drop, -noise))
        && !lt(approach, -noise)
        && lt(T::of(MIN_EFFECTIVENESS_SPAN_K), span)
        && lt(limits.stationary_flow, flow)
        && !lt(dp, T::ZERO)
        && !lt(rise, -noise)
        && effectiveness_in_unit_range();
    // Whether the inputs allow the usual cooler's early exit below: every
    // slot good and no check fired (one word, held across the LMTD).
    let usual_inputs = (packed & SLOT_INPUTS) | u32::from(!typical) << 31;
    // `suspect`: the outputs a check marks uncertain; `found`: the
    // condition's bits; `excluded`: the outputs the checks leave out.
    // (The usual cooler's suspect bits, the gas model's only, are set where
    // they are used, after its early exit below.)
    let (suspect, found, excluded) = if typical {
        (0, 0, 0)
    } else {
        let outlet_above_inlet = lt(drop, -noise);
        let within_noise = !outlet_above_inlet && lt(drop, noise);
        let below_coolant = lt(approach, -noise);
        let no_span = !lt(T::of(MIN_EFFECTIVENESS_SPAN_K), span);
        let stationary = !lt(limits.stationary_flow, flow);
        let weak_duty = within_noise || cp_suspect;
        let suspect = flag(lt(dp, T::ZERO), F_DP | F_REL_DP)
            | flag(outlet_above_inlet, F_DROP)
            | flag(weak_duty, F_DUTY | F_BALANCE)
            | flag(weak_duty || stationary, F_UA)
            | flag(below_coolant, F_APPROACH)
            | flag(!effectiveness_in_unit_range(), F_EFF)
            | flag(lt(rise, -noise), F_COOLANT_RISE);
        // What the evaluation found, in order of precedence: the first of
        // its bits (read only with usable gas and coolant inlet
        // temperatures; the flow's usability is tested here).
        let flow_usable = ok(I_FLOW);
        let found = u32::from(outlet_above_inlet)
            | u32::from(below_coolant) << 1
            | u32::from(no_span) << 2
            | u32::from(within_noise && flow_usable) << 3
            | u32::from(stationary && flow_usable) << 4;
        // No effectiveness or duty with the outlet above the inlet, no
        // effectiveness without a driving difference (and what uses them).
        let excluded =
            flag(outlet_above_inlet, F_EFF | F_DUTY | F_UA | F_BALANCE) | flag(no_span, F_EFF);
        (suspect, found, excluded)
    };
    // Computed outputs: the usable ones, less those the checks exclude (no
    // effectiveness or duty with the outlet above the inlet, no
    // effectiveness without a driving difference, no duty that is not
    // finite, and what uses them). A value that is not finite counts as not
    // computed (bad, as the rule says).
    // The duty's finiteness: with an FPU tested below with the other
    // results that may overflow, without one here (where LLVM keeps the
    // test on the bits: measured, no library compare).
    let duty_users = F_DUTY | F_UA | F_BALANCE;
    let mut done =
        usable_fields & !excluded & !flag(!HARD_FLOAT && !T::is_finite(duty), duty_users);
    let (mut lmtd, mut ua, mut balance) = (T::ZERO, T::ZERO, T::ZERO);
    if done & F_LMTD != 0 {
        let dt_hot = tin - tco;
        match lmtd_counterflow_ordered::<T, BOUNDED, { !HARD_FLOAT }>(dt_hot, approach) {
            Some(l) => {
                lmtd = l;
                ua = duty / l;
            }
            None => done &= !(F_LMTD | F_UA),
        }
    }
    // A duty that is not finite (NaN or not) leaves the heat balance out
    // below, whatever this compare gives.
    if done & F_BALANCE != 0 && lt(T::ZERO, duty) {
        let coolant_duty = mc * inp.coolant_cp * rise;
        balance = (duty - coolant_duty) / duty;
    } else {
        done &= !F_BALANCE;
    }
    // The results that may not be finite with bounded inputs (the duty: a
    // product of the model's drop; the others a ratio or logarithm; one
    // not computed is zero here). With an FPU usually all finite, one test
    // ([`Real::all_finite`]), then each; without one each (on its bits).
    let may_overflow = [
        (duty, if HARD_FLOAT { duty_users } else { 0 }),
        (lmtd, F_LMTD),
        (ua, F_UA),
        (balance, F_BALANCE),
    ];
    if !HARD_FLOAT || !T::all_finite(&may_overflow.map(|(v, _)| v)) {
        for (v, bits) in may_overflow {
            done &= !flag(!T::is_finite(v), bits);
        }
    }
    out.gas_temperature_drop.value = drop;
    out.approach.value = approach;
    out.effectiveness.value = eff;
    out.heat_duty.value = duty;
    out.pressure_drop.value = dp;
    out.relative_pressure_drop.value = relative_dp;
    out.coolant_temperature_rise.value = rise;
    out.lmtd.value = lmtd;
    out.ua.value = ua;
    out.heat_balance_error.value = balance;
    // A caller's own inputs: every result but the duty (tested above) may
    // be computed from values that are not finite.
    if !BOUNDED {
        let values = [
            (drop, F_DROP),
            (approach, F_APPROACH),
            (eff, F_EFF),
            (dp, F_DP),
            (relative_dp, F_REL_DP),
            (rise, F_COOLANT_RISE),
        ];
        // With an FPU usually all finite: one test ([`Real::all_finite`]),
        // then each; without one each.
        if !HARD_FLOAT || !T::all_finite(&values.map(|(v, _)| v)) {
            for (v, bit) in values {
                done &= !flag(!T::is_finite(v), bit);
            }
        }
    }

    // The usual cooler (no check fired, every input slot good, every output
    // computed): no condition found, the inputs usable, so `Normal`, and at
    // most the gas model's suspicion marked (the duty and what uses it
    // uncertain): what the grades below give, without their tests.
    let weak = F_DUTY | F_UA | F_BALANCE;
    // (One test of one word: the slots' bits, the outputs not computed,
    // and a bit above both where a check fired.)
    let not_usual = usual_inputs | u32::from(done ^ ALL_FIELDS) << 16;
    if not_usual == 0 {
        let q_weak = if cp_suspect {
            Quality::Uncertain
        } else {
            Quality::Good
        };
        for (m, bit) in fields_with_bits(out) {
            m.quality = if bit & weak != 0 {
                q_weak
            } else {
                Quality::Good
            };
        }
        out.condition = CoolerCondition::Normal;
        return;
    }
    let suspect = if typical {
        flag(cp_suspect, weak)
    } else {
        suspect
    };
    settle_outside_usual(out, packed, cp_inputs, done, suspect, found);
}

/// Grades a cooler's outputs in `out` outside the usual cooler: the
/// integer work on the masks by [`cooler_grades`], then each field's
/// quality written and, where it is not usable, its value set to the
/// placeholder zero (what `Measured::bad` and `Measured::not_applicable`
/// give). Out of line and cold: the caller's usual path keeps its registers.
/// The next stage's rise is not written here: the train writes it (the next
/// stage's result), `evaluate_cooler_bounded` sets it bad.
#[cold]
#[inline(never)]
fn settle_outside_usual<T: Real>(
    out: &mut CoolerResult<T>,
    packed: u32,
    cp_inputs: PropertyInputs,
    done: u16,
    suspect: u16,
    found: u32,
) {
    let (grades, condition) = cooler_grades(packed, cp_inputs, done, suspect, found);
    for (i, (m, _)) in fields_with_bits(out).into_iter().enumerate() {
        let bits = grades >> (2 * i);
        m.quality = quality_of_bits(bits);
        // Bad or not applicable (the discriminant's high bit).
        if bits & 2 != 0 {
            m.value = T::ZERO;
        }
    }
    out.condition = condition;
}

/// A quality from its discriminant in the low two bits of `bits` (good 0,
/// uncertain 1, bad 2, not applicable 3).
#[inline(always)]
const fn quality_of_bits(bits: u32) -> Quality {
    match bits & 3 {
        0 => Quality::Good,
        1 => Quality::Uncertain,
        2 => Quality::Bad,
        _ => Quality::NotApplicable,
    }
}

/// The grading of [`evaluate_cooler_packed`] outside the usual cooler (a
/// slot not good, an output not computed or a check fired): the condition
/// (from the inputs' `packed` qualities and the `found` bits) and every
/// output's quality by the dependency rule ([`OutputGrades::new`] over the
/// cooler table for `cp_inputs`; the outputs not in `done` bad, those in
/// `suspect` at most uncertain), output i as the discriminant in bits
/// 2i..2i + 2 of the word. Integer work only, so not generic: one compact
/// copy, out of line and cold, whatever the float type and the caller.
#[cold]
#[inline(never)]
fn cooler_grades(
    packed: u32,
    cp_inputs: PropertyInputs,
    done: u16,
    suspect: u16,
    found: u32,
) -> (u32, CoolerCondition) {
    let condition = if packed & (I_TIN | I_TOUT | I_TC) != 0 {
        CoolerCondition::InputBad
    } else if found == 0 {
        CoolerCondition::Normal
    } else {
        const FIRST_FOUND: [CoolerCondition; 5] = [
            CoolerCondition::OutletAboveInlet,
            CoolerCondition::OutletBelowCoolant,
            CoolerCondition::NoDrivingDifference,
            CoolerCondition::DutyWithinNoise,
            CoolerCondition::NoGasFlow,
        ];
        let first = found.trailing_zeros() as usize;
        FIRST_FOUND
            .get(first)
            .copied()
            .unwrap_or(CoolerCondition::Normal)
    };
    // Every output at once: the table's bits (`F_*` = declaration order).
    // With every input slot good the table is not looked at.
    let o = if packed & SLOT_INPUTS == 0 {
        OutputGrades::all_slots_good(done, suspect)
    } else {
        let slots = [
            slot::T2,
            slot::GAS_OUT_T,
            slot::COOLANT_IN_T,
            slot::COOLANT_OUT_T,
            slot::P2,
            slot::GAS_OUT_P,
            slot::FLOW,
            slot::COOLANT_FLOW,
        ];
        let mut g = Grades::new();
        for (i, s) in slots.into_iter().enumerate() {
            g.first_slot(s, quality_of_bits(packed >> (2 * i)));
        }
        OutputGrades::new(&g, cooler_users(cp_inputs), done, suspect)
    };
    let mut grades = 0;
    for i in 0..10 {
        grades |= (o.quality_of(1 << i) as u32) << (2 * i);
    }
    (grades, condition)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The bounded evaluation as it was before it computed every difference
    /// at once and took the computed outputs from one mask (a test-only
    /// copy, the reference of
    /// `one_pass_evaluation_equals_the_branch_per_output_one`).
    #[allow(clippy::too_many_lines)]
    fn reference_bounded<T: Real, const BOUNDED: bool>(
        inp: &CoolerInputs<T>,
        limits: &Limits<T>,
        cp_inputs: PropertyInputs,
        cp_fit: Quality,
        out: &mut CoolerResult<T>,
    ) {
        let (tin, tout, tc, tco) = (
            inp.gas_inlet_temperature,
            inp.gas_outlet_temperature,
            inp.coolant_inlet_temperature,
            inp.coolant_outlet_temperature,
        );
        let (pin, pout, flow, mc) = (
            inp.gas_inlet_pressure,
            inp.gas_outlet_pressure,
            inp.gas_mass_flow,
            inp.coolant_mass_flow,
        );
        let dh = inp.gas_enthalpy_drop;
        // The inputs' qualities two bits each, in one word (the discriminants:
        // good 0, uncertain 1, bad 2, not applicable 3; the high bit of a pair
        // is set exactly when the input is not usable). One register instead
        // of nine flags: every usability test below is one mask test.
        let qualities = [
            tin.quality,
            tout.quality,
            tc.quality,
            tco.quality,
            pin.quality,
            pout.quality,
            flow.quality,
            mc.quality,
            dh.quality,
        ];
        let packed = qualities
            .iter()
            .enumerate()
            .fold(0u32, |a, (i, &q)| a | (q as u32) << (2 * i));
        let unusable = packed & NOT_USABLE;
        let ok = |inputs: u32| unusable & inputs == 0;
        let noise = limits.temperature_noise;
        // `a < b` of values that are not NaN: differences of finite inputs and
        // the limits. Bounded, every input value is finite (usable ones within
        // validated limits, the others the boundary's zero), so without an FPU
        // the ordered compare on the bits applies ([`Real::less_than`]: no
        // library call); otherwise, and with an FPU, the float compare.
        #[cfg(all(target_arch = "arm", not(target_abi = "eabihf")))]
        let lt = |a: T, b: T| if BOUNDED { T::less_than(a, b) } else { a < b };
        #[cfg(not(all(target_arch = "arm", not(target_abi = "eabihf"))))]
        let lt = |a: T, b: T| a < b;
        let checked = if BOUNDED {
            F_LMTD | F_UA | F_BALANCE
        } else {
            ALL_FIELDS & !F_DUTY
        };
        // Computed outputs (bit i: the i-th field in declaration order). A
        // value that is not finite counts as not computed (bad, as the rule
        // says).
        let mut done: u16 = 0;
        let mut set = |m: &mut Measured<T>, bit: u16, v: T| {
            m.value = v;
            if checked & bit == 0 || T::is_finite(v) {
                done |= bit;
            }
        };
        // Outputs a field-local plausibility check makes suspect (`suspect`):
        // a negative pressure drop; the outlet above the inlet; the outlet
        // below the coolant; an effectiveness outside [0, 1]; a falling
        // coolant; the duty and what uses it inside the noise band or from a
        // gas model outside its fitted or valid range; UA also without flow (a
        // zero duty is not fouling; a negative duty in the noise band gives a
        // negative UA). A suspect bit counts only for a computed output (one
        // not computed is bad, which uncertain does not change), so each check
        // is made where its output is set. What the evaluation found
        // (`found`), in order of precedence (an outlet above the inlet implies
        // usable gas temperatures): the first of its bits. Both are collected
        // as the checks are made (fewer flags live at once).
        let flag = |c: bool, bits: u16| if c { bits } else { 0 };
        let mut suspect: u16 = 0;
        let mut found: u32 = 0;
        if ok(I_PIN | I_POUT) {
            let dp = pin.value - pout.value;
            set(&mut out.pressure_drop, F_DP, dp);
            set(&mut out.relative_pressure_drop, F_REL_DP, dp / pin.value);
            suspect |= flag(lt(dp, T::ZERO), F_DP | F_REL_DP);
        }
        let gas_ok = ok(I_TIN | I_TOUT);
        let drop = tin.value - tout.value;
        let outlet_above_inlet = gas_ok && lt(drop, -noise);
        let within_noise = gas_ok && !outlet_above_inlet && lt(drop, noise);
        let stationary = ok(I_FLOW) && !lt(limits.stationary_flow, flow.value);
        found |= u32::from(outlet_above_inlet)
            | u32::from(within_noise && ok(I_FLOW)) << 3
            | u32::from(stationary) << 4;
        // Duty from the gas model's enthalpy drop (its quality: the model's
        // validity at the two states and the supplied Z); a model outside its
        // fitted or valid range makes the duty and what uses it suspect, no
        // valid state makes them bad.
        let duty = flow.value * dh.value;
        let cp_suspect = cp_fit.worst(dh.quality) != Quality::Good;
        let weak_duty = within_noise || cp_suspect;
        suspect |= flag(outlet_above_inlet, F_DROP)
            | flag(weak_duty, F_DUTY | F_BALANCE)
            | flag(weak_duty || stationary, F_UA);
        let duty_ok = gas_ok && !outlet_above_inlet && ok(I_FLOW | I_DH) && T::is_finite(duty);
        if gas_ok {
            set(&mut out.gas_temperature_drop, F_DROP, drop);
            if duty_ok {
                set(&mut out.heat_duty, F_DUTY, duty);
            }
        }
        // Also the LMTD's cold-end difference (one subtraction for both).
        let approach = tout.value - tc.value;
        if ok(I_TOUT | I_TC) {
            set(&mut out.approach, F_APPROACH, approach);
            let below_coolant = lt(approach, -noise);
            suspect |= flag(below_coolant, F_APPROACH);
            found |= u32::from(below_coolant) << 1;
        }
        // `0 <= eff <= 1` (false for NaN); without an FPU on the bits
        // ([`Real::within_nonnegative`], exact for every value, NaN and -0.0
        // included: no library call).
        let effectiveness_in_unit_range = |e: T| {
            if HARD_FLOAT {
                e >= T::ZERO && e <= T::ONE
            } else {
                T::within_nonnegative(e, T::ZERO, T::ONE)
            }
        };
        if ok(I_TIN | I_TOUT | I_TC) {
            let span = tin.value - tc.value;
            let no_span = !lt(T::of(MIN_EFFECTIVENESS_SPAN_K), span);
            found |= u32::from(no_span) << 2;
            if !outlet_above_inlet && !no_span {
                let eff = drop / span;
                set(&mut out.effectiveness, F_EFF, eff);
                suspect |= flag(!effectiveness_in_unit_range(eff), F_EFF);
            }
        }
        let rise = tco.value - tc.value;
        if ok(I_TC | I_TCO) {
            set(&mut out.coolant_temperature_rise, F_COOLANT_RISE, rise);
            suspect |= flag(lt(rise, -noise), F_COOLANT_RISE);
        }
        if ok(I_TIN | I_TOUT | I_TC | I_TCO) {
            let (dt_hot, dt_cold) = (tin.value - tco.value, approach);
            if let Some(lmtd) =
                lmtd_counterflow_ordered::<T, BOUNDED, { !HARD_FLOAT }>(dt_hot, dt_cold)
            {
                set(&mut out.lmtd, F_LMTD, lmtd);
                if duty_ok {
                    set(&mut out.ua, F_UA, duty / lmtd);
                }
            }
            // The duty is finite here (`duty_ok`): not NaN.
            if duty_ok && lt(T::ZERO, duty) && ok(I_MC) {
                let coolant_duty = mc.value * inp.coolant_cp * rise;
                set(
                    &mut out.heat_balance_error,
                    F_BALANCE,
                    (duty - coolant_duty) / duty,
                );
            }
        }

        let condition = if !ok(I_TIN | I_TOUT | I_TC) {
            CoolerCondition::InputBad
        } else if found == 0 {
            CoolerCondition::Normal
        } else {
            const FIRST_FOUND: [CoolerCondition; 5] = [
                CoolerCondition::OutletAboveInlet,
                CoolerCondition::OutletBelowCoolant,
                CoolerCondition::NoDrivingDifference,
                CoolerCondition::DutyWithinNoise,
                CoolerCondition::NoGasFlow,
            ];
            let first = found.trailing_zeros() as usize;
            FIRST_FOUND
                .get(first)
                .copied()
                .unwrap_or(CoolerCondition::Normal)
        };

        let o = if packed & SLOT_INPUTS == 0 {
            OutputGrades::all_slots_good(done, suspect)
        } else {
            let slots = [
                slot::T2,
                slot::GAS_OUT_T,
                slot::COOLANT_IN_T,
                slot::COOLANT_OUT_T,
                slot::P2,
                slot::GAS_OUT_P,
                slot::FLOW,
                slot::COOLANT_FLOW,
            ];
            let mut g = Grades::new();
            for (s, q) in slots.into_iter().zip(qualities) {
                g.first_slot(s, q);
            }
            OutputGrades::new(&g, cooler_users(cp_inputs), done, suspect)
        };
        let fields = [
            (&mut out.gas_temperature_drop, F_DROP),
            (&mut out.approach, F_APPROACH),
            (&mut out.effectiveness, F_EFF),
            (&mut out.heat_duty, F_DUTY),
            (&mut out.pressure_drop, F_DP),
            (&mut out.relative_pressure_drop, F_REL_DP),
            (&mut out.coolant_temperature_rise, F_COOLANT_RISE),
            (&mut out.lmtd, F_LMTD),
            (&mut out.ua, F_UA),
            (&mut out.heat_balance_error, F_BALANCE),
        ];
        if o.all_usable(ALL_FIELDS) && o.none_uncertain(ALL_FIELDS) {
            for (m, _) in fields {
                m.quality = Quality::Good;
            }
        } else if o.all_usable(ALL_FIELDS) {
            for (m, bit) in fields {
                m.quality = o.usable_quality(bit);
            }
        } else {
            for (m, bit) in fields {
                o.settle_finite(m, bit);
            }
        }
        // Set by the train (the next stage's result).
        out.next_stage_temperature_rise = Measured::bad();
        out.condition = condition;
    }

    fn inputs() -> CoolerInputs<f64> {
        let g = Measured::good;
        CoolerInputs {
            gas_inlet_temperature: g(420.0),
            gas_outlet_temperature: g(310.0),
            coolant_inlet_temperature: g(300.0),
            coolant_outlet_temperature: g(315.0),
            gas_inlet_pressure: g(3.0e5),
            gas_outlet_pressure: g(2.95e5),
            gas_mass_flow: g(2.0),
            coolant_mass_flow: g(3.5),
            gas_enthalpy_drop: g(1005.0 * 110.0),
            coolant_cp: 4180.0,
        }
    }

    #[test]
    fn hand_calculation() {
        let r = evaluate_cooler(&inputs());
        assert_eq!(r.condition, CoolerCondition::Normal);
        assert_eq!(r.gas_temperature_drop.value, 110.0);
        assert_eq!(r.approach.value, 10.0);
        assert!((r.effectiveness.value - 110.0 / 120.0).abs() < 1e-12);
        assert!((r.heat_duty.value - 2.0 * 1005.0 * 110.0).abs() < 1e-6);
        assert!((r.pressure_drop.value - 5000.0).abs() < 1e-6);
        // LMTD of 105 K and 10 K terminal differences: 95/ln(10.5).
        assert!((r.lmtd.value - 95.0 / 10.5_f64.ln()).abs() < 1e-9);
        assert!((r.ua.value - r.heat_duty.value / r.lmtd.value).abs() < 1e-6);
        let coolant = 3.5 * 4180.0 * 15.0;
        assert!((r.heat_balance_error.value - (221_100.0 - coolant) / 221_100.0).abs() < 1e-12);
    }

    /// Consistency check (the project's own evaluation, two variants): for
    /// inputs within the default limits, as the train's sensor boundary
    /// passes them, the bounded evaluation (finiteness tests only where a
    /// ratio or logarithm can overflow) gives bit for bit what the public
    /// one gives, over seeded random values and qualities of every input.
    #[test]
    fn bounded_evaluation_equals_the_checked_one() {
        let mut next = crate::xorshift32(0x9e37_79b9);
        let limits = Limits::<f32>::default();
        let quality = |r: u32| match r % 7 {
            0 => Quality::Uncertain,
            1 => Quality::Bad,
            2 => Quality::NotApplicable,
            _ => Quality::Good,
        };
        for case in 0..20_000 {
            let mut m = |lo: f32, hi: f32| {
                let u = (next() % 10_000) as f32 / 10_000.0;
                let q = quality(next());
                // Unusable readings carry the boundary's placeholder zero.
                let v = if q.is_usable() {
                    lo + u * (hi - lo)
                } else {
                    0.0
                };
                Measured::new(v, q)
            };
            let inp = CoolerInputs {
                gas_inlet_temperature: m(280.0, 450.0),
                gas_outlet_temperature: m(280.0, 450.0),
                coolant_inlet_temperature: m(275.0, 330.0),
                coolant_outlet_temperature: m(275.0, 340.0),
                gas_inlet_pressure: m(1e5, 5e6),
                gas_outlet_pressure: m(1e5, 5e6),
                gas_mass_flow: m(0.0, 50.0),
                coolant_mass_flow: m(0.0, 80.0),
                gas_enthalpy_drop: m(-2e4, 2e5),
                coolant_cp: 4180.0,
            };
            let fit = if next() % 3 == 0 {
                Quality::Uncertain
            } else {
                Quality::Good
            };
            let p = PropertyInputs {
                temperature: next() % 2 == 0,
                pressure: next() % 2 == 0,
                compressibility_from_state: false,
                state_functions: false,
            };
            let (mut a, mut b) = (CoolerResult::bad(), CoolerResult::bad());
            evaluate_cooler_within(&inp, &limits, p, fit, &mut a);
            evaluate_cooler_bounded::<f32, true>(&inp, &limits, p, fit, &mut b);
            let bits = |r: &CoolerResult<f32>| {
                [
                    r.gas_temperature_drop,
                    r.approach,
                    r.effectiveness,
                    r.heat_duty,
                    r.pressure_drop,
                    r.relative_pressure_drop,
                    r.coolant_temperature_rise,
                    r.lmtd,
                    r.ua,
                    r.heat_balance_error,
                ]
                .map(|m| (m.value.to_bits(), m.quality))
            };
            assert_eq!(bits(&a), bits(&b), "case {case}");
            assert_eq!(a.condition, b.condition, "case {case}");
        }
    }

    /// Consistency check (the project's own evaluation, two forms): the
    /// one-pass evaluation (every difference at once, the computed outputs
    /// from one mask) gives bit for bit the values, qualities and condition
    /// of the branch-per-output evaluation it replaced
    /// ([`reference_bounded`]), bounded and not, in f32 and f64, over
    /// seeded random qualities of every input and values concentrated at
    /// every check's threshold (noise band, span, stationary flow, zero
    /// and negative terminal differences, pressure drop and duty signs),
    /// with each result written over the previous case's (in place, as the
    /// train does); not bounded also with NaN and infinite inputs.
    #[test]
    fn one_pass_evaluation_equals_the_branch_per_output_one() {
        fn unit(next: &mut impl FnMut() -> u32) -> f64 {
            f64::from(next() % 1_000_000) / 1_000_000.0
        }
        fn pick(next: &mut impl FnMut() -> u32, choices: &[f64]) -> f64 {
            let i = (unit(next) * choices.len() as f64) as usize;
            choices.get(i).copied().unwrap_or(0.0)
        }
        fn quality(next: &mut impl FnMut() -> u32) -> Quality {
            match next() % 9 {
                0 => Quality::Uncertain,
                1 => Quality::Bad,
                2 => Quality::NotApplicable,
                _ => Quality::Good,
            }
        }
        fn run<T: Real>(seed: u32, cases: usize) {
            let mut next = crate::xorshift32(seed);
            let limits = Limits::<T>::default();
            let noise = limits.temperature_noise.to_f64();
            let still = limits.stationary_flow.to_f64();
            let (mut a, mut b) = (CoolerResult::<T>::bad(), CoolerResult::<T>::bad());
            let (mut a_free, mut b_free) = (CoolerResult::<T>::bad(), CoolerResult::<T>::bad());
            for case in 0..cases {
                let tc = 280.0 + 40.0 * pick(&mut next, &[0.0, 0.25, 0.5, 1.0]);
                // The gas outlet around the coolant inlet (approach at
                // -noise, 0) or well above it.
                let approach = pick(
                    &mut next,
                    &[-2.0 * noise, -noise, -0.3, 0.0, 0.3, 5.0, 20.0],
                );
                let tout = tc + approach + 0.01 * pick(&mut next, &[-1.0, 0.0, 1.0]);
                // The gas drop at the noise band's edges, zero, negative or
                // large.
                let drop = pick(
                    &mut next,
                    &[-5.0, -noise, -0.2, 0.0, 0.2, noise, 0.6, 40.0, 120.0],
                );
                let tin = tout + drop + 0.001 * pick(&mut next, &[-1.0, 0.0, 1.0]);
                // Coolant outlet: falling, equal, rising, above the gas
                // inlet (no hot-end difference).
                let tco = tc
                    + pick(&mut next, &[-2.0 * noise, -0.2, 0.0, 9.0, 20.0])
                    + pick(&mut next, &[0.0, 200.0]);
                let pin = 1e5 + 4e6 * unit(&mut next);
                let pout = pin * (1.0 + pick(&mut next, &[-0.05, -0.01, 0.0, 0.002]));
                let flow = pick(&mut next, &[0.0, still, still * 1.01, 2.0, 30.0]);
                let mc = pick(&mut next, &[0.0, 3.5, 70.0]);
                // Also a finite drop whose duty overflows.
                let huge = if T::EPSILON > T::of(1e-10) {
                    3e38
                } else {
                    1e308
                };
                let dh = pick(&mut next, &[-2e4, 0.0, 1e3, 1e5, huge, -huge]);
                let mut m = |v: f64| (v, quality(&mut next));
                let raw = [
                    m(tin),
                    m(tout),
                    m(tc),
                    m(tco),
                    m(pin),
                    m(pout),
                    m(flow),
                    m(mc),
                    m(dh),
                ];
                // Bounded: unusable readings carry the boundary's zero.
                let bounded =
                    raw.map(|(v, q)| Measured::new(T::of(if q.is_usable() { v } else { 0.0 }), q));
                // Not bounded: unusable readings may be anything.
                let wild = [0.0, f64::NAN, f64::INFINITY, -1.0, 1e30];
                let free = raw.map(|(v, q)| {
                    let w = wild.get((next() % 5) as usize).copied().unwrap_or(0.0);
                    Measured::new(T::of(if q.is_usable() { v } else { w }), q)
                });
                let inputs = |r: [Measured<T>; 9]| {
                    let [tin, tout, tc, tco, pin, pout, flow, mc, dh] = r;
                    CoolerInputs {
                        gas_inlet_temperature: tin,
                        gas_outlet_temperature: tout,
                        coolant_inlet_temperature: tc,
                        coolant_outlet_temperature: tco,
                        gas_inlet_pressure: pin,
                        gas_outlet_pressure: pout,
                        gas_mass_flow: flow,
                        coolant_mass_flow: mc,
                        gas_enthalpy_drop: dh,
                        coolant_cp: T::of(4180.0),
                    }
                };
                let fit = if next() % 4 == 0 {
                    Quality::Uncertain
                } else {
                    Quality::Good
                };
                let p = PropertyInputs {
                    temperature: next() % 2 == 0,
                    pressure: next() % 2 == 0,
                    compressibility_from_state: false,
                    state_functions: false,
                };
                let bits = |r: &CoolerResult<T>| {
                    [
                        r.gas_temperature_drop,
                        r.approach,
                        r.effectiveness,
                        r.heat_duty,
                        r.pressure_drop,
                        r.relative_pressure_drop,
                        r.coolant_temperature_rise,
                        r.lmtd,
                        r.ua,
                        r.heat_balance_error,
                        r.next_stage_temperature_rise,
                    ]
                    .map(|m| (m.value.to_f64().to_bits(), m.quality))
                };
                let i = inputs(bounded);
                reference_bounded::<T, true>(&i, &limits, p, fit, &mut a);
                evaluate_cooler_bounded::<T, true>(&i, &limits, p, fit, &mut b);
                assert_eq!(bits(&a), bits(&b), "bounded case {case}");
                assert_eq!(a.condition, b.condition, "bounded case {case}");
                let i = inputs(free);
                reference_bounded::<T, false>(&i, &limits, p, fit, &mut a_free);
                evaluate_cooler_bounded::<T, false>(&i, &limits, p, fit, &mut b_free);
                assert_eq!(bits(&a_free), bits(&b_free), "free case {case}");
                assert_eq!(a_free.condition, b_free.condition, "free case {case}");
            }
        }
        run::<f32>(0x1234_5677, 200_000);
        run::<f64>(0x7654_3211, 100_000);
    }

    #[test]
    fn outlet_above_inlet_is_flagged() {
        let mut i = inputs();
        i.gas_outlet_temperature = Measured::good(430.0);
        let r = evaluate_cooler(&i);
        assert_eq!(r.condition, CoolerCondition::OutletAboveInlet);
        assert_eq!(r.effectiveness.quality, Quality::Bad);
        assert_eq!(r.heat_duty.quality, Quality::Bad);
    }

    /// The LMTD as it was before the series test moved behind the ratio
    /// range: u = (a - b)/(a + b) always, the series where |u| is below
    /// the bound, else (a - b)/ln(a/b).
    fn lmtd_always_u<T: Real>(dt_a: T, dt_b: T) -> Option<T> {
        if !(dt_a > T::ZERO && dt_b > T::ZERO) {
            return None;
        }
        let sum = dt_a + dt_b;
        let diff = dt_a - dt_b;
        let u = diff / sum;
        let series_below = if T::EPSILON > T::of(1e-10) { 0.2 } else { 0.01 };
        if T::abs(u) < T::of(series_below) {
            let u2 = u * u;
            let series = T::ONE
                + u2 * (T::of(1.0 / 3.0)
                    + u2 * (T::of(1.0 / 5.0) + u2 * (T::of(1.0 / 7.0) + u2 * T::of(1.0 / 9.0))));
            return Some(T::of(0.5) * sum / series);
        }
        Some(diff / T::ln(dt_a / dt_b))
    }

    /// Consistency check (the project's own LMTD, two forms): deciding the
    /// series branch from the ratio range first gives bit for bit the LMTD
    /// that always computes u, in f32 and f64, over seeded random terminal
    /// differences concentrated around the branch bounds (ratios 1.5 and
    /// 2/3 in f32, 1.0202 and 0.9802 in f64), over the whole ratio range,
    /// and for zeros, negatives, infinities and NaN.
    #[test]
    fn lmtd_ratio_range_gives_the_same_branch_and_bits() {
        let mut bits = crate::xorshift32(0x2545_f491);
        let mut next = || f64::from(bits()) / f64::from(u32::MAX);
        let same32 = |a: f32, b: f32| {
            let y = lmtd_always_u(a, b).map(f32::to_bits);
            let first = lmtd_counterflow_ordered::<f32, false, true>(a, b);
            assert_eq!(first.map(f32::to_bits), y, "{a} {b}");
            assert_eq!(lmtd_counterflow(a, b).map(f32::to_bits), y, "{a} {b}");
            if !a.is_nan() && !b.is_nan() {
                let ordered = lmtd_counterflow_ordered::<f32, true, true>(a, b);
                assert_eq!(ordered.map(f32::to_bits), y, "{a} {b}");
            }
        };
        let same64 = |a: f64, b: f64| {
            let y = lmtd_always_u(a, b).map(f64::to_bits);
            let first = lmtd_counterflow_ordered::<f64, false, true>(a, b);
            assert_eq!(first.map(f64::to_bits), y, "{a} {b}");
            assert_eq!(lmtd_counterflow(a, b).map(f64::to_bits), y, "{a} {b}");
        };
        for _ in 0..200_000 {
            let b = 0.01 + 500.0 * next();
            // Around each bound: within 2 % of the ratio where |u| = bound.
            for r in [1.5, 2.0 / 3.0, 1.01 / 0.99, 0.99 / 1.01] {
                let ratio = r * (1.0 + 0.04 * (next() - 0.5));
                same32((b * ratio) as f32, b as f32);
                same64(b * ratio, b);
            }
            // Anywhere: ratios 1e-3 .. 1e3.
            let ratio = 10f64.powf(6.0 * next() - 3.0);
            same32((b * ratio) as f32, b as f32);
            same64(b * ratio, b);
        }
        for (a, b) in [
            (0.0, 1.0),
            (1.0, 0.0),
            (-1.0, 2.0),
            (-0.0, 3.0),
            (f32::INFINITY, 2.0),
            (2.0, f32::INFINITY),
            (f32::INFINITY, f32::INFINITY),
            (f32::NAN, 2.0),
            (2.0, f32::NAN),
            (f32::MIN_POSITIVE / 4.0, 1.0),
            (5.0, 5.0),
        ] {
            same32(a, b);
            same64(f64::from(a), f64::from(b));
        }
    }

    #[test]
    fn outlet_below_coolant_is_uncertain_and_equal_lmtd_is_finite() {
        let mut i = inputs();
        i.gas_outlet_temperature = Measured::good(295.0);
        let r = evaluate_cooler(&i);
        assert_eq!(r.condition, CoolerCondition::OutletBelowCoolant);
        assert_eq!(r.approach.quality, Quality::Uncertain);
        assert_eq!(r.effectiveness.quality, Quality::Uncertain);
        assert_eq!(lmtd_counterflow(10.0_f64, 10.0), Some(10.0));
        assert_eq!(lmtd_counterflow(10.0_f64, -1.0), None);
    }
}
