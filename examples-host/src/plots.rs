//! Plots (placeholder, filled below).
use std::path::{Path, PathBuf};

use crate::cli::CliError;
use crate::config::Loaded;
use crate::replay::Series;

/// Demo plots.
pub fn demo_plots(_dir: &Path) -> Result<Vec<PathBuf>, CliError> {
    Ok(Vec::new())
}

/// Replay plots.
pub fn replay_plots(_dir: &Path, _l: &Loaded, _s: &Series) -> Result<Vec<PathBuf>, CliError> {
    Ok(Vec::new())
}
