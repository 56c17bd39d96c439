//! JCAMP-DX. (Being built.)
use super::{ImportError, RawReport};
pub fn looks_like_jcamp(_text: &str) -> bool {
    false
}
pub fn read(_text: &str) -> Result<RawReport, ImportError> {
    Err(ImportError::NoData)
}
