//! A generic differential-pressure flow element with a calibration
//! coefficient: qm = C·√(Δp·ρ) (the square-root law of any restriction,
//! from Bernoulli's equation; C in m² lumps area, discharge coefficient and
//! expansibility and comes from the element's calibration). For nozzles,
//! compressor-eye (inlet-bell) taps and elements outside ISO 5167.

use crate::error::{check_positive, ConfigError};
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// A calibrated flow element.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FlowElement<T> {
    coefficient: T,
}

impl<T: Real> FlowElement<T> {
    /// A flow element with calibration `coefficient` C (m², finite, > 0).
    pub fn new(coefficient: T) -> Result<Self, ConfigError> {
        check_positive("flow_element.coefficient", coefficient)?;
        Ok(FlowElement { coefficient })
    }

    /// The calibration coefficient, m².
    pub fn coefficient(&self) -> T {
        self.coefficient
    }

    /// Mass flow, kg/s, from differential pressure `dp` (Pa) and density
    /// `rho` (kg/m3). Δp ≤ 0 gives zero flow; a non-positive or non-finite
    /// density gives bad. Quality: the worse of the two inputs.
    pub fn mass_flow(&self, dp: Measured<T>, rho: Measured<T>) -> Measured<T> {
        let q = dp.quality.worst(rho.quality);
        if q == Quality::Bad || !T::is_finite(dp.value) || !(rho.value > T::ZERO) {
            return Measured::bad();
        }
        let dp_pos = T::max(dp.value, T::ZERO);
        Measured::derived(self.coefficient * T::sqrt(dp_pos * rho.value), q)
    }
}
