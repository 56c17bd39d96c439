//! The saved-analysis JSON envelope: `{"ddlens_project": <schema version>, ...}`.
//!
//! Only the envelope is checked here: that the key is present, that its value is
//! a positive integer, and that this build can read that schema version. The
//! project content itself is defined elsewhere.

use super::ImportError;

/// The newest project schema this build reads.
pub const PROJECT_SCHEMA: u32 = 1;

/// The key that marks a saved ddlens project.
pub const ENVELOPE_KEY: &str = "ddlens_project";

/// Returns the schema version of a project document, or why it cannot be read.
pub fn check_envelope(doc: &serde_json::Value) -> Result<u32, ImportError> {
    let Some(object) = doc.as_object() else {
        return Err(ImportError::Project(
            "this JSON file is not a ddlens project: it is not an object".into(),
        ));
    };
    let Some(version) = object.get(ENVELOPE_KEY) else {
        return Err(ImportError::Project(format!(
            "this JSON file is not a ddlens project: it has no \"{ENVELOPE_KEY}\" entry"
        )));
    };
    let schema = version
        .as_u64()
        .filter(|&v| v >= 1)
        .and_then(|v| u32::try_from(v).ok())
        .ok_or_else(|| {
            ImportError::Project(format!(
                "the project's schema version should be a whole number from 1, found {version}"
            ))
        })?;
    if schema > PROJECT_SCHEMA {
        return Err(ImportError::Project(format!(
            "this project was saved by a newer ddlens (schema {schema}); this version reads schema {PROJECT_SCHEMA} and older — please update ddlens"
        )));
    }
    Ok(schema)
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn accepts_current_and_refuses_newer_or_malformed() {
        assert_eq!(check_envelope(&json!({"ddlens_project": 1})), Ok(1));
        let newer = check_envelope(&json!({"ddlens_project": 7})).unwrap_err();
        assert!(newer.to_string().contains("newer ddlens (schema 7)"));
        for bad in [
            json!({"ddlens_project": "1"}),
            json!({"ddlens_project": 0}),
            json!({"ddlens_project": 1.5}),
        ] {
            assert!(check_envelope(&bad)
                .unwrap_err()
                .to_string()
                .contains("whole number"));
        }
        assert!(check_envelope(&json!([1])).is_err());
        assert!(check_envelope(&json!({"spectra": []}))
            .unwrap_err()
            .to_string()
            .contains("no \"ddlens_project\""));
    }
}
