//! `ddlens fit`.

use super::{Args, CliError};

pub fn run(_args: &mut Args, _json: bool) -> Result<(), CliError> {
    Err(CliError::Failed(
        "'fit' is not available in this build yet".into(),
    ))
}
