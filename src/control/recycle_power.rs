//! The power spent recirculating gas through the recycle valve.
//!
//! Every kilogram sent round the recycle loop takes the stage's actual
//! specific work and gives nothing downstream, so the loss is
//! `P_recycle = m_recycle · w_actual` (a plain energy balance). Without a
//! recycle flow meter, the valve's flow can be estimated with the gas
//! sizing form of IEC 60534-2-1 (from memory), in SI with an effective flow
//! area:
//!
//! ```text
//! x  = min((pd − ps)/pd, Fγ·xT),   Fγ = k / 1.4
//! Y  = 1 − x / (3 Fγ xT)                        (expansion factor)
//! m  = A_eff · u · Y · √(2 ρd · x · pd)          (linear trim, u = opening)
//! ```
//!
//! `A_eff` is the valve's fully open effective area (m²) and `xT` its
//! pressure-differential ratio factor, both from the valve maker.

use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Recycle loss `m_recycle · w_actual`, W. Bad if either input is bad or
/// the result is not finite; negative flows or work count as zero loss.
pub fn recycle_power<T: Real>(
    recycle_mass_flow: Measured<T>,
    actual_work: Measured<T>,
) -> Measured<T> {
    let q = recycle_mass_flow.quality.worst(actual_work.quality);
    let m = T::max(recycle_mass_flow.value, T::ZERO);
    let w = T::max(actual_work.value, T::ZERO);
    Measured::derived(m * w, q)
}

/// Estimated recycle mass flow through a linear-trim valve, kg/s (see the
/// module docs). `opening` in [0, 1]; pressures in Pa absolute, `density` at
/// the valve inlet (discharge side) in kg/m³, `k` the isentropic exponent.
/// Uncertain when the valve is choked (x at its limit), bad on invalid input.
#[allow(clippy::too_many_arguments)]
pub fn valve_mass_flow<T: Real>(
    effective_area: T,
    pressure_differential_ratio_factor: T,
    opening: T,
    discharge_pressure: T,
    suction_pressure: T,
    density: T,
    k: T,
) -> Measured<T> {
    let ok = [
        effective_area,
        pressure_differential_ratio_factor,
        opening,
        discharge_pressure,
        suction_pressure,
        density,
        k,
    ]
    .iter()
    .all(|&v| T::is_finite(v) && v >= T::ZERO)
        && discharge_pressure > T::ZERO
        && pressure_differential_ratio_factor > T::ZERO
        && k > T::ONE;
    if !ok {
        return Measured::bad();
    }
    let f_gamma = k / T::of(1.4);
    let x_limit = f_gamma * pressure_differential_ratio_factor;
    let x_raw = T::max(
        (discharge_pressure - suction_pressure) / discharge_pressure,
        T::ZERO,
    );
    let choked = x_raw >= x_limit;
    let x = T::min(x_raw, x_limit);
    let y = T::ONE - x / (T::of(3.0) * x_limit);
    let u = T::min(opening, T::ONE);
    let m = effective_area * u * y * T::sqrt(T::of(2.0) * density * x * discharge_pressure);
    Measured::derived(
        m,
        if choked {
            Quality::Uncertain
        } else {
            Quality::Good
        },
    )
}
