//! `ddlens analyze`.

use super::{Args, CliError};

pub fn run(_args: &mut Args, _json: bool) -> Result<(), CliError> {
    Err(CliError::Failed(
        "'analyze' is not available in this build yet".into(),
    ))
}
