//! Stage kinds: a gas compressor stage and a liquid / dense-phase pump stage.

pub mod compressor;
pub mod pump;

pub use compressor::{
    evaluate_compressor, evaluate_compressor_into, evaluate_compressor_within, CompressorInputs,
    CompressorResult, StageCondition,
};
pub use pump::{evaluate_pump, evaluate_pump_within, PumpCondition, PumpResult};
