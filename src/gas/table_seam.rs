//! The property-table model ([`TableGas`], `src/gas/table.rs`) behind the
//! gas seam ([`GasModel`]): state functions, the entropy match and the
//! stage differences come from the table, so the stage, cooler, train and
//! polytropic-method code run on it unchanged.
//!
//! Sources: as `src/gas/table.rs` (GERG-2008 tables, the Maxwell relation
//! and dh = T ds + v dp for the derivatives); Schultz's quantities (p·v
//! rises, the head factor) are defined in `src/gas/mod.rs`.
//!
//! Validity: outside the envelope bad ([`ValidityReason::PressureOutOfRange`]
//! or [`ValidityReason::TemperatureOutOfRange`]); in a flagged cell (near a
//! critical point or a saturation line) uncertain
//! ([`ValidityReason::NearCritical`]); where the equation of state gave no
//! state, or a result is not finite, bad ([`ValidityReason::Invalid`]); an
//! entropy match that hit its iteration cap uncertain
//! ([`ValidityReason::NotConverged`]).

use super::table::{TableFlag, TableGas, TableState, SEAM_ENDS, SEAM_ISO, SEAM_ISO_END};
use super::{CompressionStates, GasModel, GasState, PathProperties, Validity, ValidityReason};
use crate::quality::Quality;
use crate::real::Real;

/// ln q for q = x/y near 1 (the discharge state's p·v over the isentropic
/// discharge state's: both at p2, so only the temperatures and Z differ) by
/// the series ln q = 2·atanh(u), u = (q − 1)/(q + 1) = (x − y)/(x + y) (one
/// division), to u⁷ (Abramowitz & Stegun 4.1.27; truncation below 2.5e-10
/// for |u| < 0.1, i.e. q in (0.82, 1.22)); `T::ln(x/y)` outside that range.
#[inline(always)]
fn ln_near_one<T: Real>(x: T, y: T) -> T {
    let u = (x - y) / (x + y);
    let bound = T::of(0.1);
    if u > -bound && u < bound {
        let u2 = u * u;
        let series = T::ONE + u2 * (T::of(1.0 / 3.0) + u2 * (T::of(0.2) + u2 * T::of(1.0 / 7.0)));
        T::of(2.0) * u * series
    } else {
        T::ln(x / y)
    }
}

/// Largest |u| for which [`ln_ratio_near_one`] uses its series: the first
/// omitted term, 2·u¹³/13, is then below 3.2e-10 of the logarithm.
const SERIES_LIMIT: f64 = 0.2;

/// ln(x/y) for x/y in about (0.67, 1.5) (the isentropic discharge state's
/// p·v over the suction state's) by the same series as [`ln_near_one`],
/// with u = (x − y)/(x + y), to u¹¹ (one division and six multiply-adds
/// instead of a `logf` call) for |u| ≤ [`SERIES_LIMIT`]; `T::ln(x/y)`
/// outside that range.
#[inline(always)]
fn ln_ratio_near_one<T: Real>(x: T, y: T) -> T {
    let u = (x - y) / (x + y);
    if T::abs(u) <= T::of(SERIES_LIMIT) {
        let u2 = u * u;
        let tail = T::of(1.0 / 7.0) + u2 * (T::of(1.0 / 9.0) + u2 * T::of(1.0 / 11.0));
        T::of(2.0) * u * (T::ONE + u2 * (T::of(1.0 / 3.0) + u2 * (T::of(0.2) + u2 * tail)))
    } else {
        T::ln(x / y)
    }
}

impl<'a, T: Real> TableGas<'a, T> {
    /// The seam's validity of a table state at (p, t).
    fn validity(&self, quality: Quality, flag: TableFlag, p: T) -> Validity {
        match (quality, flag) {
            (Quality::Good, _) => Validity::IN_RANGE,
            (_, TableFlag::OutsideEnvelope) => {
                let ((p_min, p_max), _) = self.envelope();
                if p >= p_min && p <= p_max {
                    Validity::bad(ValidityReason::TemperatureOutOfRange)
                } else {
                    Validity::bad(ValidityReason::PressureOutOfRange)
                }
            }
            (Quality::Uncertain, TableFlag::FlaggedBand) => {
                Validity::uncertain(ValidityReason::NearCritical)
            }
            (Quality::Uncertain, _) => Validity::uncertain(ValidityReason::NotConverged),
            _ => Validity::INVALID,
        }
    }

    fn gas_state(&self, p: T, t: T, st: &TableState<T>) -> GasState<T> {
        if st.quality == Quality::Bad {
            return GasState {
                validity: self.validity(st.quality, st.flag, p),
                ..GasState::invalid(p, t)
            };
        }
        GasState {
            pressure: p,
            temperature: t,
            z: st.z,
            volume: st.specific_volume,
            enthalpy: st.enthalpy,
            entropy: st.entropy,
            cp: st.cp,
            speed_of_sound: st.speed_of_sound,
            validity: self.validity(st.quality, st.flag, p),
        }
    }
}

impl<'a, T: Real> GasModel<T> for TableGas<'a, T> {
    fn gas_constant(&self) -> T {
        TableGas::gas_constant(self)
    }

    /// Mean ideal-gas-like properties from the states at both ends: cp and
    /// Z averaged, k = cp/(cp − Z·R) (the ideal gas with gas constant Z·R).
    /// A bad end falls back to the other; both bad gives Z = 1, k = 1.3 and
    /// the cp of k = 1.3 (finite placeholders; the train flags the states).
    fn path(&self, p1: T, t1: T, p2: T, t2: T, _z_supplied: Option<T>) -> PathProperties<T> {
        let r = TableGas::gas_constant(self);
        let [(z1, cp1, q1), (z2, cp2, q2)] = self.z_cp_pair((p1, t1), (p2, t2));
        let half = T::of(0.5);
        let (cp, z) = match (q1 != Quality::Bad, q2 != Quality::Bad) {
            (true, true) => (half * (cp1 + cp2), half * (z1 + z2)),
            (true, false) => (cp1, z1),
            (false, true) => (cp2, z2),
            (false, false) => (r * T::of(1.3 / 0.3), T::ONE),
        };
        let cv = cp - z * r;
        let k = if cv > T::ZERO { cp / cv } else { T::of(1.3) };
        PathProperties {
            gas_constant: r,
            k: T::max(k, T::of(1.0001)),
            cp,
            z,
        }
    }

    fn state(&self, p: T, t: T, _z_supplied: Option<T>) -> GasState<T> {
        let st = TableGas::state(self, p, t);
        self.gas_state(p, t, &st)
    }

    /// Newton in T on the table's entropy at `p2` (bracketed, capped at
    /// [`super::table::ISENTROPIC_MAX_ITERATIONS`]), from the ideal-gas-like
    /// start T1·(p2/p1)^(Z·R/cp).
    fn isentropic_state(&self, inlet: &GasState<T>, p2: T, _z_supplied: Option<T>) -> GasState<T> {
        if inlet.validity.quality == Quality::Bad || !(p2 > T::ZERO) || !(inlet.pressure > T::ZERO)
        {
            return GasState::invalid(p2, inlet.temperature);
        }
        let r = TableGas::gas_constant(self);
        let ln_r = T::ln(p2 / inlet.pressure);
        let guess = inlet.temperature * T::exp(inlet.z * r / inlet.cp * ln_r);
        let t2s = self.isentropic_temperature(p2, inlet.entropy, guess);
        if t2s.quality == Quality::Bad {
            return GasState::invalid(p2, guess);
        }
        let mut out = GasModel::state(self, p2, t2s.value, None);
        if t2s.quality == Quality::Uncertain && out.validity.quality == Quality::Good {
            out.validity = Validity::uncertain(ValidityReason::NotConverged);
        }
        out
    }

    /// Two enthalpy evaluations (h and cp only).
    fn enthalpy_drop(&self, p_in: T, t_in: T, p_out: T, t_out: T, _z: Option<T>) -> (T, Validity) {
        let [(h_in, q_in, f_in), (h_out, q_out, f_out)] =
            self.enthalpy_pair((p_in, t_in), (p_out, t_out));
        // Both good: in range (what `validity` gives), without its two
        // out-of-line calls (a train's coolers, every update).
        if q_in == Quality::Good && q_out == Quality::Good {
            return (h_in - h_out, Validity::IN_RANGE);
        }
        let v = self
            .validity(q_in, f_in, p_in)
            .worst(self.validity(q_out, f_out, p_out));
        if v.quality == Quality::Bad {
            return (T::ZERO, v);
        }
        (h_in - h_out, v)
    }

    /// The Gibbs energy rise Δh − T·Δs at `t`, as the default but from the
    /// remembered end states (a train's totals ask for the two states its
    /// mean path properties have just evaluated).
    fn isothermal_work(&self, p1: T, p2: T, _ln_ratio: T, t: T, _z: Option<T>) -> (T, Validity) {
        let [(h1, s1, q1, f1), (h2, s2, q2, f2)] = self.enthalpy_entropy_pair((p1, t), (p2, t));
        (
            (h2 - h1) - t * (s2 - s1),
            self.validity(q1, f1, p1).worst(self.validity(q2, f2, p2)),
        )
    }

    /// The stage's states from the table in three evaluations (suction,
    /// discharge, one entropy-match step from the discharge state; see
    /// [`TableGas::stage`]).
    fn compression(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
        t2: Option<T>,
        _z_supplied: Option<T>,
    ) -> CompressionStates<T> {
        let d = self.stage_states::<SEAM_ENDS, SEAM_ISO, SEAM_ISO_END>(p1, t1, p2, ln_ratio, t2);
        let v1 = self.validity(d.q1, d.flag1, p1);
        if v1.quality == Quality::Bad {
            return CompressionStates {
                isentropic_validity: v1,
                validity: v1,
                ..CompressionStates::invalid()
            };
        }
        let iso_validity = v1.worst(self.validity(d.iso.quality, d.iso.flag, p2));
        let r = TableGas::gas_constant(self);
        let (e1, e2, iso) = (&d.end1, &d.end2, &d.iso);
        let zt1 = e1.z * t1;
        let pv1 = r * zt1;
        let pv2s = r * iso.z * iso.t;
        let iso_ln_pv = ln_ratio_near_one(iso.z * iso.t, zt1);
        let dhs = iso.h - e1.h;
        let mut out = CompressionStates {
            suction_z: e1.z,
            isentropic_temperature: iso.t,
            isentropic_enthalpy_rise: dhs,
            isentropic_pv_rise: pv2s - pv1,
            isentropic_ln_pv_ratio: iso_ln_pv,
            isentropic_exponent: ln_ratio / (ln_ratio - iso_ln_pv),
            head_factor: dhs * iso_ln_pv / (ln_ratio * (pv2s - pv1)),
            isentropic_validity: iso_validity,
            validity: iso_validity,
            ..CompressionStates::invalid()
        };
        if let Some(t2) = t2 {
            let v2 = self.validity(d.q2, d.flag2, p2);
            out.validity = iso_validity.worst(v2);
            if v2.quality != Quality::Bad {
                out.has_discharge = true;
                out.discharge_z = e2.z;
                out.enthalpy_rise = e2.h - e1.h;
                out.entropy_rise = e2.s - e1.s;
                out.pv_rise = r * (e2.z * t2 - zt1);
                let pv2 = e2.z * t2;
                // From the isentropic ratio's logarithm (one logarithm
                // less) when both parts are non-negative, so the sum loses
                // nothing to cancellation.
                let pv2s = iso.z * iso.t;
                out.ln_pv_ratio = if iso.quality != Quality::Bad {
                    iso_ln_pv + ln_near_one(pv2, pv2s)
                } else {
                    T::ln(pv2 / zt1)
                };
            }
        }
        out
    }
}
