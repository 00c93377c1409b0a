//! The dependency rule, written down once.
//!
//! **An output's quality is the worst of exactly the inputs and
//! intermediate results it uses, and no more.** Each output of a stage,
//! pump or cooler names here the input *slots* its value is computed from
//! and the plausibility *checks* (intermediate results over other slots)
//! whose failure makes it suspect. [`Grades::settle`] applies the rule to
//! every output from these tables; the evaluation code computes values only
//! and never sets an output's quality by hand. `tests/quality_oracle.rs`
//! checks the tables by perturbing every input slot of a train.
//!
//! A check that cannot be evaluated (one of its inputs is bad) does not
//! downgrade anything: the outputs that use the bad input are bad by their
//! own slots.

use crate::gas::PropertyInputs;
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// A set of input slots (a bit set).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Slots(pub u16);

impl Slots {
    /// No slot.
    pub const NONE: Slots = Slots(0);
    /// The union of two sets.
    #[inline]
    #[must_use]
    pub const fn or(self, other: Slots) -> Slots {
        Slots(self.0 | other.0)
    }
    /// `true` if every slot of `other` is in `self`.
    #[inline]
    pub const fn contains(self, other: Slots) -> bool {
        self.0 & other.0 == other.0
    }
}

/// Input slots of one stage and the cooler after it.
pub mod slot {
    use super::Slots;
    /// Suction pressure (for a cooler: unused).
    pub const P1: Slots = Slots(1 << 0);
    /// Suction temperature.
    pub const T1: Slots = Slots(1 << 1);
    /// Discharge pressure (a cooler's gas inlet pressure).
    pub const P2: Slots = Slots(1 << 2);
    /// Discharge temperature (a cooler's gas inlet temperature).
    pub const T2: Slots = Slots(1 << 3);
    /// Mass flow through the stage (measured or inherited).
    pub const FLOW: Slots = Slots(1 << 4);
    /// Supplied compressibility factor (or the configured one).
    pub const Z: Slots = Slots(1 << 5);
    /// Cooler gas outlet temperature.
    pub const GAS_OUT_T: Slots = Slots(1 << 6);
    /// Cooler gas outlet pressure (measured, or the next suction pressure).
    pub const GAS_OUT_P: Slots = Slots(1 << 7);
    /// Coolant inlet temperature.
    pub const COOLANT_IN_T: Slots = Slots(1 << 8);
    /// Coolant outlet temperature.
    pub const COOLANT_OUT_T: Slots = Slots(1 << 9);
    /// Coolant mass flow.
    pub const COOLANT_FLOW: Slots = Slots(1 << 10);
    /// Number of slot bits.
    pub const COUNT: usize = 11;
}

/// A set of plausibility checks (intermediate results).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Checks(pub u8);

/// The checks of a compressor stage, with the slots each uses.
pub mod check {
    use super::{slot, Checks, Slots};
    /// The stage's pressure ratio is within the configured maximum
    /// (uses P1, P2).
    pub const RATIO: Checks = Checks(1 << 0);
    /// The measured states are a consistent adiabatic compression:
    /// efficiencies in (0, 1] with the rounding allowance (uses P1, T1, P2,
    /// T2).
    pub const CONSISTENT: Checks = Checks(1 << 1);
    /// The temperature rise and the ratio clear the stated instrument
    /// accuracy (uses P1, T1, P2, T2).
    pub const RESOLVED: Checks = Checks(1 << 2);
    /// The machine is running: flow above the stationary threshold (uses
    /// FLOW).
    pub const RUNNING: Checks = Checks(1 << 3);
    /// The polytropic exponent inferred from the states is above one (the
    /// temperature rise is not too large for the ratio; uses P1, T1, P2,
    /// T2).
    pub const EXPONENT: Checks = Checks(1 << 4);
    /// The gas model's properties are inside its fitted range at the path
    /// temperatures, and its states are inside its validity range (the
    /// real-gas `Validity`: near-critical, liquid-like, ideal gas at high
    /// reduced pressure, no vapour root); uses at most the four states.
    pub const MODEL: Checks = Checks(1 << 5);
    /// The gas model's validity at the measured discharge state (P2, T2;
    /// the real-gas `Validity` of the discharge state, which the isentropic
    /// outputs do not use).
    pub const MODEL_DISCHARGE: Checks = Checks(1 << 6);
    /// Number of check bits.
    pub const COUNT: usize = 7;
    const STATES: Slots = slot::P1.or(slot::P2).or(slot::T1).or(slot::T2);
    /// The slots each check uses, by bit.
    pub const SLOTS: [Slots; COUNT] = [
        slot::P1.or(slot::P2),
        STATES,
        STATES,
        slot::FLOW,
        STATES,
        STATES,
        slot::P2.or(slot::T2),
    ];
}

impl Checks {
    /// No check.
    pub const NONE: Checks = Checks(0);
    /// The union of two sets.
    #[inline]
    #[must_use]
    pub const fn or(self, other: Checks) -> Checks {
        Checks(self.0 | other.0)
    }
}

/// What one output uses: the slots its value is computed from, the checks
/// whose grade it takes in full, and the checks that can make it at most
/// uncertain (suspect, not impossible). One word: slots in bits 0-15, full
/// checks in bits 16-23, soft checks in bits 24-31, so grading is three
/// mask tests.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Use(u32);

impl Use {
    const fn of(slots: Slots) -> Use {
        Use(slots.0 as u32)
    }
    const fn full(self, c: Checks) -> Use {
        Use(self.0 | (c.0 as u32) << 16)
    }
    const fn soft(self, c: Checks) -> Use {
        Use(self.0 | (c.0 as u32) << 24)
    }
    /// The same use with more slots.
    const fn and(self, s: Slots) -> Use {
        Use(self.0 | s.0 as u32)
    }
    /// Slots the value is computed from.
    pub const fn slots(self) -> Slots {
        Slots(self.0 as u16)
    }
    /// Every slot the output's quality can depend on (its own and its
    /// checks').
    pub fn all_slots(self) -> Slots {
        let mut s = self.slots();
        let c = (self.0 >> 16) as u8 | (self.0 >> 24) as u8;
        for (i, cs) in check::SLOTS.iter().enumerate() {
            if c & (1 << i) != 0 {
                s = s.or(*cs);
            }
        }
        s
    }
}

/// The slots the gas properties (k, cp) and the compressibility factor
/// depend on, from what the gas model says it uses. `t2_used` is false for
/// a rating-point query (no discharge temperature: the path is evaluated
/// without it).
#[inline]
pub const fn property_slots(p: PropertyInputs, t2_used: bool) -> (Slots, Slots) {
    let mut props = Slots::NONE;
    if p.temperature {
        props = props.or(slot::T1);
        if t2_used {
            props = props.or(slot::T2);
        }
    }
    if p.pressure {
        props = props.or(slot::P1).or(slot::P2);
    }
    let z = if p.compressibility_from_state {
        props.or(slot::Z)
    } else {
        slot::Z
    };
    (props, z)
}

/// What each compressor-stage output uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[allow(missing_docs)] // one entry per `CompressorResult` field, same name
pub struct CompressorUses {
    pub pressure_ratio: Use,
    pub isentropic_discharge_temperature: Use,
    pub temperature_rise: Use,
    pub isentropic_head: Use,
    pub polytropic_head: Use,
    pub isothermal_head: Use,
    pub actual_work: Use,
    pub isentropic_efficiency: Use,
    pub polytropic_efficiency: Use,
    pub polytropic_exponent: Use,
    pub mass_flow: Use,
    pub gas_power: Use,
    pub work_above_isothermal: Use,
    pub power_above_isothermal: Use,
    pub compressibility: Use,
    pub k: Use,
}

impl CompressorUses {
    /// The uses in declaration order (the order of `CompressorResult`'s
    /// fields and of its `computed` bits).
    pub const fn in_order(&self) -> [Use; 16] {
        [
            self.pressure_ratio,
            self.isentropic_discharge_temperature,
            self.temperature_rise,
            self.isentropic_head,
            self.polytropic_head,
            self.isothermal_head,
            self.actual_work,
            self.isentropic_efficiency,
            self.polytropic_efficiency,
            self.polytropic_exponent,
            self.mass_flow,
            self.gas_power,
            self.work_above_isothermal,
            self.power_above_isothermal,
            self.compressibility,
            self.k,
        ]
    }
}

/// The slots of what a state-function model ([`PropertyInputs::state_functions`])
/// evaluates at the suction state and p2 only: (isentropic outputs, suction
/// Z). For a path-mean model, the property and Z slots themselves.
#[inline]
pub const fn suction_slots(p: PropertyInputs, props: Slots, z: Slots) -> (Slots, Slots) {
    if p.state_functions {
        let iso = slot::P1.or(slot::P2).or(slot::T1);
        (iso, slot::P1.or(slot::T1).or(slot::Z))
    } else {
        (props, z)
    }
}

/// The compressor table, given the property slots ([`property_slots`]),
/// those of the isentropic outputs and the suction Z ([`suction_slots`]),
/// and whether Z and p·v come from the gas model's states
/// ([`PropertyInputs::compressibility_from_state`]): then the isothermal
/// head, Z and the polytropic path take the model's validity (`MODEL`);
/// with a configured or supplied Z they do not use the model.
pub const fn compressor_uses(
    props: Slots,
    z: Slots,
    iso: Slots,
    z1: Slots,
    z_from_state: bool,
) -> CompressorUses {
    use check::{CONSISTENT, EXPONENT, MODEL, MODEL_DISCHARGE, RATIO, RESOLVED, RUNNING};
    use slot::{FLOW, P1, P2, T1, T2};
    let ratio = Use::of(P1.or(P2)).full(RATIO);
    let states = P1.or(P2).or(T1).or(T2);
    // Efficiencies: the four states and k (Z cancels); impossible when the
    // states are inconsistent, suspect below resolution or at standstill.
    let eff = Use::of(states.or(props))
        .full(
            RATIO
                .or(CONSISTENT)
                .or(EXPONENT)
                .or(MODEL)
                .or(MODEL_DISCHARGE),
        )
        .soft(RESOLVED.or(RUNNING));
    // The exponent and the polytropic head describe the measured path: a
    // cooled compression (efficiency above one) leaves them meaningful but
    // suspect; n not above one makes them impossible. With Z from the
    // model's states, p·v and Schultz's factor come from it: MODEL.
    let z_model = if z_from_state {
        MODEL.or(MODEL_DISCHARGE)
    } else {
        Checks::NONE
    };
    let z1_model = if z_from_state { MODEL } else { Checks::NONE };
    let path = Use::of(states)
        .full(RATIO.or(EXPONENT).or(z_model))
        .soft(CONSISTENT.or(RESOLVED).or(RUNNING));
    // Work from the temperature rise: T1, T2, Z, cp; suspect when the
    // compression is inconsistent or the machine is stationary.
    let actual = Use::of(T1.or(T2).or(z).or(props))
        .full(MODEL.or(MODEL_DISCHARGE))
        .soft(CONSISTENT.or(EXPONENT).or(RUNNING));
    // The suction Z (from the model's suction state, or supplied).
    let isothermal = Use::of(P1.or(P2).or(T1).or(z1)).full(RATIO.or(z1_model));
    let above = Use::of(states.or(z).or(props))
        .full(RATIO.or(MODEL).or(MODEL_DISCHARGE))
        .soft(CONSISTENT.or(EXPONENT).or(RUNNING));
    CompressorUses {
        pressure_ratio: ratio,
        isentropic_discharge_temperature: Use::of(P1.or(P2).or(T1).or(iso)).full(RATIO.or(MODEL)),
        temperature_rise: Use::of(T1.or(T2)),
        isentropic_head: Use::of(P1.or(P2).or(T1).or(z1).or(iso)).full(RATIO.or(MODEL)),
        polytropic_head: path.and(z),
        isothermal_head: isothermal,
        actual_work: actual,
        isentropic_efficiency: eff,
        polytropic_efficiency: eff,
        polytropic_exponent: path,
        mass_flow: Use::of(FLOW),
        gas_power: actual.and(FLOW),
        work_above_isothermal: above,
        power_above_isothermal: above.and(FLOW),
        compressibility: Use::of(z1).full(z1_model),
        k: Use::of(iso).full(MODEL),
    }
}

/// What each pump output uses (a pump's slots: P1, T1, P2, FLOW).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[allow(missing_docs)] // one entry per `PumpResult` field, same name
pub struct PumpUses {
    pub pressure_ratio: Use,
    pub density: Use,
    pub pressure_rise: Use,
    pub reversible_work: Use,
    pub shaft_work: Use,
    pub mass_flow: Use,
    pub power: Use,
    pub gas_compression_equivalent: Use,
    pub work_ratio_to_gas: Use,
}

/// The pump table, given the gas property slots (the gas comparison) and
/// whether the suction density comes from the gas model's dense phase (P1,
/// T1 and MODEL) rather than the configuration.
pub const fn pump_uses(props: Slots, model_density: bool) -> PumpUses {
    use check::{MODEL, RATIO};
    use slot::{FLOW, P1, P2, T1};
    let density = if model_density {
        Use::of(P1.or(T1)).full(MODEL)
    } else {
        Use::of(Slots::NONE)
    };
    let dp = Use::of(P1.or(P2));
    let work = Use(dp.0 | density.0);
    let gas = Use::of(P1.or(P2).or(T1).or(props)).full(RATIO.or(MODEL));
    PumpUses {
        pressure_ratio: dp.full(RATIO),
        density,
        pressure_rise: dp,
        reversible_work: work,
        shaft_work: work,
        mass_flow: Use::of(FLOW),
        power: Use(work.0 | Use::of(FLOW).0),
        gas_compression_equivalent: gas,
        work_ratio_to_gas: gas,
    }
}

/// What each cooler output uses (a cooler's gas inlet is the stage's P2, T2
/// and flow).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[allow(missing_docs)] // one entry per `CoolerResult` field, same name
pub struct CoolerUses {
    pub gas_temperature_drop: Use,
    pub approach: Use,
    pub effectiveness: Use,
    pub heat_duty: Use,
    pub pressure_drop: Use,
    pub relative_pressure_drop: Use,
    pub coolant_temperature_rise: Use,
    pub lmtd: Use,
    pub ua: Use,
    pub heat_balance_error: Use,
}

/// The cooler table, given the slots the gas cp depends on (in cooler
/// terms: the gas inlet T2/P2 and the outlet).
pub const fn cooler_uses(cp: Slots) -> CoolerUses {
    use slot::{COOLANT_FLOW, COOLANT_IN_T, COOLANT_OUT_T, FLOW, GAS_OUT_P, GAS_OUT_T, P2, T2};
    // Duty = m·(h_in − h_out) from the gas model, with the stage's supplied
    // Z (ideal gas: m·Z·cp·ΔT).
    let duty = Use::of(T2.or(GAS_OUT_T).or(FLOW).or(slot::Z).or(cp));
    let lmtd = Use::of(T2.or(GAS_OUT_T).or(COOLANT_IN_T).or(COOLANT_OUT_T));
    let dp = Use::of(P2.or(GAS_OUT_P));
    CoolerUses {
        gas_temperature_drop: Use::of(T2.or(GAS_OUT_T)),
        approach: Use::of(GAS_OUT_T.or(COOLANT_IN_T)),
        effectiveness: Use::of(T2.or(GAS_OUT_T).or(COOLANT_IN_T)),
        heat_duty: duty,
        pressure_drop: dp,
        relative_pressure_drop: dp,
        coolant_temperature_rise: Use::of(COOLANT_IN_T.or(COOLANT_OUT_T)),
        lmtd,
        ua: duty.and(lmtd.slots()),
        heat_balance_error: duty.and(lmtd.slots()).and(COOLANT_FLOW),
    }
}

impl CoolerUses {
    /// The uses in declaration order (the order of `CoolerResult`'s fields).
    pub const fn in_order(&self) -> [Use; 10] {
        [
            self.gas_temperature_drop,
            self.approach,
            self.effectiveness,
            self.heat_duty,
            self.pressure_drop,
            self.relative_pressure_drop,
            self.coolant_temperature_rise,
            self.lmtd,
            self.ua,
            self.heat_balance_error,
        ]
    }
}

/// The cooler's gas cp slots, in cooler terms.
#[inline]
pub const fn cooler_cp_slots(p: PropertyInputs) -> Slots {
    let mut s = Slots::NONE;
    if p.temperature {
        s = s.or(slot::T2).or(slot::GAS_OUT_T);
    }
    if p.pressure {
        s = s.or(slot::P2).or(slot::GAS_OUT_P);
    }
    s
}

/// [`Users`] of the cooler table for cp depending on (temperature,
/// pressure): index `temperature as usize + 2 * pressure as usize`; built at
/// compile time from [`cooler_uses`].
static COOLER_USERS: [Users; 4] = {
    const fn users(temperature: bool, pressure: bool) -> Users {
        let p = PropertyInputs {
            temperature,
            pressure,
            compressibility_from_state: false,
            state_functions: false,
        };
        Users::of(&cooler_uses(cooler_cp_slots(p)).in_order())
    }
    [
        users(false, false),
        users(true, false),
        users(false, true),
        users(true, true),
    ]
};

/// The cooler table's [`Users`] for a gas model's property inputs.
#[inline]
pub fn cooler_users(p: PropertyInputs) -> &'static Users {
    let i = usize::from(p.temperature) + 2 * usize::from(p.pressure);
    COOLER_USERS.get(i).unwrap_or(&COOLER_USERS[3])
}

/// The qualities of one evaluation's slots and checks, as bit sets in the
/// layout of [`Use`] (one per quality level), so grading an output is three
/// mask tests.
#[derive(Clone, Copy, Debug, Default)]
pub struct Grades {
    not_applicable: u32,
    bad: u32,
    uncertain: u32,
}

impl Grades {
    /// Everything good.
    pub const fn new() -> Self {
        Grades {
            not_applicable: 0,
            bad: 0,
            uncertain: 0,
        }
    }

    /// The slots in `uncertain`, `bad` and `not_applicable` (disjoint) so
    /// graded, the others and every check good: as [`Grades::first_slot`]
    /// for each slot, from the three sets at once.
    #[inline]
    pub const fn of_slots(uncertain: Slots, bad: Slots, not_applicable: Slots) -> Self {
        Grades {
            not_applicable: not_applicable.0 as u32,
            bad: bad.0 as u32,
            uncertain: uncertain.0 as u32,
        }
    }

    /// Sets the quality of the slots in `s`.
    #[inline]
    pub fn slot(&mut self, s: Slots, q: Quality) -> &mut Self {
        let m = s.0 as u32;
        self.uncertain &= !m;
        self.bad &= !m;
        self.not_applicable &= !m;
        match q {
            Quality::Good => {}
            Quality::Uncertain => self.uncertain |= m,
            Quality::Bad => self.bad |= m,
            Quality::NotApplicable => self.not_applicable |= m,
        }
        self
    }

    /// Records the outcome of the checks in `c` (worst kept; a check is
    /// never "not applicable"). A failed check caps its soft users at
    /// uncertain.
    #[inline]
    pub fn check(&mut self, c: Checks, q: Quality) {
        let (full, soft) = ((c.0 as u32) << 16, (c.0 as u32) << 24);
        match q {
            Quality::Good => {}
            Quality::Uncertain => self.uncertain |= full | soft,
            Quality::Bad | Quality::NotApplicable => {
                self.bad |= full;
                self.uncertain |= soft;
            }
        }
    }

    /// As [`Grades::slot`] for a slot not set before (no clearing; the
    /// slots of one evaluation are set once each).
    #[inline]
    pub fn first_slot(&mut self, s: Slots, q: Quality) -> &mut Self {
        let m = s.0 as u32;
        match q {
            Quality::Good => {}
            Quality::Uncertain => self.uncertain |= m,
            Quality::Bad => self.bad |= m,
            Quality::NotApplicable => self.not_applicable |= m,
        }
        self
    }

    /// `true` if every slot and check is good.
    #[inline]
    pub fn all_good(&self) -> bool {
        self.not_good() == 0
    }

    /// Every slot and check that is not good (one mask: an output that
    /// touches none of it is good without looking further).
    #[inline]
    fn not_good(&self) -> u32 {
        self.not_applicable | self.bad | self.uncertain
    }

    /// The quality the rule gives an output with use `u`.
    #[inline]
    pub fn of(&self, u: Use) -> Quality {
        if u.0 & self.not_applicable != 0 {
            Quality::NotApplicable
        } else if u.0 & self.bad != 0 {
            Quality::Bad
        } else if u.0 & self.uncertain != 0 {
            Quality::Uncertain
        } else {
            Quality::Good
        }
    }

    /// Applies the rule to one output whose value was written in place
    /// (`computed`) or not: not applicable if it uses a slot that does not
    /// apply, bad if not computed or not finite, else the rule's quality.
    #[inline]
    pub fn settle_computed<T: Real>(&self, m: &mut Measured<T>, computed: bool, u: Use) {
        // The common case first: a computed, finite value of good uses.
        if computed && u.0 & self.not_good() == 0 && T::is_finite(m.value) {
            m.quality = Quality::Good;
            return;
        }
        let q = self.of(u);
        *m = if q == Quality::NotApplicable {
            Measured::not_applicable()
        } else if computed {
            Measured::derived(m.value, q)
        } else {
            Measured::bad()
        };
    }

    /// As [`Grades::settle_computed`], at most uncertain when `suspect` (a
    /// field-local plausibility check over slots the output uses failed).
    #[inline]
    pub fn settle_suspect<T: Real>(
        &self,
        m: &mut Measured<T>,
        computed: bool,
        suspect: bool,
        u: Use,
    ) {
        if computed && !suspect && u.0 & self.not_good() == 0 && T::is_finite(m.value) {
            m.quality = Quality::Good;
            return;
        }
        let mut g = *self;
        if suspect {
            g.uncertain |= u.0;
        }
        let q = g.of(u);
        *m = if q == Quality::NotApplicable {
            Measured::not_applicable()
        } else if computed {
            Measured::derived(m.value, q)
        } else {
            Measured::bad()
        };
    }

    /// Applies the rule to one output: its quality becomes the worst of its
    /// uses and of any field-local plausibility grade the evaluation set
    /// (uncertain); a value that was not computed stays bad (or becomes
    /// not applicable when it uses a slot that does not apply).
    #[inline]
    pub fn settle<T: Real>(&self, m: &mut Measured<T>, u: Use) {
        let q = self.of(u);
        *m = if q == Quality::NotApplicable {
            Measured::not_applicable()
        } else if !m.quality.is_usable() {
            Measured::bad()
        } else {
            Measured::derived(m.value, q.worst(m.quality))
        };
    }
}

/// The dependency table turned around: for each bit of [`Use`] (slot or
/// check), the outputs that use it (bit i = the i-th output in declaration
/// order). Built once from the per-output table; grading a whole result is
/// then one pass over the bits that are not good, not one over every output.
///
/// Word-aligned: cleared and copied with word stores (as two-byte-aligned
/// data a clear was a call of the byte-wise `memclr`, 208 bytes of flash on
/// Cortex-M4F).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(align(4))]
pub struct Users(pub [u16; 32]);

impl Users {
    /// From the uses of up to 16 outputs, in declaration order.
    // A const fn (the cooler tables are built at compile time) cannot use
    // `get`/`get_mut`; both indices are checked right before use (i < len,
    // b < 32), so no panic path survives (the firmware's link-time check).
    #[allow(clippy::indexing_slicing)]
    pub const fn of(uses: &[Use]) -> Users {
        let mut t = [0u16; 32];
        let mut i = 0;
        while i < uses.len() && i < 16 {
            // Over the set bits only (a use has a handful).
            let mut u = uses[i].0;
            while u != 0 {
                let b = u.trailing_zeros() as usize;
                if b < 32 {
                    t[b] |= 1 << i;
                }
                u &= u - 1;
            }
            i += 1;
        }
        Users(t)
    }

    /// [`Users::of`], written over `self` in place (a construction-time
    /// table rebuilt where it lives: no 64-byte copy through `memcpy`).
    pub(crate) fn fill(&mut self, uses: &[Use]) {
        self.0 = [0; 32];
        for (i, u) in uses.iter().take(16).enumerate() {
            // Over the set bits only (a use has a handful).
            let mut u = u.0;
            while u != 0 {
                if let Some(t) = self.0.get_mut(u.trailing_zeros() as usize) {
                    *t |= 1 << i;
                }
                u &= u - 1;
            }
        }
    }

    /// [`Users::spread`] as a call (for [`OutputGrades::new`], off the
    /// steady scan's path: inlined, its loop was unrolled at every use,
    /// three copies of about 88 bytes each in the general stage path on
    /// Cortex-M4F).
    #[inline(never)]
    fn spread_out_of_line(&self, mask: u32) -> u16 {
        self.spread(mask)
    }

    /// The outputs using any slot i whose pair of bits in `pairs` (bits 2i
    /// and 2i + 1, as in a grading key) is not zero: [`Users::spread`] of
    /// the slots gathered from their pairs, without the gathering.
    #[inline]
    pub(crate) fn spread_pairs(&self, mut pairs: u32) -> u16 {
        let mut out = 0;
        while pairs != 0 {
            let b = (pairs.trailing_zeros() / 2) as usize;
            out |= self.0.get(b).copied().unwrap_or(u16::MAX);
            pairs &= pairs - 1;
        }
        out
    }

    /// The outputs using any bit of `mask`.
    #[inline]
    pub(crate) fn spread(&self, mut mask: u32) -> u16 {
        let mut out = 0;
        while mask != 0 {
            let b = mask.trailing_zeros() as usize;
            out |= self.0.get(b).copied().unwrap_or(u16::MAX);
            mask &= mask - 1;
        }
        out
    }
}

/// Per-output grades of one evaluation as bit sets (bit i = i-th output):
/// the result of the rule ([`Grades::of`]) for every output at once.
#[derive(Clone, Copy, Debug, Default)]
pub struct OutputGrades {
    not_applicable: u16,
    bad: u16,
    uncertain: u16,
}

impl OutputGrades {
    /// The grades the rule gives each output of `users`, with the outputs
    /// not in `computed` bad and those in `suspect` at most uncertain (as
    /// [`Grades::settle_suspect`] for outputs that use at least one slot,
    /// which every output of the tables does).
    #[inline]
    pub fn new(g: &Grades, users: &Users, computed: u16, suspect: u16) -> Self {
        OutputGrades {
            not_applicable: users.spread_out_of_line(g.not_applicable),
            bad: users.spread_out_of_line(g.bad) | !computed,
            uncertain: users.spread_out_of_line(g.uncertain) | suspect,
        }
    }

    /// [`OutputGrades::new`] when every slot and check is good: only the
    /// outputs not `computed` (bad) and those `suspect` (uncertain) differ
    /// from good, so the table is not needed.
    #[inline]
    pub const fn all_slots_good(computed: u16, suspect: u16) -> Self {
        OutputGrades {
            not_applicable: 0,
            bad: !computed,
            uncertain: suspect,
        }
    }

    /// As [`OutputGrades::new`] from the per-output uses themselves (in
    /// declaration order, at most 16) instead of a turned-around table: for
    /// a caller without one. When every slot and check is good the uses are
    /// not looked at (`uses` is not called).
    #[inline]
    pub fn from_uses<const K: usize>(
        g: &Grades,
        uses: impl FnOnce() -> [Use; K],
        computed: u16,
        suspect: u16,
    ) -> Self {
        let mut o = OutputGrades {
            not_applicable: 0,
            bad: !computed,
            uncertain: suspect,
        };
        if g.not_good() != 0 {
            o.add_uses(g, &uses());
        }
        o
    }

    /// The grading loop of [`OutputGrades::from_uses`], out of line (off
    /// the steady scan's path: inlined, it was unrolled at every use).
    #[inline(never)]
    fn add_uses(&mut self, g: &Grades, uses: &[Use]) {
        for (i, u) in uses.iter().enumerate().take(16) {
            let bit = 1 << i;
            if u.0 & g.not_applicable != 0 {
                self.not_applicable |= bit;
            }
            if u.0 & g.bad != 0 {
                self.bad |= bit;
            }
            if u.0 & g.uncertain != 0 {
                self.uncertain |= bit;
            }
        }
    }

    /// `true` if no output of `mask` is bad or not applicable (before the
    /// finiteness test of [`OutputGrades::settle`]).
    #[inline]
    pub fn all_usable(&self, mask: u16) -> bool {
        (self.not_applicable | self.bad) & mask == 0
    }

    /// The uncertain outputs (bit i = i-th output).
    #[inline]
    pub(crate) fn uncertain(&self) -> u16 {
        self.uncertain
    }

    /// `true` if no output of `mask` is uncertain.
    #[inline]
    pub fn none_uncertain(&self, mask: u16) -> bool {
        self.uncertain & mask == 0
    }

    /// The quality of a usable output `bit` ([`OutputGrades::all_usable`]):
    /// uncertain or good.
    #[inline]
    pub fn usable_quality(&self, bit: u16) -> Quality {
        if self.uncertain & bit != 0 {
            Quality::Uncertain
        } else {
            Quality::Good
        }
    }

    /// [`OutputGrades::settle`] for an output whose value the caller has
    /// found finite wherever it counts it computed (a non-finite value left
    /// out of `computed` is bad, as there): no finiteness test here.
    #[inline]
    pub fn settle_finite<T: Real>(&self, m: &mut Measured<T>, bit: u16) {
        if (self.not_applicable | self.bad) & bit == 0 {
            m.quality = self.usable_quality(bit);
        } else if self.not_applicable & bit != 0 {
            *m = Measured::not_applicable();
        } else {
            *m = Measured::bad();
        }
    }

    /// The quality [`OutputGrades::settle_finite`] gives output `bit`: not
    /// applicable, bad, uncertain or good, in that order of precedence.
    #[inline]
    pub fn quality_of(&self, bit: u16) -> Quality {
        if self.not_applicable & bit != 0 {
            Quality::NotApplicable
        } else if self.bad & bit != 0 {
            Quality::Bad
        } else {
            self.usable_quality(bit)
        }
    }

    /// Settles output `bit` (as [`Grades::settle_suspect`]): not applicable
    /// if it uses a slot that does not apply; bad if not computed, not finite
    /// or of bad uses; else uncertain or good as its uses and check say.
    #[inline]
    pub fn settle<T: Real>(&self, m: &mut Measured<T>, bit: u16) {
        // The usable case first (good or uncertain: one test of the value).
        if (self.not_applicable | self.bad) & bit == 0 && T::is_finite(m.value) {
            m.quality = if self.uncertain & bit != 0 {
                Quality::Uncertain
            } else {
                Quality::Good
            };
        } else if self.not_applicable & bit != 0 {
            *m = Measured::not_applicable();
        } else {
            *m = Measured::bad();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spread_pairs_equals_spread_of_the_gathered_slots() {
        // Consistency check (two ways to the same set): for seeded random
        // tables and every set of the six stage slots' pairs (each pair
        // 0 to 3, all 4096), `spread_pairs` equals `spread` of the slots
        // whose pair is not zero, gathered bit by bit.
        let mut next = crate::xorshift32(0x2545_f491);
        for _ in 0..16 {
            let t = Users(core::array::from_fn(|_| next() as u16));
            for pairs in 0..1u32 << 12 {
                let slots = (0..6).fold(0, |acc, i| {
                    if pairs >> (2 * i) & 3 != 0 {
                        acc | 1 << i
                    } else {
                        acc
                    }
                });
                assert_eq!(t.spread_pairs(pairs), t.spread(slots), "pairs {pairs:#x}");
            }
        }
    }

    #[test]
    fn users_filled_in_place_equal_users_of() {
        // Consistency check (two implementations of the same table):
        // `Users::fill` over a table holding anything gives `Users::of`, for
        // every compressor table, the cooler table and seeded random uses
        // of 0 to 20 entries (beyond 16 both ignore the rest).
        let mut next = crate::xorshift32(0x9e37_79b9);
        let check = |uses: &[Use], next: &mut dyn FnMut() -> u32| {
            let mut t = Users(core::array::from_fn(|_| next() as u16));
            t.fill(uses);
            assert_eq!(t, Users::of(uses), "uses {:?}", uses);
        };
        for n in 0..8 {
            let p = PropertyInputs {
                temperature: n & 1 != 0,
                pressure: n & 2 != 0,
                compressibility_from_state: n & 4 != 0,
                state_functions: n & 4 != 0,
            };
            let (props, z) = property_slots(p, true);
            let (iso, z1) = suction_slots(p, props, z);
            let t = compressor_uses(props, z, iso, z1, p.compressibility_from_state).in_order();
            check(&t, &mut next);
        }
        check(
            &cooler_uses(slot::T2.or(slot::GAS_OUT_T)).in_order(),
            &mut next,
        );
        for case in 0..500 {
            let uses: [Use; 20] = core::array::from_fn(|_| Use(next() & next()));
            let n = case % 21;
            check(&uses[..n], &mut next);
        }
    }

    /// Consistency check (the project's own rule, two implementations):
    /// grading all outputs at once from the turned-around table gives what
    /// the per-output rule gives, for seeded random grades, computed and
    /// suspect sets and values (NaN included), on every compressor and
    /// cooler table.
    #[test]
    fn output_grades_equal_the_per_output_rule() {
        let mut next = crate::xorshift32(0x2545_f491);
        let q = |r: u32| match r % 4 {
            0 => Quality::Good,
            1 => Quality::Uncertain,
            2 => Quality::Bad,
            _ => Quality::NotApplicable,
        };
        let mut tables: [[Use; 16]; 8] = [[Use(0); 16]; 8];
        for (n, t) in tables.iter_mut().enumerate() {
            let p = PropertyInputs {
                temperature: n & 1 != 0,
                pressure: n & 2 != 0,
                compressibility_from_state: n & 4 != 0,
                state_functions: n & 4 != 0,
            };
            let (props, z) = property_slots(p, true);
            let (iso, z1) = suction_slots(p, props, z);
            *t = compressor_uses(props, z, iso, z1, p.compressibility_from_state).in_order();
        }
        let cooler = cooler_uses(slot::T2.or(slot::GAS_OUT_T)).in_order();
        for case in 0..4_000 {
            let uses: &[Use] = if case % 9 == 8 {
                &cooler
            } else {
                &tables[case % 8]
            };
            let mut g = Grades::new();
            for s in 0..slot::COUNT {
                if next() % 3 == 0 {
                    g.slot(Slots(1 << s), q(next()));
                }
            }
            for c in 0..check::COUNT {
                if next() % 4 == 0 {
                    g.check(Checks(1 << c), q(next() % 3));
                }
            }
            let (done, suspect) = ((next() & 0xffff) as u16, (next() & next() & 0xffff) as u16);
            let users = Users::of(uses);
            let o = OutputGrades::new(&g, &users, done, suspect);
            for (i, u) in uses.iter().enumerate() {
                let v = match next() % 5 {
                    0 => f32::NAN,
                    1 => f32::INFINITY,
                    _ => (next() % 1000) as f32 - 500.0,
                };
                let bit = 1 << i;
                let (mut a, mut b) = (Measured::new(v, q(next())), Measured::new(v, q(next())));
                g.settle_suspect(&mut a, done & bit != 0, suspect & bit != 0, *u);
                let mut c = b;
                o.settle(&mut b, bit);
                assert_eq!(
                    (a.value.to_bits(), a.quality),
                    (b.value.to_bits(), b.quality),
                    "case {case} output {i}"
                );
                // The finite variant, for a caller that leaves a value
                // that is not finite out of `computed` (the cooler).
                let finite = v.is_finite();
                let of =
                    OutputGrades::new(&g, &users, if finite { done } else { done & !bit }, suspect);
                of.settle_finite(&mut c, bit);
                assert_eq!(
                    (b.value.to_bits(), b.quality),
                    (c.value.to_bits(), c.quality),
                    "finite variant, case {case} output {i}"
                );
                if of.all_usable(bit) {
                    assert_eq!(of.usable_quality(bit), c.quality);
                    assert_eq!(of.none_uncertain(bit), c.quality == Quality::Good);
                }
            }
            // With every slot and check good the table is not needed.
            let clean = OutputGrades::all_slots_good(done, suspect);
            let full = OutputGrades::new(&Grades::new(), &users, done, suspect);
            for i in 0..16 {
                let bit = 1 << i;
                let (mut a, mut b) = (Measured::good(1.5_f32), Measured::good(1.5_f32));
                clean.settle_finite(&mut a, bit);
                full.settle_finite(&mut b, bit);
                assert_eq!(
                    (a.value.to_bits(), a.quality),
                    (b.value.to_bits(), b.quality)
                );
            }
        }
    }

    #[test]
    fn the_rule_takes_the_worst_of_exactly_the_uses() {
        let u = compressor_uses(Slots::NONE, slot::Z, Slots::NONE, slot::Z, false);
        let mut g = Grades::new();
        g.slot(slot::P1, Quality::Bad);
        // The temperature rise does not use P1; the ratio does.
        assert_eq!(g.of(u.temperature_rise), Quality::Good);
        assert_eq!(g.of(u.pressure_ratio), Quality::Bad);
        // A failed consistency check caps the work at uncertain but takes
        // the efficiencies down in full.
        let mut g = Grades::new();
        g.check(check::CONSISTENT, Quality::Bad);
        assert_eq!(g.of(u.actual_work), Quality::Uncertain);
        assert_eq!(g.of(u.isentropic_efficiency), Quality::Bad);
        assert_eq!(g.of(u.isothermal_head), Quality::Good);
        // Z is used by the heads, not by the efficiencies.
        let mut g = Grades::new();
        g.slot(slot::Z, Quality::Uncertain);
        assert_eq!(g.of(u.isentropic_head), Quality::Uncertain);
        assert_eq!(g.of(u.isentropic_efficiency), Quality::Good);
        assert!(u.actual_work.all_slots().contains(slot::P1));
        assert!(!u.actual_work.slots().contains(slot::P1));
        let mut m = Measured::good(2.0_f32);
        g.slot(slot::T2, Quality::NotApplicable);
        g.settle(&mut m, u.actual_work);
        assert_eq!(m.quality, Quality::NotApplicable);
    }
}
