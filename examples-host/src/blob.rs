//! `blob`: writes the device configuration blob of a train file
//! (`polytrope::config_blob`: postcard payload, version, CRC-32) and checks
//! that the kernel decodes it to the same configuration as the host form.

use std::path::PathBuf;

use clap::Args;
use polytrope::config_blob::{self, HeatCapacityBlob, TrainBlob, MAX_BLOB_LEN};
use polytrope::gas::GasSpec;

use crate::cli::CliError;
use crate::config::{self, Loaded};
use crate::train_any::{self, StagesJob, WINDOW};

/// Options of `blob`.
#[derive(Debug, Args)]
pub struct BlobArgs {
    /// The train file (TOML).
    pub file: PathBuf,
    /// Where to write the blob.
    #[arg(long, short, value_name = "FILE")]
    pub output: PathBuf,
}

/// The heat-capacity model of a loaded file in the blob's form.
pub fn heat_capacity(l: &Loaded) -> HeatCapacityBlob {
    let g = &l.file.gas;
    match g.name.as_deref().and_then(GasSpec::by_name) {
        Some(spec) if g.heat_capacity() == "cp-polynomial" => HeatCapacityBlob::Polynomial {
            coefficients: spec.cp.coefficients.map(|c| c as f32),
            t_min: spec.cp.t_min as f32,
            t_max: spec.cp.t_max as f32,
        },
        Some(spec) => HeatCapacityBlob::ConstantK(spec.k as f32),
        None => HeatCapacityBlob::ConstantK(g.heat_capacity_ratio.unwrap_or(0.0) as f32),
    }
}

struct Job<'a>(&'a Loaded);

impl StagesJob for Job<'_> {
    type Out = Vec<u8>;
    fn run<const N: usize>(self) -> Result<Vec<u8>, CliError> {
        let l = self.0;
        // The blob carries an ideal gas only (format version 1); a
        // Peng–Robinson or table train is refused naming `gas.model` (a
        // property table goes to the device as its own blob, `tables`).
        let gas = l.ideal_gas::<f32>().map_err(|e| {
            CliError::from(l.error(
                "gas.model",
                format!(
                    "the device configuration blob carries an ideal gas only; this file has model = \"{}\" ({})",
                    l.file.gas.model(),
                    e.message
                ),
            ))
        })?;
        let cfg = l.train_config_with::<f32, _, N>(gas)?;
        let host = polytrope::train::Train::<f32, _, N, WINDOW>::new(cfg)
            .map_err(|e| CliError::from(l.kernel_error(&e, None)))?;
        let blob = TrainBlob::from_config(host.config(), l.molar_mass, heat_capacity(l))
            .map_err(|e| CliError::Input(e.to_string()))?;
        let mut buf = [0u8; MAX_BLOB_LEN];
        let n = config_blob::encode(&blob, &mut buf).map_err(|e| CliError::Input(e.to_string()))?;
        let bytes = buf.get(..n).unwrap_or(&[]).to_vec();
        // The device's path: decode without heap and validate like the host form.
        let device = config_blob::decode_train::<f32, N, WINDOW>(&bytes)
            .map_err(|e| CliError::Input(format!("the blob does not decode: {e}")))?;
        // The blob carries no critical point (format version 1): the
        // device's ideal gas does not flag the ideal-gas validity limit
        // (Pr/Tr³ > 0.1) that the host form, built from a named gas, has.
        // Everything else must be the same.
        let (d, h) = (device.config(), host.config());
        let props = |g: &polytrope::gas::IdealGas<f32>| {
            use polytrope::gas::GasModel;
            (
                g.gas_constant(),
                g.compressibility(),
                g.path(1e5, 300.0, 3e5, 400.0, None),
            )
        };
        if d.stages != h.stages
            || d.max_interstage_pressure_drop != h.max_interstage_pressure_drop
            || d.steady_state != h.steady_state
            || props(&d.gas) != props(&h.gas)
        {
            return Err(CliError::Input(
                "the decoded blob differs from the host configuration".into(),
            ));
        }
        Ok(bytes)
    }
}

/// Runs `blob`.
pub fn run(a: &BlobArgs) -> Result<String, CliError> {
    let l = config::load(&a.file)?;
    let bytes = train_any::with_stages(l.stage_count(), Job(&l))?;
    std::fs::write(&a.output, &bytes)
        .map_err(|e| CliError::Input(format!("{}: cannot write: {e}", a.output.display())))?;
    Ok(format!(
        "wrote {} ({} bytes: format version {}, {} stages, CRC-32); the kernel decodes it to the same configuration as the host form, except that the blob carries no critical point: the device's ideal gas does not flag high reduced pressure (Pr/Tr³ > 0.1).\n",
        a.output.display(),
        bytes.len(),
        config_blob::VERSION,
        l.stage_count()
    ))
}
