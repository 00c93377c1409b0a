//! From front-end outputs to the kernel's scan: fills a
//! [`StageScan`] / [`CoolerScan`] with the filtered, quality-carrying values
//! of the channels (performance calculations take the filtered values; the
//! surge path should read [`ChannelOutput::raw`] directly).

use super::pipeline::ChannelOutput;
use crate::quality::Measured;
use crate::real::Real;
use crate::scan::{CoolerScan, StageScan};

/// The channels around one stage.
#[derive(Clone, Copy, Debug)]
pub struct StageChannels<'a, T> {
    /// Suction pressure channel (absolute or gauge unit; output Pa abs).
    pub suction_pressure: &'a ChannelOutput<T>,
    /// Suction temperature channel.
    pub suction_temperature: &'a ChannelOutput<T>,
    /// Discharge pressure channel.
    pub discharge_pressure: &'a ChannelOutput<T>,
    /// Discharge temperature channel.
    pub discharge_temperature: &'a ChannelOutput<T>,
}

/// A stage scan from channel outputs, an optional mass flow (kg/s, from
/// [`crate::flow`]) and an optional cooler scan.
pub fn stage_scan<T: Real>(
    ch: &StageChannels<'_, T>,
    mass_flow: Option<Measured<T>>,
    cooler: Option<CoolerScan<T>>,
) -> StageScan<T> {
    StageScan {
        suction_pressure: ch.suction_pressure.pressure(),
        suction_temperature: ch.suction_temperature.temperature(),
        discharge_pressure: ch.discharge_pressure.pressure(),
        discharge_temperature: ch.discharge_temperature.temperature(),
        mass_flow,
        compressibility: None,
        cooler,
    }
}

/// A cooler scan from its gas-outlet and coolant-inlet channels.
pub fn cooler_scan<T: Real>(
    gas_outlet_temperature: &ChannelOutput<T>,
    coolant_inlet_temperature: &ChannelOutput<T>,
) -> CoolerScan<T> {
    CoolerScan {
        gas_outlet_temperature: gas_outlet_temperature.temperature(),
        gas_outlet_pressure: None,
        coolant_inlet_temperature: coolant_inlet_temperature.temperature(),
        coolant_outlet_temperature: None,
        coolant_mass_flow: None,
    }
}
